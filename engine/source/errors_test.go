package source

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// oneColumn is a Parquet or Arrow table with one column x of type typ.
func oneColumn(typ arrow.DataType) fixture {
	return fixture{
		fields: []arrow.Field{{Name: "x", Type: typ, Nullable: true}},
		rows: func(b *array.RecordBuilder) {
			for range 100 {
				switch bb := b.Field(0).(type) {
				case *array.Int64Builder:
					bb.Append(1)
				case *array.StringBuilder:
					bb.Append("a string long enough to make the file worth cutting")
				case *array.BooleanBuilder:
					bb.Append(true)
				}
			}
		},
	}
}

// truncate cuts n bytes off the end of the file at path.
func truncate(t *testing.T, path string, n int64) {
	t.Helper()
	fi, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.Truncate(path, fi.Size()-n); err != nil {
		t.Fatal(err)
	}
}

// TestErrors checks that every kind of bad input gives a *Error that
// names the file, the line, row and column where they apply, and says what
// to do. The messages are in testdata/errors.golden (go test -update
// rewrites it).
func TestErrors(t *testing.T) {
	tests := []struct {
		name   string
		files  []inFile
		setup  func(t *testing.T) // writes binary files into the current folder
		paths  []string           // nil: the files
		opts   Options
		scan   []string // columns to scan, when the error shows only in Scan
		line   int64
		row    int64
		column string
	}{
		{name: "ragged row, too few fields", files: []inFile{{"hives.csv", "a,b,c\n1,2,3\n4,5\n"}}, line: 3, row: 2},
		{name: "ragged row, too many fields, after a line break in quotes",
			files: []inFile{{"hives.csv", "a,b\n1,\"x\ny\"\n3,4,5\n"}}, line: 4, row: 2},
		{name: "ragged row past the sample", files: []inFile{{"hives.csv", "a,b\n1,2\n3,4\n5\n"}},
			opts: Options{SampleRows: 1, BatchRows: 1}, scan: []string{"a"}, line: 4, row: 3},
		{name: "ragged row without a header", files: []inFile{{"hives.csv", "1,2\n3\n"}},
			opts: Options{NoHeader: true}, line: 2, row: 2},
		{name: "unclosed quote", files: []inFile{{"hives.csv", "a,b\n1,2\n3,\"open\n4,5\n6,7\n"}},
			line: 3, row: 2, column: "b"},
		{name: "unclosed quote opened on the second line of a row",
			files: []inFile{{"hives.csv", "a,b,c\n1,\"x\ny\",\"open\n2,3,4\n"}}, line: 3, row: 1, column: "c"},
		{name: "unclosed quote in the header", files: []inFile{{"hives.csv", "a,\"b\n1,2\n"}}, line: 1},
		{name: "text after a closing quote", files: []inFile{{"hives.csv", "a,b\n1,\"x\"y\n"}}, line: 2, row: 1, column: "b"},
		{name: "invalid UTF-8", files: []inFile{{"hives.csv", "a,b\n1,ok\n2,caf\xe9\n"}}, line: 3, row: 2, column: "b"},
		{name: "invalid UTF-8 on the second line of a quoted cell",
			files: []inFile{{"hives.csv", "a,b\n1,\"x\ny\xff\"\n"}}, line: 3, row: 1, column: "b"},
		{name: "NUL byte", files: []inFile{{"hives.csv", "a,b\n1,x\x00y\n"}}, line: 2, row: 1, column: "b"},
		{name: "UTF-16 text", files: []inFile{{"hives.csv", "\xff\xfea\x00,\x00b\x00\n\x00"}}, line: 1},
		{name: "text named .parquet", files: []inFile{{"hives.parquet", "a,b\n1,2\n"}}},
		{name: "binary named .arrow", files: []inFile{{"hives.arrow", "\x00\x01\x02garbage"}}},
		{name: "text named .gz", files: []inFile{{"hives.csv.gz", "a,b\n1,2\n"}}},
		{name: "truncated Parquet", setup: func(t *testing.T) {
			writeParquet(t, "hives.parquet", oneColumn(arrow.PrimitiveTypes.Int64), 10)
			truncate(t, "hives.parquet", 30)
		}, paths: []string{"hives.parquet"}},
		{name: "damaged Parquet footer", files: []inFile{{"hives.parquet", "PAR1garbage!\x08\x00\x00\x00PAR1"}}},
		{name: "truncated Arrow file", setup: func(t *testing.T) {
			writeArrow(t, "hives.arrow", oneColumn(arrow.PrimitiveTypes.Int64), false, 10)
			truncate(t, "hives.arrow", 20)
		}, paths: []string{"hives.arrow"}},
		{name: "truncated Arrow stream", setup: func(t *testing.T) {
			writeArrow(t, "hives.arrows", oneColumn(arrow.BinaryTypes.String), true, 50)
			truncate(t, "hives.arrows", 100)
		}, paths: []string{"hives.arrows"}, scan: []string{"x"}, row: 51},
		{name: "truncated gzip", setup: func(t *testing.T) {
			data := "a,b\n" + strings.Repeat("1,2\n", 5000)
			if err := os.WriteFile("hives.csv.gz", []byte(gz(t, data)), 0o644); err != nil {
				t.Fatal(err)
			}
			truncate(t, "hives.csv.gz", 10)
		}, paths: []string{"hives.csv.gz"}, opts: Options{SampleRows: 10}, scan: []string{"a"}, line: 5002, row: 5001},
		{name: "empty file", files: []inFile{{"hives.csv", ""}}},
		{name: "only blank lines", files: []inFile{{"hives.csv", "\n\r\n\n"}}},
		{name: "repeated column name", files: []inFile{{"hives.csv", "a,b,a\n1,2,3\n"}}, line: 1, column: "a"},
		{name: "empty column name", files: []inFile{{"hives.csv", "\n\na,,c\n"}}, line: 3},
		{name: "missing file", paths: []string{"nowhere.csv"}},
		{name: "pattern matching nothing", paths: []string{"hives-*.csv"}},
		{name: "malformed pattern", paths: []string{"hives-[.csv"}},
		{name: "folder", setup: func(t *testing.T) {
			if err := os.Mkdir("data", 0o755); err != nil {
				t.Fatal(err)
			}
		}, paths: []string{"data"}},
		{name: "columns differ between files",
			files: []inFile{{"a.csv", "a,b,c\n1,2,3\n"}, {"b.csv", "c,a,d,e\n1,2,3,4\n"}}},
		{name: "stored types differ between files", setup: func(t *testing.T) {
			writeParquet(t, "a.parquet", oneColumn(arrow.PrimitiveTypes.Int64), 10)
			writeParquet(t, "b.parquet", oneColumn(arrow.BinaryTypes.String), 10)
		}, paths: []string{"a.parquet", "b.parquet"}, column: "x"},
		{name: "declared type impossible for the stored type", setup: func(t *testing.T) {
			writeParquet(t, "a.parquet", oneColumn(arrow.FixedWidthTypes.Boolean), 10)
		}, paths: []string{"a.parquet"}, opts: Options{Types: map[string]arrow.DataType{"x": tDate}}, column: "x"},
		{name: "empty standard input", paths: []string{"-"}, opts: Options{Stdin: strings.NewReader("")}},
		{name: "no paths", paths: []string{}},
		{name: "line break as delimiter", files: []inFile{{"a.csv", "a\n"}}, opts: Options{Delimiter: '\n'}},
		{name: "quote equal to delimiter", files: []inFile{{"a.csv", "a\n"}}, opts: Options{Delimiter: '\'', Quote: '\''}},
		{name: "undeclarable type", files: []inFile{{"a.csv", "a\n"}},
			opts: Options{Types: map[string]arrow.DataType{"a": arrow.PrimitiveTypes.Int32}}, column: "a"},
		{name: "unknown column asked for", files: []inFile{{"a.csv", "a,b\n1,2\n"}}, scan: []string{"b", "zz"}, column: "zz"},
		{name: "column asked for twice", files: []inFile{{"a.csv", "a,b\n1,2\n"}}, scan: []string{"b", "b"}, column: "b"},
	}
	var golden strings.Builder
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Chdir(t.TempDir())
			tt.opts.Allocator = checkedMem(t)
			paths := writeFiles(t, ".", tt.files)
			if tt.setup != nil {
				tt.setup(t)
			}
			if tt.paths != nil {
				paths = tt.paths
			}
			for i := range paths {
				paths[i] = strings.TrimPrefix(paths[i], "./")
			}
			s, err := Open(paths, tt.opts)
			if err == nil {
				defer s.Close()
				if tt.scan == nil {
					t.Fatal("Open succeeded; want an error")
				}
				err = s.Scan(context.Background(), tt.scan, func(*Batch) error { return nil })
				if err == nil {
					t.Fatal("Open and Scan succeeded; want an error")
				}
			}
			checkLocated(t, err)
			var e *Error
			if errors.As(err, &e) && (e.Line != tt.line || e.Row != tt.row || e.Column != tt.column) {
				t.Errorf("error at line %d, row %d, column %q; want %d, %d, %q", e.Line, e.Row, e.Column, tt.line, tt.row, tt.column)
			}
			golden.WriteString("== " + tt.name + "\n" + err.Error() + "\n")
		})
	}
	path := filepath.Join("testdata", "errors.golden")
	if *update {
		if err := os.WriteFile(path, []byte(golden.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	diff(t, golden.String(), string(want))
}
