package source

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata")

// checkedMem returns an allocator that fails the test unless everything it
// gave out is back when the test ends.
func checkedMem(t *testing.T) *memory.CheckedAllocator {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	t.Cleanup(func() { mem.AssertSize(t, 0) })
	return mem
}

// inFile is a test input: a name and its bytes.
type inFile struct {
	name, data string
}

// writeFiles writes files into dir and returns their paths.
func writeFiles(t *testing.T, dir string, files []inFile) []string {
	t.Helper()
	paths := make([]string, len(files))
	for i, f := range files {
		paths[i] = filepath.Join(dir, f.name)
		if err := os.MkdirAll(filepath.Dir(paths[i]), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(paths[i], []byte(f.data), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return paths
}

// dumpSchema renders a schema as "name:type ...".
func dumpSchema(sc *arrow.Schema) string {
	parts := make([]string, sc.NumFields())
	for i, f := range sc.Fields() {
		name := typeName(f.Type)
		if arrow.IsNested(f.Type.ID()) {
			name = f.Type.Name() // without child names, which differ between formats
		}
		parts[i] = f.Name + ":" + name
	}
	return strings.Join(parts, " ")
}

// scanDump scans s and renders every batch and row, checking on the way
// the invariants of a Batch: consecutive row numbers, one line per row for
// text, Invalid cells null.
func scanDump(t *testing.T, s *Set, cols []string) string {
	t.Helper()
	var b strings.Builder
	next := int64(1)
	err := s.Scan(context.Background(), cols, func(bt *Batch) error {
		rec := bt.Record
		if bt.FirstRow != next {
			t.Errorf("batch starts at row %d; want %d", bt.FirstRow, next)
		}
		n := int(rec.NumRows())
		next += int64(n)
		if bt.Lines != nil && len(bt.Lines) != n {
			t.Errorf("batch has %d lines for %d rows", len(bt.Lines), n)
		}
		fmt.Fprintf(&b, "batch source=%d first=%d rows=%d\n", bt.Source, bt.FirstRow, n)
		for i := range n {
			fmt.Fprintf(&b, "  row %d", bt.FirstRow+int64(i))
			if bt.Lines != nil {
				fmt.Fprintf(&b, " line %d", bt.Line(i))
			}
			b.WriteString(":")
			for c := range int(rec.NumCols()) {
				fmt.Fprintf(&b, " %s=%s", rec.ColumnName(c), cellText(t, bt, c, i))
			}
			b.WriteString("\n")
		}
		return nil
	})
	if err != nil {
		fmt.Fprintf(&b, "error: %v\n", err)
	}
	return b.String()
}

// cellText renders one cell: null, !"text" for an invalid cell, or the value.
func cellText(t *testing.T, b *Batch, col, row int) string {
	t.Helper()
	a := b.Record.Column(col)
	for _, bad := range b.Invalid[col] {
		if bad.Row == row {
			if !a.IsNull(row) {
				t.Errorf("invalid cell %q at row %d is not null", bad.Text, row)
			}
			return "!" + strconv.Quote(bad.Text)
		}
	}
	if a.IsNull(row) {
		return "null"
	}
	switch a := a.(type) {
	case *array.Int64:
		return strconv.FormatInt(a.Value(row), 10)
	case *array.Float64:
		return strconv.FormatFloat(a.Value(row), 'g', -1, 64)
	case *array.String:
		return strconv.Quote(a.Value(row))
	case *array.Boolean:
		return strconv.FormatBool(a.Value(row))
	case *array.Timestamp:
		toTime, err := a.DataType().(*arrow.TimestampType).GetToTimeFunc()
		if err != nil {
			t.Fatal(err)
		}
		return toTime(a.Value(row)).UTC().Format(time.RFC3339Nano)
	case *array.Date32:
		return a.Value(row).FormattedString()
	}
	return a.ValueStr(row)
}

// openDump opens paths and renders the schema, the files and a full scan
// of cols, or the error.
func openDump(t *testing.T, paths []string, opts Options, cols []string) string {
	t.Helper()
	s, err := Open(paths, opts)
	if err != nil {
		checkLocated(t, err)
		return "error: " + err.Error() + "\n"
	}
	defer func() {
		if err := s.Close(); err != nil {
			t.Error(err)
		}
	}()
	out := "schema: " + dumpSchema(s.Schema()) + "\n" + scanDump(t, s, cols)
	for _, f := range s.Files() {
		out += fmt.Sprintf("file %s %s gzip=%v rows=%d\n", filepath.Base(f.Path), f.Format, f.Gzip, f.Rows)
	}
	return out
}

// checkLocated fails unless err is an *Error naming a file (errors about
// options and projections excepted, which have no file).
func checkLocated(t *testing.T, err error) {
	t.Helper()
	var e *Error
	if !errors.As(err, &e) {
		t.Errorf("error %v (%T) is not a *source.Error", err, err)
		return
	}
	if e.Msg == "" || strings.HasSuffix(e.Msg, ".") || e.Msg != strings.TrimSpace(e.Msg) {
		t.Errorf("error message %q: want text without a final period", e.Msg)
	}
}

// diff reports got against want line by line.
func diff(t *testing.T, got, want string) {
	t.Helper()
	if got == want {
		return
	}
	g, w := strings.Split(got, "\n"), strings.Split(want, "\n")
	for i := 0; i < len(g) || i < len(w); i++ {
		var gl, wl string
		if i < len(g) {
			gl = g[i]
		}
		if i < len(w) {
			wl = w[i]
		}
		if gl != wl {
			t.Errorf("first difference at line %d:\n got: %s\nwant: %s\nwhole output:\n%s", i+1, gl, wl, got)
			return
		}
	}
}
