package source

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// fixture is a small table to write as Parquet or Arrow.
type fixture struct {
	fields []arrow.Field
	rows   func(b *array.RecordBuilder) // appends the rows
}

func (fx fixture) record(t testing.TB) arrow.RecordBatch {
	t.Helper()
	b := array.NewRecordBuilder(memory.DefaultAllocator, arrow.NewSchema(fx.fields, nil))
	defer b.Release()
	fx.rows(b)
	return b.NewRecordBatch()
}

// writeParquet writes fx as Parquet with row groups of at most groupRows
// rows, storing its Arrow schema.
func writeParquet(t testing.TB, path string, fx fixture, groupRows int64) {
	t.Helper()
	rec := fx.record(t)
	defer rec.Release()
	writeRecord(t, path, rec, parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(groupRows)),
		pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema()))
}

// writeRecord writes rec as Parquet with the given properties.
func writeRecord(t testing.TB, path string, rec arrow.RecordBatch, props *parquet.WriterProperties, arrowProps pqarrow.ArrowWriterProperties) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(rec.Schema(), f, props, arrowProps)
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

// writeArrow writes fx as an Arrow IPC file, or stream, in batches of at
// most batchRows rows.
func writeArrow(t *testing.T, path string, fx fixture, stream bool, batchRows int64) {
	t.Helper()
	rec := fx.record(t)
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	type writer interface {
		Write(arrow.RecordBatch) error
		Close() error
	}
	var w writer
	if stream {
		w = ipc.NewWriter(f, ipc.WithSchema(rec.Schema()))
	} else if w, err = ipc.NewFileWriter(f, ipc.WithSchema(rec.Schema())); err != nil {
		t.Fatal(err)
	}
	for lo := int64(0); lo < rec.NumRows(); lo += batchRows {
		part := rec.NewSlice(lo, min(lo+batchRows, rec.NumRows()))
		err := w.Write(part)
		part.Release()
		if err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

// stored is a table with the stored types the readers meet: narrow and
// unsigned integers, float32, strings, booleans, timestamps in milli- and
// nanoseconds, dates, a list, and a dictionary of strings.
var stored = fixture{
	fields: []arrow.Field{
		{Name: "i32", Type: arrow.PrimitiveTypes.Int32, Nullable: true},
		{Name: "f32", Type: arrow.PrimitiveTypes.Float32, Nullable: true},
		{Name: "s", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "b", Type: arrow.FixedWidthTypes.Boolean, Nullable: true},
		{Name: "ms", Type: arrow.FixedWidthTypes.Timestamp_ms, Nullable: true},
		{Name: "ns", Type: &arrow.TimestampType{Unit: arrow.Nanosecond}, Nullable: true},
		{Name: "d", Type: arrow.FixedWidthTypes.Date32, Nullable: true},
		{Name: "u64", Type: arrow.PrimitiveTypes.Uint64, Nullable: true},
		{Name: "l", Type: arrow.ListOf(arrow.PrimitiveTypes.Int64), Nullable: true},
		{Name: "num", Type: arrow.BinaryTypes.String, Nullable: true},
	},
	rows: func(b *array.RecordBuilder) {
		b.Field(0).(*array.Int32Builder).AppendValues([]int32{1, -2, 3}, []bool{true, true, false})
		b.Field(1).(*array.Float32Builder).AppendValues([]float32{1.5, 2, 0.25}, nil)
		b.Field(2).(*array.StringBuilder).AppendValues([]string{"x", "", "z"}, []bool{true, true, false})
		b.Field(3).(*array.BooleanBuilder).AppendValues([]bool{true, false, true}, nil)
		b.Field(4).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{1704067200123, 0, -1}, nil)
		b.Field(5).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{1704067200123456789, -1, 5}, nil)
		b.Field(6).(*array.Date32Builder).AppendValues([]arrow.Date32{19723, 0, -1}, nil)
		b.Field(7).(*array.Uint64Builder).AppendValues([]uint64{1, 1 << 63, 7}, nil)
		lb := b.Field(8).(*array.ListBuilder)
		for _, n := range []int{2, 0, 1} {
			lb.Append(true)
			for k := range n {
				lb.ValueBuilder().(*array.Int64Builder).Append(int64(k + 1))
			}
		}
		b.Field(9).(*array.StringBuilder).AppendValues([]string{"1.5", "x", "-2e3"}, nil)
	},
}

