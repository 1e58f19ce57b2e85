// Package pipeline tests load.sh, the example of a load gated by assay.
package pipeline

import (
	"encoding/csv"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// buildAssay builds the command into a temporary folder.
func buildAssay(t *testing.T) string {
	t.Helper()
	if testing.Short() {
		t.Skip("builds the command and runs a shell script")
	}
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("no bash")
	}
	bin := filepath.Join(t.TempDir(), "assay")
	out, err := exec.Command("go", "build", "-o", bin, "github.com/assay-project/assay/cmd/assay").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// load runs load.sh on batch into warehouse with extra environment, and
// returns its exit code and standard error.
func load(t *testing.T, bin, batch, warehouse string, env ...string) (int, string) {
	t.Helper()
	cmd := exec.Command("bash", "load.sh", batch, warehouse)
	cmd.Env = append(os.Environ(), append([]string{"ASSAY=" + bin}, env...)...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	err := cmd.Run()
	if ee, ok := err.(*exec.ExitError); ok {
		return ee.ExitCode(), stderr.String()
	}
	if err != nil {
		t.Fatal(err)
	}
	return 0, stderr.String()
}

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return recs
}

// quarantined returns the rejected rows kept by the load, their last
// column (the broken rules) cut off, and checks the reports are there.
func quarantined(t *testing.T, warehouse string) [][]string {
	t.Helper()
	dirs, err := filepath.Glob(filepath.Join(warehouse, "quarantine", "*"))
	if err != nil || len(dirs) != 1 {
		t.Fatalf("quarantine holds %v (%v), want one folder", dirs, err)
	}
	for _, name := range []string{"report.json", "summary.md"} {
		if _, err := os.Stat(filepath.Join(dirs[0], name)); err != nil {
			t.Error(err)
		}
	}
	var rows [][]string
	for _, rec := range readCSV(t, filepath.Join(dirs[0], "rejected.csv"))[1:] {
		if rec[len(rec)-1] == "" {
			t.Errorf("rejected row %v names no rule", rec)
		}
		rows = append(rows, rec[:len(rec)-1])
	}
	return rows
}

// sameRows reports whether two lists hold the same rows, in any order.
func sameRows(a, b [][]string) bool {
	key := func(rows [][]string) []string {
		var k []string
		for _, r := range rows {
			k = append(k, strings.Join(r, "\x00"))
		}
		slices.Sort(k)
		return k
	}
	return slices.Equal(key(a), key(b))
}

// TestLoad runs the example on the demo week, on a batch that fails its
// policy (with both settings of ASSAY_ON_FAIL) and on a batch assay cannot
// read, and checks what reaches the warehouse: loaded plus held back is the
// batch exactly, and trouble loads nothing.
func TestLoad(t *testing.T) {
	bin := buildAssay(t)
	week := readCSV(t, "../apiary/hives.csv")
	dir := t.TempDir()

	// A failing batch: the first 200 readings, 10 of them from a scale
	// reporting grams (5% of the rows, over the 1% the policy tolerates).
	failing := [][]string{week[0]}
	for i, rec := range week[1:201] {
		rec = slices.Clone(rec)
		if i%20 == 0 {
			rec[4] = "41230.5"
		}
		failing = append(failing, rec)
	}
	failPath := filepath.Join(dir, "failing.csv")
	writeCSV(t, failPath, failing)
	ragged := filepath.Join(dir, "ragged.csv")
	if err := os.WriteFile(ragged, []byte(strings.Join(week[0], ",")+"\n1,H-001\n"), 0o644); err != nil {
		t.Fatal(err)
	}

	tests := []struct {
		name     string
		batch    string
		env      []string
		code     int
		loaded   int // rows in the warehouse table, -1 for no table
		rejected int // rows held back, -1 for no quarantine
	}{
		{"demo week warns", "../apiary/hives.csv", nil, 0, 6682, 38},
		{"failing batch loads its clean part", failPath, nil, 1, 190, 10},
		{"failing batch, stop", failPath, []string{"ASSAY_ON_FAIL=stop"}, 1, -1, 10},
		{"trouble", ragged, nil, 2, -1, -1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			wh := filepath.Join(t.TempDir(), "warehouse")
			code, stderr := load(t, bin, tt.batch, wh, tt.env...)
			if code != tt.code {
				t.Fatalf("exit code %d, want %d\n%s", code, tt.code, stderr)
			}
			var loaded, held [][]string
			if tt.loaded >= 0 {
				table := readCSV(t, filepath.Join(wh, "readings.csv"))
				if !slices.Equal(table[0], week[0]) {
					t.Errorf("table header %v", table[0])
				}
				loaded = table[1:]
			} else if _, err := os.Stat(filepath.Join(wh, "readings.csv")); err == nil {
				t.Errorf("rows were loaded")
			}
			if tt.rejected >= 0 {
				held = quarantined(t, wh)
			} else if _, err := os.Stat(filepath.Join(wh, "quarantine")); err == nil {
				t.Errorf("a quarantine was made")
			}
			if len(loaded) != max(tt.loaded, 0) || len(held) != max(tt.rejected, 0) {
				t.Errorf("%d rows loaded, %d held back; want %d and %d\n%s", len(loaded), len(held), tt.loaded, tt.rejected, stderr)
			}
			if tt.code != 2 && tt.env == nil && !sameRows(append(loaded, held...), readCSV(t, tt.batch)[1:]) {
				t.Errorf("loaded plus held back rows are not the batch")
			}
		})
	}
}

func writeCSV(t *testing.T, path string, recs [][]string) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := csv.NewWriter(f)
	if err := w.WriteAll(recs); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}
