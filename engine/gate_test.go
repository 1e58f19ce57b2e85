package engine_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

const gatePolicy = `policy: gate
columns:
  probe: {type: string, pattern: "^P[0-9]{2}$"}
  depth_cm: {type: integer, enum: [10, 30, 60]}
  moisture_pct: {type: number, minimum: 0, maximum: 100, nulls: {fail: 50%}, summary: {mean: {minimum: 0, maximum: 100}}}
rows:
  - name: deep is dry
    expr: depth_cm < 60 || moisture_pct < 40
table:
  key: [probe, depth_cm]
  rows: {minimum: 1}
`

// gateFiles are two CSV files whose rows break rules alone, together, and
// across the files (a key repeated in the second file). The column note is
// read by no rule.
var gateFiles = map[string]string{
	"day1.csv": "probe,depth_cm,moisture_pct,note\n" +
		"P01,10,31.5,fine\n" + // 1
		"P01,30,131,\"too wet,\nsays the log\"\n" + // 2: maximum
		"P1,60,45,\n" + // 3: pattern, row rule
		"P02,10,NA,missing\n", // 4: nulls
	"day2.csv": "probe,note,moisture_pct,depth_cm\n" + // columns in another order
		"P03,,abc,10\n" + // 5: type
		"P01,again,33.0,10\n" + // 6: key (with row 1)
		"P04,,-1,45\n", // 7: minimum, enum
}

// gateRows is what the gate says of each row: the rule ids each breaks.
var gateRows = [][]string{
	1: {"table.key"},
	2: {"columns.moisture_pct.maximum"},
	3: {"columns.probe.pattern", "rows.deep-is-dry"},
	4: {"columns.moisture_pct.nulls"},
	5: {"columns.moisture_pct.type"},
	6: {"table.key"},
	7: {"columns.depth_cm.enum", "columns.moisture_pct.minimum"},
}

// gateFuncs is a Gate made of two functions; begin may be nil.
type gateFuncs struct {
	begin func(*arrow.Schema) error
	rows  func(*source.Batch, [][]string) error
}

func (g gateFuncs) Begin(s *arrow.Schema) error {
	if g.begin == nil {
		return nil
	}
	return g.begin(s)
}

func (g gateFuncs) Rows(b *source.Batch, broken [][]string) error { return g.rows(b, broken) }

func writeGateData(t *testing.T) (*rules.Policy, []string) {
	t.Helper()
	dir := t.TempDir()
	pol, err := rules.Parse(filepath.Join(dir, "policy.yaml"), []byte(gatePolicy))
	if err != nil {
		t.Fatal(err)
	}
	var paths []string
	for _, name := range []string{"day1.csv", "day2.csv"} {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(gateFiles[name]), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, path)
	}
	return pol, paths
}

