package source

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/parquet/file"
)

// skipDump renders a scan like scanDump, with the cells of the columns
// skip marks written as "-" and every batch's position (source, first row,
// length, lines, offset). For ScanSome it also checks that a skipped column
// has the schema's type, is all null and has no Invalid cells.
func skipDump(t *testing.T, s *Set, cols []string, skip []bool, some bool) string {
	t.Helper()
	var b strings.Builder
	var kept []arrow.RecordBatch // retained to the end, as the engine's workers do
	defer func() {
		for _, r := range kept {
			r.Release()
		}
	}()
	fn := func(bt *Batch) error {
		rec := bt.Record
		n := int(rec.NumRows())
		fmt.Fprintf(&b, "batch source=%d first=%d rows=%d offset=%d\n", bt.Source, bt.FirstRow, n, bt.Offset)
		for c := range int(rec.NumCols()) {
			if skip == nil || !skip[c] || !some {
				continue
			}
			a := rec.Column(c)
			if !arrow.TypeEqual(a.DataType(), rec.Schema().Field(c).Type) || a.Len() != n || a.NullN() != n {
				t.Errorf("skipped column %s: %s of %d rows with %d nulls; want %s, all %d null",
					rec.ColumnName(c), a.DataType(), a.Len(), a.NullN(), rec.Schema().Field(c).Type, n)
			}
			if bt.Invalid[c] != nil {
				t.Errorf("skipped column %s has invalid cells %v", rec.ColumnName(c), bt.Invalid[c])
			}
		}
		for i := range n {
			fmt.Fprintf(&b, "  row %d line %d:", bt.Row(i), bt.Line(i))
			for c := range int(rec.NumCols()) {
				text := "-"
				if skip == nil || !skip[c] {
					text = cellText(t, bt, c, i)
				}
				fmt.Fprintf(&b, " %s=%s", rec.ColumnName(c), text)
			}
			b.WriteString("\n")
		}
		rec.Retain()
		kept = append(kept, rec)
		return nil
	}
	var err error
	if some {
		err = s.ScanSome(context.Background(), cols, skip, fn)
	} else {
		err = s.Scan(context.Background(), cols, fn)
	}
	if err != nil {
		fmt.Fprintf(&b, "error: %v\n", err)
	}
	for _, f := range s.Files() {
		fmt.Fprintf(&b, "file %s rows=%d\n", filepath.Base(f.Path), f.Rows)
	}
	return b.String()
}

// skipPatterns returns the skip flags to try over n columns: none, all,
// each column alone, each column kept alone, and alternate columns.
func skipPatterns(n int) [][]bool {
	pats := [][]bool{nil, make([]bool, n)}
	all := make([]bool, n)
	for i := range all {
		all[i] = true
	}
	pats = append(pats, all)
	for i := range n {
		one, allBut := make([]bool, n), make([]bool, n)
		for j := range n {
			one[j], allBut[j] = i == j, i != j
		}
		pats = append(pats, one, allBut)
	}
	alt := make([]bool, n)
	for i := range alt {
		alt[i] = i%2 == 0
	}
	return append(pats, alt)
}

// TestScanSome checks ScanSome against Scan on every format, on sets of
// several files and on gzip input, for many skip patterns: the same
// batches, row numbers, lines and errors, and the cells of the columns
// not skipped unchanged.
func TestScanSome(t *testing.T) {
	dir := t.TempDir()
	csvFiles := writeFiles(t, dir, []inFile{
		{"a.csv", "id,name,score,ok\n1,ann,1.5,true\n2,\"b,o\"\"b\",x,false\n\n3,NA,,TRUE\n"},
		{"b.csv.gz", gz(t, "id,name,score,ok\r\n4,\"multi\nline\",2e3,false\r\n5,,-1,maybe\r\n6,zed,7,\r\n")},
		{"c.csv", "ok,score,name,id\ntrue,0.25,late,7\n"},
	})
	badWidth := writeFiles(t, dir, []inFile{{"bad.csv", "id,name,score,ok\n8,x,1,true\n9,y,2\n"}})
	badText := writeFiles(t, dir, []inFile{{"utf.csv", "id,name,score,ok\n10,a,1,true\n11,\xff,1,true\n"}})
	unclosed := writeFiles(t, dir, []inFile{{"open.csv", "id,name,score,ok\n10,a,1,true\n11,\"never,1,true\n"}})
	pq := filepath.Join(dir, "stored.parquet")
	writeParquet(t, pq, stored, 2)
	pq2 := filepath.Join(dir, "stored2.parquet")
	writeParquet(t, pq2, stored, 1)
	af := filepath.Join(dir, "stored.arrow")
	writeArrow(t, af, stored, false, 2)
	as := filepath.Join(dir, "stored.arrows")
	writeArrow(t, as, stored, true, 1)
	declared := map[string]arrow.DataType{"i32": tString, "f32": tInt64, "s": tBoolean, "ms": tDate, "num": tFloat64}

	tests := []struct {
		name  string
		paths []string
		opts  Options
		cols  []string
		fails bool // the scan ends with an error
	}{
		{name: "csv files and gzip", paths: csvFiles, opts: Options{BatchRows: 2}},
		{name: "csv one batch", paths: csvFiles},
		{name: "csv projection", paths: csvFiles, opts: Options{BatchRows: 3}, cols: []string{"ok", "id", "name"}},
		{name: "csv declared", paths: csvFiles, opts: Options{BatchRows: 2, Types: map[string]arrow.DataType{"score": tInt64, "ok": tBoolean}}},
		{name: "csv no header", paths: writeFiles(t, dir, []inFile{{"nh.csv", "1,x\n2,\n3,z\n"}}), opts: Options{NoHeader: true, BatchRows: 2}},
		{name: "csv width error", paths: append(csvFiles[:1:1], badWidth...), opts: Options{BatchRows: 1, SampleRows: 1}, fails: true},
		{name: "csv bad UTF-8 in a column", paths: badText, opts: Options{SampleRows: 1}, fails: true},
		{name: "csv unclosed quote", paths: unclosed, opts: Options{SampleRows: 1}, fails: true},
		{name: "parquet", paths: []string{pq}, opts: Options{BatchRows: 2}},
		{name: "parquet files", paths: []string{pq, pq2}, opts: Options{BatchRows: 2}},
		{name: "parquet declared", paths: []string{pq, pq2}, opts: Options{BatchRows: 2, Types: declared}},
		{name: "parquet projection", paths: []string{pq2, pq}, cols: []string{"num", "l", "i32"}},
		{name: "arrow file and stream", paths: []string{af, as}, opts: Options{BatchRows: 2}},
		{name: "arrow declared", paths: []string{as, af}, opts: Options{Types: declared}},
		{name: "csv, parquet and arrow", paths: mixedFiles(t, t.TempDir()), opts: Options{BatchRows: 2}},
		{name: "csv, parquet and arrow projection", paths: mixedFiles(t, t.TempDir()), cols: []string{"cat"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			opts := tc.opts
			opts.Allocator = checkedMem(t)
			s, err := Open(tc.paths, opts)
			if err != nil {
				t.Fatal(err)
			}
			defer s.Close()
			n := len(tc.cols)
			if tc.cols == nil {
				n = s.Schema().NumFields()
			}
			for _, skip := range skipPatterns(n) {
				want := skipDump(t, s, tc.cols, skip, false)
				if strings.Contains(want, "error: ") != tc.fails {
					t.Fatalf("Scan:\n%s\nwant an error: %v", want, tc.fails)
				}
				got := skipDump(t, s, tc.cols, skip, true)
				if got != want {
					t.Errorf("skip %v:\nScanSome:\n%s\nScan:\n%s", skip, got, want)
				}
			}
		})
	}
}

