package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/gate"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// badSplit is where each row of bad.csv goes: the rules it breaks, in
// policy order, or nothing for an accepted row.
var badSplit = []string{
	"", // row 1
	"columns.moisture_pct.maximum",
	"columns.probe.pattern;rows.deep-soil-stays-cool",
	"table.key;columns.moisture_pct.nulls",
	"table.key",
	"columns.depth_cm.enum",
	"columns.moisture_pct.type",
	"", // row 8
}

// TestGateSplit gates loads of one file, several files, standard input and
// Parquet into CSV and Parquet outputs, and checks that accepted plus
// rejected is the input exactly: as many rows, the same rows in the same
// order once merged back, and for CSV the same cell texts.
func TestGateSplit(t *testing.T) {
	dir := t.TempDir()
	pq := filepath.Join(dir, "good.parquet")
	writeParquet(t, pq)
	bad, err := os.ReadFile("testdata/soil/bad.csv")
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name   string
		stdin  string
		inputs []string // files whose rows, in order, make the input; "-" for stdin
		ext    string   // of the outputs
		code   int
		broken []string // of the input rows, when checked
	}{
		{"one file", "", []string{"testdata/soil/bad.csv"}, "csv", 1, badSplit},
		{"several files", "", []string{"testdata/soil/good.csv", "testdata/soil/bad.csv", "testdata/soil/warn.csv"}, "csv", 1, nil},
		{"glob", "", []string{"testdata/soil/batches/*.csv"}, "csv", 0, nil},
		{"standard input", string(bad), []string{"-"}, "csv", 1, badSplit},
		{"stdin and a file", string(bad), []string{"testdata/soil/good.csv", "-"}, "csv", 1, nil},
		{"parquet input", "", []string{pq, "testdata/soil/warn.csv"}, "csv", 1, nil}, // keys repeat across the files
		{"parquet outputs", "", []string{"testdata/soil/good.csv", "testdata/soil/bad.csv"}, "parquet", 1, nil},
		{"parquet to parquet", "", []string{pq}, "parquet", 0, nil},
	}
	for i, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			acc := filepath.Join(dir, "acc"+string(rune('a'+i))+"."+tt.ext)
			rej := filepath.Join(dir, "rej"+string(rune('a'+i))+"."+tt.ext)
			args := append([]string{"check", pol, "--format", "json", "--accepted", acc, "--rejected", rej}, tt.inputs...)
			got := assay(t, tt.stdin, args...)
			if got.code != tt.code {
				t.Fatalf("exit code %d, want %d\n%s", got.code, tt.code, got.stderr)
			}
			var rep struct{ Rows int64 }
			if err := json.Unmarshal([]byte(got.stdout), &rep); err != nil {
				t.Fatal(err)
			}
			in := inputRows(t, tt.inputs, tt.stdin, tt.ext)
			accRows, rejRows := outputRows(t, acc), outputRows(t, rej)
			if int64(len(in)) != rep.Rows || len(accRows)+len(rejRows) != len(in) {
				t.Fatalf("%d accepted + %d rejected rows, input %d, report %d", len(accRows), len(rejRows), len(in), rep.Rows)
			}
			if want := "assay: " + strconv.Itoa(len(accRows)) + " rows accepted into " + acc + ", " + strconv.Itoa(len(rejRows)) + " rejected into " + rej; !strings.Contains(got.stderr, want) {
				t.Errorf("stderr lacks %q:\n%s", want, got.stderr)
			}
			// Merge the halves back in input order: each input row is the
			// next accepted row or the next rejected one.
			var broken []string
			for n, row := range in {
				switch {
				case len(accRows) > 0 && slices.Equal(row, accRows[0]):
					accRows = accRows[1:]
					broken = append(broken, "")
				case len(rejRows) > 0 && slices.Equal(row, rejRows[0][:len(row)]):
					broken = append(broken, rejRows[0][len(row)])
					if broken[n] == "" {
						t.Errorf("input row %d rejected without a rule", n+1)
					}
					rejRows = rejRows[1:]
				default:
					t.Fatalf("input row %d %q is neither the next accepted row nor the next rejected one", n+1, row)
				}
			}
			if tt.broken != nil && !slices.Equal(broken, tt.broken) {
				t.Errorf("rules broken by row\n got %q\nwant %q", broken, tt.broken)
			}
		})
	}
}

// inputRows reads the data rows of the inputs in order: for CSV outputs
// their cell texts (Parquet cells as the gate writes them), for Parquet
// outputs the typed values as Arrow prints them.
func inputRows(t *testing.T, inputs []string, stdin, ext string) [][]string {
	t.Helper()
	var rows [][]string
	for _, in := range inputs {
		paths := []string{in}
		if strings.ContainsAny(in, "*?") {
			var err error
			if paths, err = filepath.Glob(in); err != nil {
				t.Fatal(err)
			}
		}
		for _, p := range paths {
			if ext == "csv" && (strings.HasSuffix(p, ".csv") || p == "-") {
				text := stdin
				if p != "-" {
					data, err := os.ReadFile(p)
					if err != nil {
						t.Fatal(err)
					}
					text = string(data)
				}
				recs := readCSV(t, strings.NewReader(text), p)
				rows = append(rows, recs[1:]...)
				continue
			}
			rows = append(rows, typedRows(t, p, stdin, ext)...)
		}
	}
	return rows
}

