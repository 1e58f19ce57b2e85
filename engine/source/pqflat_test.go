package source

import (
	"bytes"
	"context"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// flatFixture is a table of every flat column type, required and optional,
// with nulls, empty and repeated strings, and n rows drawn from a seeded
// source.
func flatFixture(n int) fixture {
	opt := func(name string, t arrow.DataType) arrow.Field {
		return arrow.Field{Name: name, Type: t, Nullable: true}
	}
	req := func(name string, t arrow.DataType) arrow.Field { return arrow.Field{Name: name, Type: t} }
	return fixture{
		fields: []arrow.Field{
			opt("i32", arrow.PrimitiveTypes.Int32), req("i64", arrow.PrimitiveTypes.Int64),
			opt("f32", arrow.PrimitiveTypes.Float32), req("f64", arrow.PrimitiveTypes.Float64),
			opt("f64n", arrow.PrimitiveTypes.Float64), opt("b", arrow.FixedWidthTypes.Boolean),
			req("breq", arrow.FixedWidthTypes.Boolean), opt("s", arrow.BinaryTypes.String),
			req("sreq", arrow.BinaryTypes.String), opt("bin", arrow.BinaryTypes.Binary),
			opt("ts", arrow.FixedWidthTypes.Timestamp_us), opt("ms", arrow.FixedWidthTypes.Timestamp_ms),
			opt("d", arrow.FixedWidthTypes.Date32),
		},
		rows: func(b *array.RecordBuilder) {
			rng := rand.New(rand.NewPCG(3, 5))
			null := func(f array.Builder, p int) bool {
				if rng.IntN(100) < p {
					f.AppendNull()
					return true
				}
				return false
			}
			words := []string{"", "a", "queen", "a much longer piece of text than the others", "ü"}
			for i := range n {
				if !null(b.Field(0), 10) {
					b.Field(0).(*array.Int32Builder).Append(int32(rng.IntN(1000) - 500))
				}
				b.Field(1).(*array.Int64Builder).Append(int64(i) * 7919)
				if !null(b.Field(2), 30) {
					b.Field(2).(*array.Float32Builder).Append(rng.Float32())
				}
				b.Field(3).(*array.Float64Builder).Append(rng.NormFloat64())
				if !null(b.Field(4), 97) {
					b.Field(4).(*array.Float64Builder).Append(float64(rng.IntN(3)))
				}
				if !null(b.Field(5), 20) {
					b.Field(5).(*array.BooleanBuilder).Append(rng.IntN(2) == 0)
				}
				b.Field(6).(*array.BooleanBuilder).Append(i%3 == 0)
				if !null(b.Field(7), 15) {
					b.Field(7).(*array.StringBuilder).Append(words[rng.IntN(len(words))])
				}
				b.Field(8).(*array.StringBuilder).Append(fmt.Sprintf("row %d", i))
				if !null(b.Field(9), 50) {
					b.Field(9).(*array.BinaryBuilder).Append([]byte{byte(i), 0, byte(i >> 8)})
				}
				if !null(b.Field(10), 5) {
					b.Field(10).(*array.TimestampBuilder).Append(arrow.Timestamp(1_700_000_000_000_000 + int64(i)*1_000_003))
				}
				if !null(b.Field(11), 5) {
					b.Field(11).(*array.TimestampBuilder).Append(arrow.Timestamp(-int64(i) * 1009))
				}
				if !null(b.Field(12), 5) {
					b.Field(12).(*array.Date32Builder).Append(arrow.Date32(19000 + i%400))
				}
			}
		},
	}
}

// TestFlatColumn reads each column of files written with several layouts
// (row groups, page sizes, dictionary or plain encoding) with flatColumn in
// batches of several sizes, and checks every batch against the same rows
// as pqarrow reads them.
func TestFlatColumn(t *testing.T) {
	const rows = 3000
	fx := flatFixture(rows)
	rec := fx.record(t)
	defer rec.Release()
	layouts := []struct {
		name  string
		props []parquet.WriterProperty
	}{
		{"one group", nil},
		{"groups of 777, small pages", []parquet.WriterProperty{parquet.WithMaxRowGroupLength(777), parquet.WithDataPageSize(512)}},
		{"plain, groups of 1000", []parquet.WriterProperty{parquet.WithMaxRowGroupLength(1000), parquet.WithDictionaryDefault(false)}},
		{"data page v2", []parquet.WriterProperty{parquet.WithMaxRowGroupLength(1200), parquet.WithDataPageVersion(parquet.DataPageV2), parquet.WithDataPageSize(2048)}},
	}
	for _, lay := range layouts {
		path := filepath.Join(t.TempDir(), "flat.parquet")
		writeRecord(t, path, rec, parquet.NewWriterProperties(lay.props...), pqarrow.DefaultWriterProps())
		for _, batch := range []int{rows, 1000, 333, 1} {
			t.Run(fmt.Sprintf("%s/batch=%d", lay.name, batch), func(t *testing.T) {
				checkFlat(t, path, rec, batch)
			})
		}
	}
}

// checkFlat reads every column of path with flatColumn in batches of
// batch rows and compares them with want.
func checkFlat(t *testing.T, path string, want arrow.RecordBatch, batch int) {
	t.Helper()
	mem := checkedMem(t)
	r, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	fr, err := pqarrow.NewFileReader(r, pqarrow.ArrowReadProperties{}, mem)
	if err != nil {
		t.Fatal(err)
	}
	for c, field := range fr.Manifest.Fields {
		typ := want.Schema().Field(c).Type
		fc := newFlatColumn(r, field.ColIndex, field.Field.Type, mem, mem)
		if fc == nil {
			t.Fatalf("column %s (%s) is not read as flat", field.Field.Name, typ)
		}
		if !arrow.TypeEqual(field.Field.Type, typ) {
			t.Fatalf("column %s: pqarrow maps it to %s; the fixture has %s", field.Field.Name, field.Field.Type, typ)
		}
		for lo := 0; lo < int(want.NumRows()); lo += batch {
			n := min(batch, int(want.NumRows())-lo)
			got, codes, err := fc.read(n)
			if err != nil {
				t.Fatalf("column %s, rows %d-%d: %v", field.Field.Name, lo, lo+n, err)
			}
			exp := array.NewSlice(want.Column(c), int64(lo), int64(lo+n))
			if !array.Equal(got, exp) || got.NullN() != exp.NullN() {
				t.Errorf("column %s, rows %d-%d:\n got %v\nwant %v", field.Field.Name, lo, lo+n, got, exp)
			}
			if s, ok := got.(*array.String); ok {
				checkText(t, fmt.Sprintf("column %s, rows %d-%d", field.Field.Name, lo, lo+n), s, exp.(*array.String), codes)
			} else if codes != nil {
				t.Errorf("column %s (%s) has codes", field.Field.Name, typ)
			}
			got.Release()
			exp.Release()
			if codes != nil {
				codes.Release()
			}
		}
		if _, _, err := fc.read(1); err == nil {
			t.Errorf("column %s: a read past the last row succeeded", field.Field.Name)
		}
		fc.close()
	}
}

// checkText checks that got holds the texts of want byte for byte (the
// same offsets from the first, the same bytes, the same validity), and
// that codes, unless nil, has got's nulls and decodes to got's values.
func checkText(t *testing.T, what string, got, want *array.String, codes *array.Dictionary) {
	t.Helper()
	n := got.Len()
	goff, woff := got.ValueOffsets(), want.ValueOffsets()
	for i := range n + 1 {
		if goff[i]-goff[0] != woff[i]-woff[0] {
			t.Fatalf("%s: offset %d is %d; want %d", what, i, goff[i]-goff[0], woff[i]-woff[0])
		}
	}
	if !bytes.Equal(got.ValueBytes(), want.ValueBytes()) {
		t.Fatalf("%s: the text bytes differ", what)
	}
	for i := range n {
		if got.IsNull(i) != want.IsNull(i) {
			t.Fatalf("%s: row %d null %v; want %v", what, i, got.IsNull(i), want.IsNull(i))
		}
	}
	if codes == nil {
		return
	}
	if codes.Len() != n || codes.NullN() != got.NullN() {
		t.Fatalf("%s: %d codes with %d nulls for %d rows with %d", what, codes.Len(), codes.NullN(), n, got.NullN())
	}
	idx := codes.Indices().(*array.Int32)
	dict := codes.Dictionary().(*array.String)
	for i := range n {
		if codes.IsNull(i) != got.IsNull(i) {
			t.Fatalf("%s: code %d null %v; the row %v", what, i, codes.IsNull(i), got.IsNull(i))
		}
		if !got.IsNull(i) && dict.Value(int(idx.Value(i))) != got.Value(i) {
			t.Fatalf("%s: code %d is %q; the row %q", what, i, dict.Value(int(idx.Value(i))), got.Value(i))
		}
	}
}

// textFixture is a table of string columns for the codes of dictionary
// pages: req (required, 37 values of 0 to 40 bytes), opt (optional, a
// quarter null, short values), code (required, 300 values of 6 bytes, as
// codes are), uniq (required, a value a row, to outgrow a
// dictionary, so that the writer falls back to plain pages: at once, in
// one page, or after pages of indices when pages are small) and bin (binary, which gets no codes).
func textFixture(n int) fixture {
	return fixture{
		fields: []arrow.Field{
			{Name: "req", Type: arrow.BinaryTypes.String},
			{Name: "opt", Type: arrow.BinaryTypes.String, Nullable: true},
			{Name: "uniq", Type: arrow.BinaryTypes.String},
			{Name: "bin", Type: arrow.BinaryTypes.Binary, Nullable: true},
			{Name: "code", Type: arrow.BinaryTypes.String},
		},
		rows: func(b *array.RecordBuilder) {
			rng := rand.New(rand.NewPCG(7, 11))
			words := make([]string, 37)
			for i := range words {
				words[i] = strings.Repeat(string(rune('a'+i%26)), (i*7)%41)
			}
			for i := range n {
				b.Field(0).(*array.StringBuilder).Append(words[rng.IntN(len(words))])
				if rng.IntN(4) == 0 {
					b.Field(1).AppendNull()
				} else {
					b.Field(1).(*array.StringBuilder).Append([]string{"x", "yy", "site-7", ""}[rng.IntN(4)])
				}
				b.Field(2).(*array.StringBuilder).Append(fmt.Sprintf("value %d", i))
				if rng.IntN(3) == 0 {
					b.Field(3).AppendNull()
				} else {
					b.Field(3).(*array.BinaryBuilder).Append([]byte{byte(rng.IntN(5)), 0})
				}
				b.Field(4).(*array.StringBuilder).Append(fmt.Sprintf("D-%04d", rng.IntN(300)))
			}
		},
	}
}

// TestFlatTextCodes reads the string columns of files written with and
// without dictionaries, with nulls, with a dictionary that overflows into
// plain pages and with row groups that batches cross, and checks that every
// batch's texts are those written, byte for byte, and that its codes, where
// it has them, decode to them: a batch has codes exactly when its column is
// a dictionary-encoded string column and its rows lie in one row group
// (and, where the writer fell back to plain pages, only in that group's
// dictionary pages, so that file must give some batches codes and some
// none).
func TestFlatTextCodes(t *testing.T) {
	const rows = 5000
	rec := textFixture(rows).record(t)
	defer rec.Release()
	tests := []struct {
		name  string
		props []parquet.WriterProperty
		group int    // rows per row group
		batch int    // rows per batch
		codes string // which batches of req and opt get codes: "all", "in groups" or "some"
	}{
		{"dictionary, one group", nil, rows, 1024, "all"},
		{"dictionary, batch of one", nil, rows, 1, "all"},
		{"dictionary, groups crossed", nil, 777, 500, "in groups"},
		{"dictionary, groups and batches equal", nil, 1000, 1000, "all"},
		{"dictionary, small pages", []parquet.WriterProperty{parquet.WithDataPageSize(300)}, 2000, 333, "in groups"},
		{"dictionary, page v2", []parquet.WriterProperty{parquet.WithDataPageVersion(parquet.DataPageV2), parquet.WithDataPageSize(1000)}, 1200, 700, "in groups"},
		{"plain", []parquet.WriterProperty{parquet.WithDictionaryDefault(false)}, 1500, 1024, "none"},
		{"dictionary falls back to plain", []parquet.WriterProperty{parquet.WithDictionaryPageSizeLimit(2000), parquet.WithDataPageSize(500)}, rows, 256, "some"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			props := append([]parquet.WriterProperty{parquet.WithMaxRowGroupLength(int64(tc.group))}, tc.props...)
			path := filepath.Join(t.TempDir(), "text.parquet")
			writeRecord(t, path, rec, parquet.NewWriterProperties(props...), pqarrow.DefaultWriterProps())
			mem := checkedMem(t)
			r, err := file.OpenParquetFile(path, false)
			if err != nil {
				t.Fatal(err)
			}
			defer r.Close()
			for c := range int(rec.NumCols()) {
				name := rec.Schema().Field(c).Name
				fc := newFlatColumn(r, c, rec.Schema().Field(c).Type, mem, mem)
				with, without := 0, 0
				for lo := 0; lo < rows; lo += tc.batch {
					n := min(tc.batch, rows-lo)
					got, codes, err := fc.read(n)
					if err != nil {
						t.Fatalf("column %s, rows %d-%d: %v", name, lo, lo+n, err)
					}
					exp := array.NewSlice(rec.Column(c), int64(lo), int64(lo+n))
					what := fmt.Sprintf("column %s, rows %d-%d", name, lo, lo+n)
					if s, ok := got.(*array.String); ok {
						checkText(t, what, s, exp.(*array.String), codes)
					} else if !array.Equal(got, exp) {
						t.Errorf("%s:\n got %v\nwant %v", what, got, exp)
					}
					inGroup := lo/tc.group == (lo+n-1)/tc.group
					want := false
					switch {
					case name == "bin" || tc.codes == "none":
					case name == "uniq" || tc.codes == "some": // the writer may fall back to plain pages
						want = codes != nil && inGroup
					case tc.codes == "all", tc.codes == "in groups":
						want = inGroup
					}
					if (codes != nil) != want {
						t.Errorf("%s: codes %v; want them %v", what, codes != nil, want)
					}
					if codes != nil {
						with++
						codes.Release()
					} else {
						without++
					}
					got.Release()
					exp.Release()
				}
				fc.close()
				if tc.codes == "some" && name == "uniq" && (with == 0 || without == 0) {
					t.Errorf("column uniq: %d batches with codes and %d without; want some of each", with, without)
				}
			}
		})
	}
}