// TestScanSomeArgs checks that ScanSome wants one skip flag per column.
func TestScanSomeArgs(t *testing.T) {
	mem := checkedMem(t)
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", "k,v\n1,x\n2,y\n"}})
	s, err := Open(paths, Options{Allocator: mem})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for _, tc := range []struct {
		cols []string
		skip []bool
		n    int // columns scanned
	}{{[]string{"v"}, []bool{true, false}, 1}, {nil, []bool{true}, 2}, {[]string{}, []bool{false}, 0}} {
		err := s.ScanSome(context.Background(), tc.cols, tc.skip, func(*Batch) error { return nil })
		want := fmt.Sprintf("%d skip flags for %d columns (give one per column)", len(tc.skip), tc.n)
		if err == nil || err.Error() != want {
			t.Errorf("ScanSome(%q, %v) returned %v; want %s", tc.cols, tc.skip, err, want)
		}
	}
}

// TestScanSomeParquetSkipsChunks overwrites the column chunks of one
// Parquet column with garbage: Scan must fail on them, and ScanSome that
// skips the column must not touch them and read the other column whole.
func TestScanSomeParquetSkipsChunks(t *testing.T) {
	mem := checkedMem(t)
	path := filepath.Join(t.TempDir(), "two.parquet")
	writeParquet(t, path, fixture{
		fields: []arrow.Field{
			{Name: "id", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
			{Name: "tag", Type: arrow.BinaryTypes.String, Nullable: true},
		},
		rows: func(b *array.RecordBuilder) {
			for i := range 300 {
				b.Field(0).(*array.Int64Builder).Append(int64(i))
				b.Field(1).(*array.StringBuilder).Append(fmt.Sprintf("tag %d", i%7))
			}
		},
	}, 100)
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		t.Fatal(err)
	}
	r, err := file.NewParquetReader(f)
	if err != nil {
		t.Fatal(err)
	}
	for g := range r.NumRowGroups() {
		cc, err := r.MetaData().RowGroup(g).ColumnChunk(1)
		if err != nil {
			t.Fatal(err)
		}
		start := cc.DataPageOffset()
		if cc.HasDictionaryPage() {
			start = min(start, cc.DictionaryPageOffset())
		}
		junk := bytes.Repeat([]byte{0xA5}, int(cc.TotalCompressedSize()))
		if _, err := f.WriteAt(junk, start); err != nil {
			t.Fatal(err)
		}
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}

	s, err := Open([]string{path}, Options{Allocator: mem, BatchRows: 64})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if err := s.Scan(context.Background(), nil, func(*Batch) error { return nil }); err == nil {
		t.Fatal("Scan read the damaged column without an error: the test damages nothing it reads")
	}
	var sum, rows int64
	err = s.ScanSome(context.Background(), nil, []bool{false, true}, func(b *Batch) error {
		ids := b.Record.Column(0).(*array.Int64)
		for i := range ids.Len() {
			if want := b.Row(i) - 1; ids.Value(i) != want {
				t.Fatalf("row %d: id %d; want %d", b.Row(i), ids.Value(i), want)
			}
			sum += ids.Value(i)
		}
		rows += b.Record.NumRows()
		return nil
	})
	if err != nil || rows != 300 || sum != 299*300/2 {
		t.Errorf("ScanSome skipping the damaged column: %d rows, sum %d, error %v; want 300 rows, sum %d, no error",
			rows, sum, err, 299*300/2)
	}
}
