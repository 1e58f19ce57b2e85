package gate

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/assay-project/assay/engine/source"
)

func checkedMem(t *testing.T) *memory.CheckedAllocator {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	t.Cleanup(func() { mem.AssertSize(t, 0) })
	return mem
}

// typedBatch is three rows of every type a policy declares, with a missing
// value and a cell that did not parse.
func typedBatch(t *testing.T, mem memory.Allocator, first int64) *source.Batch {
	t.Helper()
	tsType := &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "i", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		{Name: "f", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "b", Type: arrow.FixedWidthTypes.Boolean, Nullable: true},
		{Name: "ts", Type: tsType, Nullable: true},
		{Name: "d", Type: arrow.FixedWidthTypes.Date32, Nullable: true},
		{Name: "s", Type: arrow.BinaryTypes.String, Nullable: true},
	}, nil)
	bld := array.NewRecordBuilder(mem, schema)
	defer bld.Release()
	bld.Field(0).(*array.Int64Builder).AppendValues([]int64{-7, 0, 1 << 62}, nil)
	bld.Field(1).(*array.Float64Builder).AppendValues([]float64{0.1, 1e21, math.NaN()}, []bool{true, true, true})
	bld.Field(2).(*array.BooleanBuilder).AppendValues([]bool{true, false, false}, []bool{true, true, false})
	bld.Field(3).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{1748869200123456, 0, 0}, []bool{true, true, false})
	bld.Field(4).(*array.Date32Builder).AppendValues([]arrow.Date32{20241, 0, 0}, []bool{true, false, true})
	bld.Field(5).(*array.StringBuilder).AppendValues([]string{"a,b", "say \"hi\"", "line\nbreak"}, nil)
	return &source.Batch{
		Record:   bld.NewRecordBatch(),
		FirstRow: first,
		Invalid:  map[int][]source.InvalidCell{4: {{Row: 1, Text: "2024-13-01"}}},
	}
}

// TestTypedCSV checks how typed values are written as CSV text, and the
// split and the rule column.
func TestTypedCSV(t *testing.T) {
	mem := checkedMem(t)
	b := typedBatch(t, mem, 1)
	defer b.Release()
	var acc, rej bytes.Buffer
	w := New(&Output{W: &acc, Format: CSV}, &Output{W: &rej, Format: CSV}, mem)
	if err := w.Begin(b.Record.Schema()); err != nil {
		t.Fatal(err)
	}
	if err := w.Rows(b, [][]string{nil, {"columns.d.type"}, {"columns.f.maximum", "table.key"}}); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	wantAcc := "i,f,b,ts,d,s\n" +
		"-7,0.1,true,2025-06-02T13:00:00.123456Z,2025-06-02,\"a,b\"\n"
	wantRej := "i,f,b,ts,d,s,assay_broken\n" +
		"0,1e+21,false,1970-01-01T00:00:00Z,2024-13-01,\"say \"\"hi\"\"\",columns.d.type\n" +
		"4611686018427387904,NaN,,,1970-01-01,\"line\nbreak\",columns.f.maximum;table.key\n"
	if acc.String() != wantAcc {
		t.Errorf("accepted\n got %q\nwant %q", acc.String(), wantAcc)
	}
	if rej.String() != wantRej {
		t.Errorf("rejected\n got %q\nwant %q", rej.String(), wantRej)
	}
	if w.Accepted != 1 || w.Rejected != 2 {
		t.Errorf("counted %d accepted, %d rejected, want 1 and 2", w.Accepted, w.Rejected)
	}
}

