package source

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"slices"
	"testing"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// fuzzSeeds are CSV texts that reach the reader's corners: quotes, doubled
// quotes, line breaks in quotes, CRLF, blank lines, a byte order mark,
// typed cells that parse and that do not, and broken input.
var fuzzSeeds = []string{
	"id,weight,name,ok,at,day\n1,2.5,ann,true,2024-01-02T03:04:05Z,2024-01-02\n2,-3,\"bob, jr\",FALSE,2024-01-02 03:04:05.5+01:00,2024-02-29\n",
	"a,b\r\n\"x \"\"q\"\" y\",\"multi\r\nline\"\r\n\"\",plain\r\n\"a,b\",\r\n",
	"\na,b\n\n1,2\n\r\n3,4",
	"\xef\xbb\xbfid,v\n1,é\n",
	"n\n1\n2\n3.5\n\n4\n",
	"a,b\n1,x\ry\n",
	"id,note\n1,\"a\nb\"\n2,c\n3,\"d\n\ne\"\n4,f\n",
	"a;b\n1,5;2\n",
	"a\tb\n\"x\ty\"\t2\n",
	"a,b\n'x,y',\"z\"\n'it''s',2\n",
	"a,b\n5\",x\"y\"\n",
	"a,b,c\n1,2,3\n4,5\n",
	"a,b\n1,2\n3,\"open\n4,5\n",
	"a,b\n1,\"x\"y\n",
	"a,b\n1,caf\xe9\n",
	"a,b\n1,x\x00y\n",
	"a,b,a\n1,2,3\n",
	"a,,c\n",
	"\n\r\n",
	"\"\"\n\"\"\"\"\n",
	"a,b\n\"x \"\"q\"\"\",\"m\nl\"\n\"\"\"\",\n",
}

// FuzzCSV reads arbitrary bytes as CSV under varied options. Properties:
// the reader never panics; it either delivers batches whose rows add up
// (consecutive row numbers, one line per row, increasing lines, invalid
// cells null) to the file's row count, or returns a *Error naming the file
// and, for errors inside the text, the line. When encoding/csv reads the
// same text (quote '"', valid UTF-8 without NUL or carriage returns), the
// reader must agree with it on the number of rows, each row's first line
// and, with every column read as string, every cell.
func FuzzCSV(f *testing.F) {
	for i, s := range fuzzSeeds {
		f.Add([]byte(s), byte(0), byte(8)) // commas, compared with encoding/csv
		f.Add([]byte(s), byte(i), byte(i*37))
	}
	tmp := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte, delim, flags byte) {
		opts := Options{
			Delimiter:  rune(",;\t|"[delim%4]),
			NoQuote:    flags&2 != 0,
			NoHeader:   flags&4 != 0,
			BatchRows:  1 + int(flags>>4)%4,
			SampleRows: 3,
			TempDir:    tmp,
			Stdin:      bytes.NewReader(data),
			Allocator:  checkedMem(t),
			bufferSize: []int{1, 7, 64, 0}[flags>>6],
		}
		if flags&1 != 0 {
			opts.Quote = '\''
		}
		var oracle [][]string // records as encoding/csv reads them; nil when it does not apply
		if flags&8 != 0 && opts.Quote == 0 && !opts.NoQuote && utf8.Valid(data) &&
			bytes.IndexByte(data, 0) < 0 && bytes.IndexByte(data, '\r') < 0 {
			oracle, opts.Types = readOracle(data, opts)
			opts.Nulls = []string{}
		}

		s, err := Open([]string{"-"}, opts)
		if err != nil {
			checkFuzzError(t, err, false)
			if oracle != nil && oracleOpens(oracle, opts) {
				t.Fatalf("Open failed where encoding/csv reads %d records: %v", len(oracle), err)
			}
			return
		}
		defer s.Close()
		var got [][]string
		var lines []int64
		next := int64(1)
		err = s.Scan(context.Background(), nil, func(b *Batch) error {
			n := int(b.Record.NumRows())
			if b.FirstRow != next || n == 0 || n > opts.BatchRows || len(b.Lines) != n {
				t.Fatalf("batch first=%d rows=%d lines=%d; want first=%d, 1 to %d rows, one line each",
					b.FirstRow, n, len(b.Lines), next, opts.BatchRows)
			}
			next += int64(n)
			for i := range n {
				if len(lines) > 0 && b.Lines[i] <= lines[len(lines)-1] {
					t.Fatalf("row %d starts on line %d, after a row on line %d", b.FirstRow+int64(i), b.Lines[i], lines[len(lines)-1])
				}
				lines = append(lines, b.Lines[i])
			}
			for col, cells := range b.Invalid {
				for _, c := range cells {
					if c.Row < 0 || c.Row >= n || !b.Record.Column(col).IsNull(c.Row) {
						t.Fatalf("invalid cell %+v of column %d is out of the batch or not null", c, col)
					}
				}
			}
			if oracle != nil {
				got = append(got, batchStrings(b)...)
			}
			return nil
		})
		if err != nil {
			checkFuzzError(t, err, true)
			if oracle != nil {
				t.Fatalf("Scan failed where encoding/csv reads %d records: %v", len(oracle), err)
			}
			return
		}
		if rows := s.Files()[0].Rows; rows != next-1 {
			t.Fatalf("file reports %d rows; batches hold %d", rows, next-1)
		}
		if oracle != nil {
			compareOracle(t, data, oracle, opts, got, lines)
		}
		compareWorkers(t, data, opts)
	})
}