// dict is a table with a dictionary-encoded string column, as Arrow files
// often store categories.
var dict = fixture{
	fields: []arrow.Field{
		{Name: "id", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		{Name: "cat", Type: &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}, Nullable: true},
	},
	rows: func(b *array.RecordBuilder) {
		b.Field(0).(*array.Int64Builder).AppendValues([]int64{1, 2, 3, 4}, nil)
		db := b.Field(1).(*array.BinaryDictionaryBuilder)
		for _, v := range []string{"red", "blue", "", "red"} {
			if v == "" {
				db.AppendNull()
			} else if err := db.AppendString(v); err != nil {
				panic(err)
			}
		}
	},
}

const storedRows = `batch source=0 first=1 rows=2
  row 1: i32=1 f32=1.5 s="x" b=true ms=2024-01-01T00:00:00.123Z ns=2024-01-01T00:00:00.123456789Z d=2024-01-01 u64=1 l=[1,2] num="1.5"
  row 2: i32=-2 f32=2 s="" b=false ms=1970-01-01T00:00:00Z ns=1969-12-31T23:59:59.999999999Z d=1970-01-01 u64=9223372036854775808 l=[] num="x"
batch source=0 first=3 rows=1
  row 3: i32=null f32=0.25 s=null b=true ms=1969-12-31T23:59:59.999Z ns=1970-01-01T00:00:00.000000005Z d=1969-12-31 u64=7 l=[1] num="-2e3"
`

func TestParquetAndArrow(t *testing.T) {
	mem := checkedMem(t)
	dir := t.TempDir()
	pq := filepath.Join(dir, "stored.parquet")
	writeParquet(t, pq, stored, 2)
	af := filepath.Join(dir, "stored.arrow")
	writeArrow(t, af, stored, false, 2)
	as := filepath.Join(dir, "stored.arrows")
	writeArrow(t, as, stored, true, 2)
	untyped := filepath.Join(dir, "stored.bin") // no telling extension: found by content
	writeArrow(t, untyped, stored, true, 2)

	// Stored types as read: lossless widenings only. The ns timestamps
	// render with their nanoseconds because they stay as stored.
	storedSchema := "schema: i32:integer f32:number s:string b:boolean ms:timestamp ns:timestamp[ns] d:date u64:uint64 l:list num:string\n"
	tests := []struct {
		name  string
		paths []string
		opts  Options
		cols  []string
		want  string
	}{{
		name:  "parquet",
		paths: []string{pq},
		opts:  Options{BatchRows: 2},
		want:  storedSchema + storedRows + "file stored.parquet parquet gzip=false rows=3\n",
	}, {
		name:  "arrow file",
		paths: []string{af},
		want:  storedSchema + storedRows + "file stored.arrow arrow-file gzip=false rows=3\n",
	}, {
		name:  "arrow stream",
		paths: []string{as},
		want:  storedSchema + storedRows + "file stored.arrows arrow-stream gzip=false rows=3\n",
	}, {
		name:  "arrow stream found by content",
		paths: []string{untyped},
		cols:  []string{"d"},
		want: storedSchema + `batch source=0 first=1 rows=2
  row 1: d=2024-01-01
  row 2: d=1970-01-01
batch source=0 first=3 rows=1
  row 3: d=1969-12-31
file stored.bin arrow-stream gzip=false rows=3
`,
	}, {
		name:  "parquet projection across a list and row groups",
		paths: []string{pq},
		cols:  []string{"num", "l", "i32"},
		want: storedSchema + `batch source=0 first=1 rows=3
  row 1: num="1.5" l=[1,2] i32=1
  row 2: num="x" l=[] i32=-2
  row 3: num="-2e3" l=[1] i32=null
file stored.parquet parquet gzip=false rows=3
`,
	}, {
		name:  "parquet with no columns",
		paths: []string{pq},
		cols:  []string{},
		opts:  Options{BatchRows: 2},
		want: storedSchema + `batch source=0 first=1 rows=2
  row 1:
  row 2:
batch source=0 first=3 rows=1
  row 3:
file stored.parquet parquet gzip=false rows=3
`,
	}}
	declared := map[string]arrow.DataType{"i32": tString, "f32": tInt64, "s": tBoolean, "b": tString, "ms": tDate,
		"ns": tTimestamp, "d": tTimestamp, "u64": tInt64, "num": tFloat64}
	declaredWant := `schema: i32:string f32:integer s:boolean b:string ms:date ns:timestamp d:timestamp u64:integer l:list num:number
batch source=0 first=1 rows=2
  row 1: i32="1" f32=!"1.5" s=!"x" b="true" ms=!"2024-01-01T00:00:00.123Z" ns=2024-01-01T00:00:00.123456Z d=2024-01-01T00:00:00Z u64=1 l=[1,2] num=1.5
  row 2: i32="-2" f32=2 s=!"" b="false" ms=1970-01-01 ns=1969-12-31T23:59:59.999999Z d=1970-01-01T00:00:00Z u64=!"9223372036854775808" l=[] num=!"x"
batch source=0 first=3 rows=1
  row 3: i32=null f32=!"0.25" s=null b="true" ms=!"1969-12-31T23:59:59.999Z" ns=1970-01-01T00:00:00Z d=1969-12-31T00:00:00Z u64=7 l=[1] num=-2000
`
	for _, p := range []string{pq, af, as} {
		tests = append(tests, struct {
			name  string
			paths []string
			opts  Options
			cols  []string
			want  string
		}{
			name:  "declared types over " + filepath.Ext(p),
			paths: []string{p},
			opts:  Options{Types: declared, BatchRows: 2},
			want:  declaredWant + "file " + filepath.Base(p) + " " + detectName(p) + " gzip=false rows=3\n",
		})
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tt.opts.Allocator = mem
			diff(t, openDump(t, tt.paths, tt.opts, tt.cols), tt.want)
		})
	}
}