// TestTextCSV checks that cells kept as written (Batch.Text) are written
// as they were, whatever the typed values say.
func TestTextCSV(t *testing.T) {
	mem := checkedMem(t)
	dir := t.TempDir()
	path := dir + "/in.csv"
	data := "x,note\n29.0,\"a \"\"quoted\"\" note\"\nNA,\nabc,\"two\nlines\"\n+1e2,plain\n"
	writeFile(t, path, data)
	set, err := source.Open([]string{path}, source.Options{Allocator: mem, Types: map[string]arrow.DataType{"x": arrow.PrimitiveTypes.Float64}})
	if err != nil {
		t.Fatal(err)
	}
	defer set.Close()
	var acc, rej bytes.Buffer
	w := New(&Output{W: &acc, Format: CSV}, &Output{W: &rej, Format: CSV}, mem)
	if err := w.Begin(set.Schema()); err != nil {
		t.Fatal(err)
	}
	err = set.ScanText(context.Background(), nil, func(b *source.Batch) error {
		return w.Rows(b, [][]string{nil, {"columns.x.nulls"}, {"columns.x.type"}, nil})
	})
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	wantAcc := "x,note\n29.0,\"a \"\"quoted\"\" note\"\n+1e2,plain\n"
	wantRej := "x,note,assay_broken\nNA,,columns.x.nulls\nabc,\"two\nlines\",columns.x.type\n"
	if acc.String() != wantAcc || rej.String() != wantRej {
		t.Errorf("accepted %q\nwant     %q\nrejected %q\nwant     %q", acc.String(), wantAcc, rej.String(), wantRej)
	}
}

// TestParquet writes both halves as Parquet, reads them back and compares
// every value with the input.
func TestParquet(t *testing.T) {
	mem := checkedMem(t)
	b1 := typedBatch(t, mem, 1)
	defer b1.Release()
	b2 := typedBatch(t, mem, 4)
	defer b2.Release()
	var acc, rej bytes.Buffer
	w := New(&Output{W: &acc, Format: Parquet}, &Output{W: &rej, Format: Parquet}, mem)
	if err := w.Begin(b1.Record.Schema()); err != nil {
		t.Fatal(err)
	}
	if err := w.Rows(b1, [][]string{nil, {"r1"}, nil}); err != nil {
		t.Fatal(err)
	}
	if err := w.Rows(b2, [][]string{{"r2", "r3"}, {"r1"}, {"r4"}}); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	// Rows 1 and 3 of b1 accepted; row 2 of b1 and all of b2 rejected.
	gotAcc := readParquet(t, acc.Bytes(), mem)
	gotRej := readParquet(t, rej.Bytes(), mem)
	wantAcc := []string{rowText(b1, 0), rowText(b1, 2)}
	wantRej := []string{rowText(b1, 1) + "|r1", rowText(b2, 0) + "|r2;r3", rowText(b2, 1) + "|r1", rowText(b2, 2) + "|r4"}
	if strings.Join(gotAcc, "\n") != strings.Join(wantAcc, "\n") {
		t.Errorf("accepted\n%s\nwant\n%s", strings.Join(gotAcc, "\n"), strings.Join(wantAcc, "\n"))
	}
	if strings.Join(gotRej, "\n") != strings.Join(wantRej, "\n") {
		t.Errorf("rejected\n%s\nwant\n%s", strings.Join(gotRej, "\n"), strings.Join(wantRej, "\n"))
	}
}

// rowText writes row i of b's record, one ValueStr per column.
func rowText(b *source.Batch, i int) string {
	var cells []string
	for _, c := range b.Record.Columns() {
		cells = append(cells, c.ValueStr(i))
	}
	return strings.Join(cells, "|")
}