// TestFlatCodesShareDictionary checks that the batches of one column chunk
// give their codes one dictionary, the same object, which lives as long as
// a batch's codes hold it.
func TestFlatCodesShareDictionary(t *testing.T) {
	rec := textFixture(3000).record(t)
	defer rec.Release()
	path := filepath.Join(t.TempDir(), "text.parquet")
	writeRecord(t, path, rec, parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(2000)), pqarrow.DefaultWriterProps())
	mem := checkedMem(t)
	r, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	fc := newFlatColumn(r, 0, arrow.BinaryTypes.String, mem, mem)
	defer fc.close()
	type part struct {
		got   arrow.Array
		codes *array.Dictionary
	}
	var parts []part
	for range 3 { // rows 0-1999 of the first group in two batches, then 2000-2999
		got, codes, err := fc.read(1000)
		if err != nil || codes == nil {
			t.Fatalf("read: codes %v, error %v; want codes", codes, err)
		}
		parts = append(parts, part{got, codes})
	}
	d := func(i int) arrow.ArrayData { return parts[i].codes.Dictionary().Data() }
	if d(0) != d(1) || d(1) == d(2) {
		t.Errorf("dictionaries %p %p %p; want the first two the same, the third another", d(0), d(1), d(2))
	}
	fc.close()
	// The chunks are closed; the codes must still decode.
	for i, p := range parts {
		exp := array.NewSlice(rec.Column(0), int64(i*1000), int64(i*1000+1000))
		checkText(t, fmt.Sprintf("batch %d", i), p.got.(*array.String), exp.(*array.String), p.codes)
		exp.Release()
		p.got.Release()
		p.codes.Release()
	}
}

