package source

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// collect returns the batches a scan delivers, each holding its own
// reference to its record; the caller releases them.
func collect(t *testing.T, scan func(fn func(*Batch) error) error) []*Batch {
	t.Helper()
	var out []*Batch
	err := scan(func(b *Batch) error {
		c := *b
		c.Record.Retain()
		out = append(out, &c)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// sameBatch returns how b differs from want, or "".
func sameBatch(b, want *Batch) string {
	switch {
	case b.Source != want.Source || b.FirstRow != want.FirstRow || b.Offset != want.Offset:
		return fmt.Sprintf("source %d, first row %d, offset %d; want %d, %d, %d",
			b.Source, b.FirstRow, b.Offset, want.Source, want.FirstRow, want.Offset)
	case !slices.Equal(b.Lines, want.Lines) || (b.Lines == nil) != (want.Lines == nil):
		return fmt.Sprintf("lines %v; want %v", b.Lines, want.Lines)
	case !reflect.DeepEqual(b.Invalid, want.Invalid):
		return fmt.Sprintf("invalid cells %v; want %v", b.Invalid, want.Invalid)
	case !b.Record.Schema().Equal(want.Record.Schema()) || !array.RecordEqual(b.Record, want.Record):
		return fmt.Sprintf("record\n%v\nwant\n%v", b.Record, want.Record)
	}
	return ""
}

// TestSpill copies a scan to a spill, keeping some columns, and checks
// that every scan of the copy that skips the columns left out equals the
// same ScanSome of the inputs: batches, rows, lines (also of rows over
// several lines), sources, offsets, invalid cells and records, with the
// skipped columns all null.
func TestSpill(t *testing.T) {
	dir := t.TempDir()
	csvFiles := writeFiles(t, dir, []inFile{
		{"a.csv", "id,name,score,ok\n1,ann,1.5,true\n2,\"b,o\"\"b\",x,false\n\n3,NA,,TRUE\n"},
		{"b.csv.gz", gz(t, "id,name,score,ok\r\n4,\"multi\nline\",2e3,false\r\n5,,-1,maybe\r\n6,zed,7,\r\n")},
		{"c.csv", "ok,score,name,id\ntrue,0.25,late,7\nno,huh,\"two\n\nbreaks\",8\n"},
	})
	pq := filepath.Join(dir, "stored.parquet")
	writeParquet(t, pq, stored, 2)
	as := filepath.Join(dir, "stored.arrows")
	writeArrow(t, as, stored, true, 1)
	declared := map[string]arrow.DataType{"score": tFloat64, "ok": tBoolean, "id": tInt64}

	tests := []struct {
		name  string
		paths []string
		opts  Options
		cols  []string
		bad   bool // the data has invalid cells and rows over several lines, which the test must see
	}{
		{name: "csv files and gzip", paths: csvFiles, opts: Options{BatchRows: 2, Types: declared}, bad: true},
		{name: "csv one batch", paths: csvFiles, opts: Options{Types: declared}, bad: true},
		{name: "csv projection", paths: csvFiles, opts: Options{BatchRows: 3, Types: declared}, cols: []string{"ok", "id", "name"}, bad: true},
		{name: "parquet", paths: []string{pq}, opts: Options{BatchRows: 2}},
		{name: "arrow stream declared", paths: []string{as}, opts: Options{Types: map[string]arrow.DataType{"s": tBoolean, "num": tFloat64}}},
		{name: "csv, parquet and arrow", paths: mixedFiles(t, t.TempDir()), opts: Options{BatchRows: 2}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			opts := tc.opts
			opts.Allocator = checkedMem(t)
			opts.TempDir = t.TempDir()
			s, err := Open(tc.paths, opts)
			if err != nil {
				t.Fatal(err)
			}
			defer s.Close()
			n := len(tc.cols)
			if tc.cols == nil {
				n = s.Schema().NumFields()
			}
			ctx := context.Background()
			for _, keep := range skipPatterns(n) {
				sp, err := s.NewSpill(tc.cols, keep)
				if err != nil {
					t.Fatal(err)
				}
				err = s.Scan(ctx, tc.cols, func(b *Batch) error { sp.Write(b); return nil })
				if err != nil {
					t.Fatal(err)
				}
				if err := sp.Finish(); err != nil {
					t.Fatal(err)
				}
				for _, skip := range skipPatterns(n) {
					if !covers(skip, keep) {
						continue
					}
					want := collect(t, func(fn func(*Batch) error) error { return s.ScanSome(ctx, tc.cols, skip, fn) })
					got := collect(t, func(fn func(*Batch) error) error { return sp.ScanSome(ctx, tc.cols, skip, fn) })
					if len(got) != len(want) {
						t.Errorf("keep %v, skip %v: %d batches; want %d", keep, skip, len(got), len(want))
					}
					for i := range min(len(got), len(want)) {
						if d := sameBatch(got[i], want[i]); d != "" {
							t.Errorf("keep %v, skip %v: batch %d: %s", keep, skip, i, d)
						}
					}
					if tc.bad && skip == nil && !(slices.ContainsFunc(want, func(b *Batch) bool { return b.Invalid != nil }) &&
						slices.ContainsFunc(want, func(b *Batch) bool { return b.Lines[len(b.Lines)-1] != b.Lines[0]+int64(len(b.Lines)-1) })) {
						t.Errorf("the scan has no invalid cell or no row over several lines")
					}
					for _, b := range append(got, want...) {
						b.Release()
					}
				}
				if err := sp.Close(); err != nil {
					t.Fatal(err)
				}
				if left, _ := os.ReadDir(opts.TempDir); len(left) > 0 {
					t.Fatalf("the spill left %s in its folder", left[0].Name())
				}
			}
		})
	}
}

// covers reports whether skip skips every column keep leaves out (keep
// nil keeps all).
func covers(skip, keep []bool) bool {
	for k := range keep {
		if !keep[k] && (skip == nil || !skip[k]) {
			return false
		}
	}
	return true
}

// TestSpillRefuses checks the scans a spill cannot serve: of other
// columns, reading a column it left out, before it is finished, after a
// failed write and after Close.
func TestSpillRefuses(t *testing.T) {
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", "k,v,w\n1,x,2\n2,y,3\n"}})
	s, err := Open(paths, Options{Allocator: checkedMem(t), TempDir: t.TempDir()})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	ctx := context.Background()
	cols := []string{"k", "v"}
	fill := func(sp *Spill) {
		t.Helper()
		if err := s.Scan(ctx, cols, func(b *Batch) error { sp.Write(b); return nil }); err != nil {
			t.Fatal(err)
		}
	}
	tests := []struct {
		name    string
		prepare func(sp *Spill)
		cols    []string
		skip    []bool
		want    string
	}{
		{"not finished", fill, cols, nil, "still being written"},
		{"other columns", func(sp *Spill) { fill(sp); _ = sp.Finish() }, []string{"k", "w"}, nil, `holds columns "k", "v", not "k", "w"`},
		{"a column left out", func(sp *Spill) { fill(sp); _ = sp.Finish() }, cols, nil, `column "v" is not in the temporary copy`},
		{"skip flags", func(sp *Spill) { fill(sp); _ = sp.Finish() }, cols, []bool{false}, "1 skip flags for 2 columns"},
		{"failed write", func(sp *Spill) {
			sp.buf.Reset(failingWriter{})
			fill(sp)
			if err := sp.Finish(); err == nil {
				t.Error("Finish after a failed write returned no error")
			}
		}, cols, []bool{false, true}, "no space left"},
		{"closed", func(sp *Spill) { fill(sp); _ = sp.Finish(); _ = sp.Close() }, cols, []bool{false, true}, "is closed"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			sp, err := s.NewSpill(cols, []bool{true, false})
			if err != nil {
				t.Fatal(err)
			}
			defer sp.Close()
			tc.prepare(sp)
			err = sp.ScanSome(ctx, tc.cols, tc.skip, func(*Batch) error { return nil })
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("ScanSome returned %v; want an error with %q", err, tc.want)
			}
		})
	}
}