// readParquet reads a Parquet file and returns its rows as rowText does.
func readParquet(t *testing.T, data []byte, mem memory.Allocator) []string {
	t.Helper()
	r, err := file.NewParquetReader(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	fr, err := pqarrow.NewFileReader(r, pqarrow.ArrowReadProperties{}, mem)
	if err != nil {
		t.Fatal(err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	tr := array.NewTableReader(tbl, 1<<20)
	defer tr.Release()
	var rows []string
	for tr.Next() {
		rec := tr.RecordBatch()
		b := &source.Batch{Record: rec}
		for i := range int(rec.NumRows()) {
			rows = append(rows, rowText(b, i))
		}
	}
	return rows
}

func TestTake(t *testing.T) {
	mem := checkedMem(t)
	bld := array.NewInt64Builder(mem)
	bld.AppendValues([]int64{0, 1, 2, 3, 4, 5, 6}, []bool{true, true, false, true, true, true, true})
	arr := bld.NewArray()
	bld.Release()
	defer arr.Release()
	tests := []struct {
		sel  []int
		want string
	}{
		{[]int{0, 1, 2, 3, 4, 5, 6}, "[0 1 (null) 3 4 5 6]"},
		{[]int{2}, "[(null)]"},
		{[]int{0, 1, 2}, "[0 1 (null)]"},
		{[]int{0, 2, 3, 6}, "[0 (null) 3 6]"},
		{[]int{1, 3, 5}, "[1 3 5]"},
		{[]int{}, "[]"},
	}
	for _, tt := range tests {
		got, err := take(arr, tt.sel, mem)
		if err != nil {
			t.Fatalf("take(%v): %v", tt.sel, err)
		}
		if s := fmt.Sprint(got); s != tt.want {
			t.Errorf("take(%v) = %s, want %s", tt.sel, s, tt.want)
		}
		got.Release()
	}
}

func TestFormatOf(t *testing.T) {
	tests := []struct {
		path string
		want Format
		ok   bool
	}{
		{"out/accepted.csv", CSV, true},
		{"REJECTED.CSV", CSV, true},
		{"a.parquet", Parquet, true},
		{"a.pq", Parquet, true},
		{"a.csv.gz", 0, false},
		{"a.txt", 0, false},
		{"noext", 0, false},
	}
	for _, tt := range tests {
		got, err := FormatOf(tt.path)
		if (err == nil) != tt.ok || tt.ok && got != tt.want {
			t.Errorf("FormatOf(%q) = %v, %v; want %v, ok %v", tt.path, got, err, tt.want, tt.ok)
		}
		if err != nil && !strings.Contains(err.Error(), tt.path) {
			t.Errorf("FormatOf(%q): error %q does not name the file", tt.path, err)
		}
	}
}

// TestBrokenColumnTaken checks that data with a column named like the one
// the rejected file adds is refused, and accepted alone is fine.
func TestBrokenColumnTaken(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{{Name: BrokenColumn, Type: arrow.BinaryTypes.String}}, nil)
	var buf bytes.Buffer
	err := New(nil, &Output{W: &buf, Format: CSV}, nil).Begin(schema)
	if err == nil || !strings.Contains(err.Error(), BrokenColumn) {
		t.Errorf("Begin with a column %s: %v", BrokenColumn, err)
	}
	if err := New(&Output{W: &buf, Format: CSV}, nil, nil).Begin(schema); err != nil {
		t.Errorf("accepted only: %v", err)
	}
}

func writeFile(t *testing.T, path, data string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestParquetUnparsed checks that an accepted row with a cell that did not
// parse is refused for Parquet (it would turn into null), while CSV keeps
// its text and a rejected Parquet row is written.
func TestParquetUnparsed(t *testing.T) {
	mem := checkedMem(t)
	b := typedBatch(t, mem, 10) // row 1 (data row 11) has an unparsed date
	defer b.Release()
	tests := []struct {
		name   string
		acc    Format
		broken [][]string
		want   string // in the error; "" for none
	}{
		{"accepted parquet", Parquet, [][]string{nil, nil, nil}, `row 11, column "d": the cell "2024-13-01" is not date32`},
		{"rejected parquet", Parquet, [][]string{nil, {"columns.d.type"}, nil}, ""},
		{"accepted csv", CSV, [][]string{nil, nil, nil}, ""},
	}
	for _, tt := range tests {
		var acc, rej bytes.Buffer
		w := New(&Output{W: &acc, Format: tt.acc}, &Output{W: &rej, Format: Parquet}, mem)
		if err := w.Begin(b.Record.Schema()); err != nil {
			t.Fatal(err)
		}
		err := w.Rows(b, tt.broken)
		if cerr := w.Close(); err == nil {
			err = cerr
		}
		if tt.want == "" && err != nil || tt.want != "" && (err == nil || !strings.Contains(err.Error(), tt.want)) {
			t.Errorf("%s: error %v, want %q", tt.name, err, tt.want)
		}
	}
}