// TestFlatScanMatchesArrow scans a file through a Set, where flat columns
// go through flatColumn and a list column through pqarrow in the same
// batches, and checks the rows against the record written.
func TestFlatScanMatchesArrow(t *testing.T) {
	mem := checkedMem(t)
	fx := flatFixture(2500)
	fx.fields = append(fx.fields, arrow.Field{Name: "l", Type: arrow.ListOf(arrow.PrimitiveTypes.Int64), Nullable: true})
	base := fx.rows
	fx.rows = func(b *array.RecordBuilder) {
		base(b)
		lb := b.Field(len(fx.fields) - 1).(*array.ListBuilder)
		for i := range 2500 {
			lb.Append(true)
			for k := range i % 3 {
				lb.ValueBuilder().(*array.Int64Builder).Append(int64(i + k))
			}
		}
	}
	rec := fx.record(t)
	defer rec.Release()
	path := filepath.Join(t.TempDir(), "mixed.parquet")
	writeParquet(t, path, fx, 900)
	s, err := Open([]string{path}, Options{Allocator: mem, BatchRows: 1024})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	cols := []string{"l", "s", "i64", "b", "bin"}
	next := int64(1)
	err = s.Scan(context.Background(), cols, func(b *Batch) error {
		if b.FirstRow != next {
			t.Errorf("batch starts at row %d; want %d", b.FirstRow, next)
		}
		n := b.Record.NumRows()
		for k, name := range cols {
			c := rec.Schema().FieldIndices(name)[0]
			exp := array.NewSlice(rec.Column(c), b.FirstRow-1, b.FirstRow-1+n)
			if got := b.Record.Column(k); !arrow.TypeEqual(got.DataType(), exp.DataType()) || !array.Equal(got, exp) {
				t.Errorf("column %s, rows from %d:\n got %v\nwant %v", name, b.FirstRow, got, exp)
			}
			exp.Release()
		}
		next += n
		return nil
	})
	if err != nil || next != 2501 {
		t.Errorf("scan ended at row %d with %v; want 2501 rows and no error", next, err)
	}
}