func detectName(path string) string {
	switch filepath.Ext(path) {
	case ".parquet":
		return "parquet"
	case ".arrow":
		return "arrow-file"
	}
	return "arrow-stream"
}

// mixedFiles writes a.csv, b.parquet and c.arrow, all of the columns id and
// cat, into dir.
func mixedFiles(t *testing.T, dir string) []string {
	t.Helper()
	paths := writeFiles(t, dir, []inFile{{"a.csv", "id,cat\n1,red\n\"2\",blue\n"}})
	pq := filepath.Join(dir, "b.parquet")
	writeParquet(t, pq, fixture{
		fields: []arrow.Field{
			{Name: "cat", Type: arrow.BinaryTypes.LargeString, Nullable: true},
			{Name: "id", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		},
		rows: func(b *array.RecordBuilder) {
			b.Field(0).(*array.LargeStringBuilder).AppendValues([]string{"green"}, nil)
			b.Field(1).(*array.Float64Builder).AppendValues([]float64{3.5}, nil)
		},
	}, 10)
	af := filepath.Join(dir, "c.arrow")
	writeArrow(t, af, dict, false, 3)
	return append(paths, pq, af)
}

// TestMixedFormats reads CSV, Parquet and an Arrow file with a dictionary
// column as one table: row numbers run on, the Parquet float column widens
// the CSV integers, and lines are known only for the CSV rows.
func TestMixedFormats(t *testing.T) {
	mem := checkedMem(t)
	paths := mixedFiles(t, t.TempDir())
	diff(t, openDump(t, paths, Options{Allocator: mem}, nil), `schema: id:number cat:string
batch source=0 first=1 rows=2
  row 1 line 2: id=1 cat="red"
  row 2 line 3: id=2 cat="blue"
batch source=1 first=3 rows=1
  row 3: id=3.5 cat="green"
batch source=2 first=4 rows=3
  row 4: id=1 cat="red"
  row 5: id=2 cat="blue"
  row 6: id=3 cat=null
batch source=2 first=7 rows=1
  row 7: id=4 cat="red"
file a.csv csv gzip=false rows=2
file b.parquet parquet gzip=false rows=1
file c.arrow arrow-file gzip=false rows=4
`)
}