// typedRows reads a file as the policy types it: as the gate's CSV writer
// writes its cells, or as Arrow prints them.
func typedRows(t *testing.T, path, stdin, ext string) [][]string {
	t.Helper()
	p, err := rules.Load(pol)
	if err != nil {
		t.Fatal(err)
	}
	opts := source.Options{Stdin: strings.NewReader(stdin), Types: map[string]arrow.DataType{}}
	for _, c := range p.Columns {
		opts.Types[c.Name] = engine.ArrowType(c.Type)
	}
	return scanRows(t, path, opts, ext == "csv")
}

// outputRows reads an output file, CSV or Parquet, header excluded.
func outputRows(t *testing.T, path string) [][]string {
	t.Helper()
	if strings.HasSuffix(path, ".csv") {
		f, err := os.Open(path)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		return readCSV(t, f, path)[1:]
	}
	return scanRows(t, path, source.Options{}, false)
}

// scanRows reads a file through the engine's reader and writes each cell
// as the gate's CSV writer does (asCSV) or as Arrow prints it.
func scanRows(t *testing.T, path string, opts source.Options, asCSV bool) [][]string {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	opts.Allocator = mem
	set, err := source.Open([]string{path}, opts)
	if err != nil {
		t.Fatal(err)
	}
	defer set.Close()
	var buf strings.Builder
	w := gate.New(&gate.Output{W: &buf, Format: gate.CSV}, nil, mem)
	if err := w.Begin(set.Schema()); err != nil {
		t.Fatal(err)
	}
	var rows [][]string
	err = set.Scan(context.Background(), nil, func(b *source.Batch) error {
		if asCSV {
			return w.Rows(b, make([][]string, b.Record.NumRows()))
		}
		for i := range int(b.Record.NumRows()) {
			var row []string
			for _, c := range b.Record.Columns() {
				row = append(row, c.ValueStr(i))
			}
			rows = append(rows, row)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if asCSV {
		return readCSV(t, strings.NewReader(buf.String()), path)[1:]
	}
	return rows
}

func readCSV(t *testing.T, r io.Reader, name string) [][]string {
	t.Helper()
	recs, err := csv.NewReader(r).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return recs
}

// TestGateTrouble checks that bad gate flags and runs that end in trouble
// exit 2 and write nothing, not even a report.
func TestGateTrouble(t *testing.T) {
	dir := t.TempDir()
	acc, rej := filepath.Join(dir, "acc.csv"), filepath.Join(dir, "rej.csv")
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"unreadable data", []string{pol, "--accepted", acc, "--rejected", rej, "--report", "junit=" + filepath.Join(dir, "a.xml"), "testdata/soil/ragged.csv"}, "ragged.csv:3"},
		{"unknown extension", []string{pol, "--accepted", filepath.Join(dir, "acc.txt"), "testdata/soil/bad.csv"}, "--accepted " + filepath.Join(dir, "acc.txt") + ": name a .csv or .parquet file"},
		{"same file twice", []string{pol, "--accepted", acc, "--rejected", acc, "testdata/soil/bad.csv"}, "name the same file"},
		{"missing folder", []string{pol, "--accepted", acc, "--rejected", filepath.Join(dir, "no", "rej.csv"), "testdata/soil/bad.csv"}, "rej.csv"},
		{"bad policy", []string{"testdata/soil/badpolicy.yaml", "testdata/soil/bad.csv", "--accepted", acc, "--rejected", rej}, "badpolicy.yaml"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			troubleWritesNothing(t, dir, tt.want, append([]string{"check"}, tt.args...)...)
		})
	}
}

// TestGateAcceptedOnly writes only the accepted file of a passing run. The
// nulls rule passes with one missing value in ten rows, yet that row is
// not accepted: tolerances judge the batch, the gate judges each row.
func TestGateAcceptedOnly(t *testing.T) {
	acc := filepath.Join(t.TempDir(), "acc.csv")
	got := assay(t, "", "check", pol, "testdata/soil/good.csv", "--accepted", acc)
	if got.code != 0 {
		t.Fatalf("exit code %d\n%s", got.code, got.stderr)
	}
	want, err := os.ReadFile("testdata/soil/good.csv")
	if err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile(acc)
	if err != nil {
		t.Fatal(err)
	}
	if clean := strings.Replace(string(want), "P03,10,,16.0\n", "", 1); string(data) != clean {
		t.Errorf("accepted file is\n%s\nwant good.csv without its row with a missing value:\n%s", data, clean)
	}
	if !strings.Contains(got.stderr, "9 rows accepted into "+acc+", 1 rejected\n") {
		t.Errorf("stderr: %s", got.stderr)
	}
}

// TestOutputIsInput checks that an output naming an input file is refused
// and the input left as it was.
func TestOutputIsInput(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "batch.csv")
	data, err := os.ReadFile("testdata/soil/bad.csv")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(in, data, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, flag := range []string{"--accepted", "--output"} {
		got := assay(t, "", "check", pol, in, flag, filepath.Join(dir, ".", "batch.csv"))
		if got.code != 2 || !strings.Contains(got.stderr, "it is an input of this run") {
			t.Errorf("%s: exit code %d, stderr %q", flag, got.code, got.stderr)
		}
		after, err := os.ReadFile(in)
		if err != nil || string(after) != string(data) {
			t.Errorf("%s: the input changed (error %v)", flag, err)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 1 {
			t.Errorf("%s: folder holds %d files, want the input alone", flag, len(entries))
		}
	}
}