// TestSpread checks the in-place spreading of dense values to the rows
// their definition levels define, and its refusal of levels that define
// another number of rows than the values read.
func TestSpread(t *testing.T) {
	tests := []struct {
		name    string
		dense   []int64 // values read, densely
		defs    []int16
		want    []int64 // by row; nulls 0
		valid   string  // validity bits of the rows
		wantErr bool
	}{
		{"all defined", []int64{1, 2, 3}, []int16{1, 1, 1}, []int64{1, 2, 3}, "111", false},
		{"nulls around", []int64{4, 5}, []int16{0, 1, 0, 1, 0}, []int64{0, 4, 0, 5, 0}, "01010", false},
		{"all null", nil, []int16{0, 0}, []int64{0, 0}, "00", false},
		{"too few values", []int64{7}, []int16{1, 1}, nil, "", true},
		{"too many values", []int64{7, 8}, []int16{1, 0}, nil, "", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			vals := make([]int64, len(tc.defs))
			for i := range vals {
				vals[i] = -1 // what the rows held before
			}
			copy(vals, tc.dense)
			bits := make([]byte, 2)
			nulls, err := spread(vals, len(tc.dense), tc.defs, bits, 3)
			if (err != nil) != tc.wantErr {
				t.Fatalf("error %v; want an error: %v", err, tc.wantErr)
			}
			if tc.wantErr {
				return
			}
			valid := ""
			for i := range tc.defs {
				valid += map[bool]string{true: "1", false: "0"}[bitutil.BitIsSet(bits, 3+i)]
			}
			if !slices.Equal(vals, tc.want) || valid != tc.valid || nulls != len(tc.defs)-len(tc.dense) {
				t.Errorf("values %v, validity %s, %d nulls; want %v, %s, %d",
					vals, valid, nulls, tc.want, tc.valid, len(tc.defs)-len(tc.dense))
			}
		})
	}
}