// failingWriter fails every write, as a full disk does.
type failingWriter struct{}

func (failingWriter) Write([]byte) (int, error) { return 0, errors.New("no space left on device") }

// TestSpillTempDir checks that a spill is made in Options.TempDir and that
// one that cannot be made says so.
func TestSpillTempDir(t *testing.T) {
	dir := t.TempDir()
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", "k\n1\n"}})
	for _, tc := range []struct {
		tempDir string
		ok      bool
	}{{dir, true}, {filepath.Join(dir, "absent"), false}} {
		s, err := Open(paths, Options{TempDir: tc.tempDir})
		if err != nil {
			t.Fatal(err)
		}
		sp, err := s.NewSpill(nil, nil)
		if (err == nil) != tc.ok {
			t.Errorf("NewSpill in %s: error %v; want one: %v", tc.tempDir, err, !tc.ok)
		}
		if err == nil && !strings.HasPrefix(sp.file.Name(), dir+string(filepath.Separator)) {
			t.Errorf("the spill is %s, not in %s", sp.file.Name(), dir)
		}
		_ = sp.Close()
		_ = s.Close()
	}
}

// TestSpillMeta round-trips the line numbers and invalid cells that a
// spilled batch keeps in its metadata.
func TestSpillMeta(t *testing.T) {
	for _, lines := range [][]int64{{1}, {2, 3, 4}, {2, 4, 5, 9}, {7, 8, 10}} {
		got, err := readLines(appendLines(nil, lines), len(lines))
		if err != nil || fmt.Sprint(got) != fmt.Sprint(lines) {
			t.Errorf("lines %v came back as %v (%v)", lines, got, err)
		}
	}
	if _, err := readLines(appendLines(nil, []int64{2, 4, 5}), 2); err == nil {
		t.Error("line numbers of 3 rows read as 2 without an error")
	}
	cells := map[int][]InvalidCell{0: {{Row: 1, Text: "x"}, {Row: 3, Text: ""}}, 2: {{Row: 0, Text: "long text \x00 é"}}}
	data := appendInvalid(appendInvalid(nil, 0, cells[0]), 2, cells[2])
	for _, tc := range []struct {
		skip []bool
		want map[int][]InvalidCell
	}{{nil, cells}, {[]bool{false, false, true}, map[int][]InvalidCell{0: cells[0]}}} {
		got, err := readInvalid(data, 4, 3, tc.skip)
		if err != nil || fmt.Sprint(got) != fmt.Sprint(tc.want) {
			t.Errorf("skip %v: invalid cells %v came back as %v (%v)", tc.skip, tc.want, got, err)
		}
	}
	for _, tc := range []struct{ rows, cols int }{{3, 3}, {4, 2}} {
		if _, err := readInvalid(data, tc.rows, tc.cols, nil); err == nil {
			t.Errorf("cells read as of %d rows and %d columns without an error", tc.rows, tc.cols)
		}
	}
}