// compareWorkers checks that parsing data on one goroutine and on three
// gives the same batches, rows, lines, cells and errors.
func compareWorkers(t *testing.T, data []byte, opts Options) {
	t.Helper()
	var dumps [2]string
	for k, workers := range []int{1, 3} {
		opts.ParseWorkers = workers
		opts.Stdin = bytes.NewReader(data)
		s, err := Open([]string{"-"}, opts)
		if err != nil {
			t.Fatalf("Open with %d workers: %v", workers, err)
		}
		dumps[k] = scanDump(t, s, nil)
		s.Close()
	}
	if dumps[0] != dumps[1] {
		t.Fatalf("one worker:\n%s\nthree workers:\n%s", dumps[0], dumps[1])
	}
}

// checkFuzzError checks that err is an *Error about standard input, with a
// line when it arose while reading rows.
func checkFuzzError(t *testing.T, err error, scanning bool) {
	t.Helper()
	var e *Error
	if !errors.As(err, &e) || e.Path != "stdin" || e.Msg == "" {
		t.Fatalf("error %q (%T) is not a *Error about stdin", err, err)
	}
	if scanning && e.Line == 0 {
		t.Fatalf("error %q has no line", err)
	}
}

// readOracle reads data with encoding/csv and returns its records (nil on
// error) and declared string types for all columns.
func readOracle(data []byte, opts Options) ([][]string, map[string]arrow.DataType) {
	recs, err := oracleReader(data, opts).ReadAll()
	if err != nil || len(recs) == 0 {
		return nil, nil
	}
	names := recs[0]
	if opts.NoHeader {
		names = columnNames(len(recs[0]))
	}
	types := make(map[string]arrow.DataType, len(names))
	for _, n := range names {
		types[n] = tString
	}
	return recs, types
}

// oracleReader reads data with encoding/csv, less a leading byte order
// mark, which is not text.
func oracleReader(data []byte, opts Options) *csv.Reader {
	r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, []byte("\ufeff"))))
	r.Comma = opts.Delimiter
	return r
}

// oracleOpens reports whether Open must succeed on text encoding/csv read
// as recs: it must unless the header has empty or repeated names.
func oracleOpens(recs [][]string, opts Options) bool {
	if opts.NoHeader {
		return true
	}
	for i, n := range recs[0] {
		if n == "" || slices.Contains(recs[0][:i], n) {
			return false
		}
	}
	return true
}

// batchStrings returns the cells of a batch of string columns.
func batchStrings(b *Batch) [][]string {
	rows := make([][]string, b.Record.NumRows())
	for i := range rows {
		for c := range int(b.Record.NumCols()) {
			rows[i] = append(rows[i], b.Record.Column(c).(*array.String).Value(i))
		}
	}
	return rows
}

// compareOracle checks the rows read against encoding/csv's records.
func compareOracle(t *testing.T, data []byte, recs [][]string, opts Options, got [][]string, lines []int64) {
	t.Helper()
	r := oracleReader(data, opts)
	var wantLines []int64
	for {
		if _, err := r.Read(); err != nil {
			break
		}
		line, _ := r.FieldPos(0)
		wantLines = append(wantLines, int64(line))
	}
	want := recs
	if !opts.NoHeader {
		want, wantLines = recs[1:], wantLines[1:]
	}
	if len(got) != len(want) || !slices.Equal(lines, wantLines) {
		t.Fatalf("read %d rows on lines %v; encoding/csv reads %d on lines %v", len(got), lines, len(want), wantLines)
	}
	for i := range want {
		if !slices.Equal(got[i], want[i]) {
			t.Fatalf("row %d is %q; encoding/csv reads %q", i+1, got[i], want[i])
		}
	}
}