// TestParquetLargePages reads, through a Set, a file whose pages and
// column chunks are larger than the 1 MiB read buffer of the Parquet
// stream: long strings, plain encoding, 8 MiB pages.
func TestParquetLargePages(t *testing.T) {
	mem := checkedMem(t)
	fx := fixture{
		fields: []arrow.Field{
			{Name: "s", Type: arrow.BinaryTypes.String, Nullable: true},
			{Name: "v", Type: arrow.PrimitiveTypes.Float64},
		},
		rows: func(b *array.RecordBuilder) {
			for i := range 400_000 {
				if i%11 == 0 {
					b.Field(0).AppendNull()
				} else {
					b.Field(0).(*array.StringBuilder).Append(fmt.Sprintf("value number %d of a long column", i))
				}
				b.Field(1).(*array.Float64Builder).Append(float64(i) / 8)
			}
		},
	}
	rec := fx.record(t)
	defer rec.Release()
	path := filepath.Join(t.TempDir(), "large.parquet")
	writeRecord(t, path, rec, parquet.NewWriterProperties(parquet.WithDictionaryDefault(false),
		parquet.WithDataPageSize(8<<20), parquet.WithMaxRowGroupLength(300_000)), pqarrow.DefaultWriterProps())
	s, err := Open([]string{path}, Options{Allocator: mem, BatchRows: 70_000})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var rows int64
	err = s.Scan(context.Background(), nil, func(b *Batch) error {
		for c := range int(rec.NumCols()) {
			exp := array.NewSlice(rec.Column(c), b.FirstRow-1, b.FirstRow-1+b.Record.NumRows())
			if !array.Equal(b.Record.Column(c), exp) {
				t.Errorf("column %d differs in the batch from row %d", c, b.FirstRow)
			}
			exp.Release()
		}
		rows += b.Record.NumRows()
		return nil
	})
	if err != nil || rows != rec.NumRows() {
		t.Errorf("scan read %d rows with %v; want %d and no error", rows, err, rec.NumRows())
	}
}
