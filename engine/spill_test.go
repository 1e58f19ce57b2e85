package engine_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// spillPolicy has two rules that need a second pass on the data of
// writeSpillData: a key with a repeated value and a column with an
// extreme value.
const spillPolicy = `policy: spill
data: [data.csv]
columns:
  id: {type: integer}
  x: {type: number, extremes: tukey}
  note: {type: string}
table:
  key: [id]
`

// writeSpillData writes the policy and rows of data (row 7's id repeats
// row 3's, row 11's x is extreme; badRow, when positive, is a row with a
// field too many) into a new folder and returns the policy.
func writeSpillData(t *testing.T, rows, badRow int) *rules.Policy {
	t.Helper()
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("id,x,note\n")
	for i := 1; i <= rows; i++ {
		id, x := i, float64(i%17)
		switch i {
		case 7:
			id = 3
		case 11:
			x = 1e6
		}
		fmt.Fprintf(&b, "%d,%g,n%d", id, x, i%5)
		if i == badRow {
			b.WriteString(",extra")
		}
		b.WriteString("\n")
	}
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	pol, err := rules.Parse(filepath.Join(dir, "policy.yaml"), []byte(spillPolicy))
	if err != nil {
		t.Fatal(err)
	}
	return pol
}

// openUnder lists the files under dir that this process holds open, as
// /proc/self/fd names them (a removed file ends in " (deleted)"); ok is
// false where the system has no /proc/self/fd.
func openUnder(dir string) (files []string, ok bool) {
	fds, err := os.ReadDir("/proc/self/fd")
	if err != nil {
		return nil, false
	}
	for _, fd := range fds {
		target, err := os.Readlink(filepath.Join("/proc/self/fd", fd.Name()))
		if err == nil && strings.HasPrefix(target, dir+string(filepath.Separator)) {
			files = append(files, target)
		}
	}
	return files, true
}

// resultsJSON is the results of a report as the JSON report writes them.
func resultsJSON(t *testing.T, rep *report.Report) []byte {
	t.Helper()
	out, err := json.MarshalIndent(rep.Results, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// runResults runs pol in 16-row batches and returns its results as JSON.
func runResults(t *testing.T, pol *rules.Policy, opts engine.Options) []byte {
	t.Helper()
	opts.Source.BatchRows = 16
	rep, err := engine.Run(context.Background(), pol, nil, opts)
	if err != nil {
		t.Fatal(err)
	}
	return resultsJSON(t, rep)
}

// TestSpillRemoved runs with a spill in a folder of its own, to success
// (also reading standard input, whose copy goes to the same folder), to an
// error in the first pass and to a cancel in either pass: the spill must
// be in use in the passes (seen among the open files, where the system
// lists them) and nothing may be left in the folder, open or not, when Run
// returns. A run that succeeds gives the results of a run that reads the
// data twice.
func TestSpillRemoved(t *testing.T) {
	tests := []struct {
		name      string
		stdin     bool // read the data from standard input
		badRow    int  // a row that stops the first pass, 0 for none
		cancelAt  int  // the pass in which to cancel at the first batch, 0 for none
		wantError error
	}{
		{name: "success"},
		{name: "standard input", stdin: true},
		{name: "error in the first pass", badRow: 150, wantError: errors.New("row 150 has 4 fields")},
		{name: "cancel in the first pass", cancelAt: 1, wantError: context.Canceled},
		{name: "cancel in the second pass", cancelAt: 2, wantError: context.Canceled},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			pol := writeSpillData(t, 200, tc.badRow)
			tmp := t.TempDir()
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			seen := map[int][]string{} // by pass, the spill files open after a batch
			opts := engine.Options{Workers: 2, Source: source.Options{BatchRows: 16, SampleRows: 20, TempDir: tmp}}
			opts.Progress = func(p engine.Progress) {
				if p.Rows == 0 {
					return
				}
				if files, ok := openUnder(tmp); ok && seen[p.Pass] == nil {
					seen[p.Pass] = files
				}
				if p.Pass == tc.cancelAt {
					cancel()
				}
			}
			var paths []string
			if tc.stdin {
				data, err := os.ReadFile(filepath.Join(filepath.Dir(pol.File), "data.csv"))
				if err != nil {
					t.Fatal(err)
				}
				paths, opts.Source.Stdin = []string{"-"}, bytes.NewReader(data)
			}
			rep, err := engine.Run(ctx, pol, paths, opts)
			switch {
			case tc.wantError == nil && err != nil:
				t.Fatal(err)
			case errors.Is(tc.wantError, context.Canceled) && !errors.Is(err, context.Canceled):
				t.Fatalf("Run returned %v; want it canceled", err)
			case tc.wantError != nil && (err == nil || !strings.Contains(err.Error(), tc.wantError.Error())):
				t.Fatalf("Run returned %v; want an error with %q", err, tc.wantError)
			}
			if _, ok := openUnder(tmp); ok {
				last := 2
				if tc.wantError != nil {
					last = max(1, tc.cancelAt)
				}
				for pass := 1; pass <= last; pass++ {
					spills := slices.DeleteFunc(slices.Clone(seen[pass]), func(f string) bool { return !strings.Contains(f, "assay-spill-") })
					if len(spills) != 1 {
						t.Errorf("pass %d: open under the temporary folder: %q; want one spill", pass, seen[pass])
					}
				}
				if files, _ := openUnder(tmp); len(files) > 0 {
					t.Errorf("still open after Run: %q", files)
				}
			}
			if left, _ := os.ReadDir(tmp); len(left) > 0 {
				t.Errorf("left in the temporary folder: %s", left[0].Name())
			}
			if err != nil {
				return
			}
			want := runResults(t, pol, engine.ForceSpill(engine.Options{Workers: 2}, false))
			if got := resultsJSON(t, rep); !bytes.Equal(got, want) {
				t.Errorf("the results with a spill differ from those without:\n%s", firstDifference(want, got, "without", "with"))
			}
			if rep.Counts.Fail+rep.Counts.Warn == 0 {
				t.Errorf("no rule found the planted rows: %+v", rep.Counts)
			}
		})
	}
}

// TestSpillFallback runs with a temporary folder that does not exist: the
// spill cannot be made, the second pass reads the data again and the
// results are those of a run without a spill.
func TestSpillFallback(t *testing.T) {
	pol := writeSpillData(t, 200, 0)
	absent := filepath.Join(t.TempDir(), "absent")
	got := runResults(t, pol, engine.Options{Source: source.Options{TempDir: absent}})
	want := runResults(t, pol, engine.ForceSpill(engine.Options{}, false))
	if !bytes.Equal(got, want) {
		t.Errorf("results differ without a temporary folder:\n%s", firstDifference(want, got, "without a spill", "without a folder"))
	}
	if _, err := os.Stat(absent); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the run made the temporary folder %s (%v)", absent, err)
	}
}