// TestGate checks what the gate pass hands over: every row once, in order,
// with every column and the cells as written, and the row-level rules each
// row breaks, which agree with the offending counts of the results.
func TestGate(t *testing.T) {
	pol, paths := writeGateData(t)
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	broke := map[int64][]string{}
	var texts []string
	var next int64 = 1
	var schema, batchSchema *arrow.Schema
	opts := engine.Options{Gate: gateFuncs{func(s *arrow.Schema) error { schema = s; return nil }, func(b *source.Batch, broken [][]string) error {
		batchSchema = b.Record.Schema()
		if b.FirstRow != next {
			t.Errorf("batch starts at row %d, want %d", b.FirstRow, next)
		}
		if got := b.Record.NumCols(); got != 4 || len(b.Text) != 4 {
			t.Errorf("batch has %d columns and %d text columns, want 4 and 4", got, len(b.Text))
		}
		for i := range int(b.Record.NumRows()) {
			broke[b.FirstRow+int64(i)] = broken[i]
			var cells []string
			for _, c := range b.Text {
				cells = append(cells, c.Value(i))
			}
			texts = append(texts, strings.Join(cells, "|"))
		}
		next = b.FirstRow + b.Record.NumRows()
		return nil
	}}}
	opts.Source.Allocator = mem
	rep, err := engine.Run(context.Background(), pol, paths, opts)
	if err != nil {
		t.Fatal(err)
	}
	if schema == nil || !schema.Equal(batchSchema) {
		t.Errorf("Begin had schema %v, the batches %v", schema, batchSchema)
	}
	if next-1 != rep.Rows || rep.Rows != 7 {
		t.Fatalf("gate saw %d rows, the report %d, want 7", next-1, rep.Rows)
	}
	for row := int64(1); row <= rep.Rows; row++ {
		if !slices.Equal(broke[row], gateRows[row]) {
			t.Errorf("row %d breaks %v, want %v", row, broke[row], gateRows[row])
		}
	}
	// Cells as written, in the data's column order (the first file's).
	wantTexts := []string{
		"P01|10|31.5|fine", "P01|30|131|too wet,\nsays the log", "P1|60|45|", "P02|10|NA|missing",
		"P03|10|abc|", "P01|10|33.0|again", "P04|45|-1|",
	}
	if !slices.Equal(texts, wantTexts) {
		t.Errorf("texts\n got %q\nwant %q", texts, wantTexts)
	}
	// Each row-level result counts as many rows as the gate rejects for it.
	for _, res := range rep.Results {
		var n int64
		for _, ids := range broke {
			if slices.Contains(ids, res.ID) {
				n++
			}
		}
		var want int64
		if res.Offending != nil {
			want = res.Offending.Count
		}
		rowLevel := res.Check != "summary" && res.Check != "row_count"
		if rowLevel && n != want || !rowLevel && n != 0 {
			t.Errorf("%s: gate rejects %d rows, result counts %d", res.ID, n, want)
		}
	}
}

// TestGateProgress checks the progress reports of a run with a second pass
// and a gate pass: each pass starts at zero and ends with every row and
// byte read.
func TestGateProgress(t *testing.T) {
	pol, paths := writeGateData(t)
	var size int64
	for _, p := range paths {
		fi, err := os.Stat(p)
		if err != nil {
			t.Fatal(err)
		}
		size += fi.Size()
	}
	var got []engine.Progress
	opts := engine.Options{
		Gate:     gateFuncs{rows: func(*source.Batch, [][]string) error { return nil }},
		Progress: func(p engine.Progress) { got = append(got, p) },
	}
	if _, err := engine.Run(context.Background(), pol, paths, opts); err != nil {
		t.Fatal(err)
	}
	var last []engine.Progress // the last report of each pass
	for i, p := range got {
		if p.Size != size {
			t.Errorf("report %d: size %d, want %d", i, p.Size, size)
		}
		if i == 0 || p.Pass != got[i-1].Pass {
			if p.Rows != 0 || p.Bytes != 0 {
				t.Errorf("pass %d starts at %d rows, %d bytes", p.Pass, p.Rows, p.Bytes)
			}
			last = append(last, p)
			continue
		}
		if p.Rows < got[i-1].Rows || p.Bytes < got[i-1].Bytes {
			t.Errorf("report %d goes back: %+v after %+v", i, p, got[i-1])
		}
		last[len(last)-1] = p
	}
	want := []engine.Progress{
		{Pass: 1, Rows: 7, Bytes: size, Size: size, TotalRows: -1},
		{Pass: 2, Rows: 7, Bytes: size, Size: size, TotalRows: 7},
		{Pass: 3, Gate: true, Rows: 7, Bytes: size, Size: size, TotalRows: 7},
	}
	if !slices.Equal(last, want) {
		t.Errorf("passes end at\n%+v\nwant\n%+v", last, want)
	}
}

// TestGateError checks that an error from the gate ends the run with it.
func TestGateError(t *testing.T) {
	pol, paths := writeGateData(t)
	full := errors.New("disk full")
	_, err := engine.Run(context.Background(), pol, paths, engine.Options{
		Gate: gateFuncs{rows: func(*source.Batch, [][]string) error { return full }},
	})
	if !errors.Is(err, full) || !strings.Contains(err.Error(), "writing rows") {
		t.Errorf("Run returned %v, want the gate's error", err)
	}
}
