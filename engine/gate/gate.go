// Package gate writes the two halves of a gated load: the rows that break
// no row-level rule (accepted) and the rows that break at least one
// (rejected, with a column naming the rules), as CSV or Parquet. A Writer
// receives the rows from the engine's last pass (engine.Options.Gate).
//
// Every input row goes to exactly one of the two outputs, in input order,
// with every column of the data. CSV outputs hold the cells of CSV inputs
// as they were written in the file (null tokens, number spellings and cells
// that did not parse included), re-quoted as RFC 4180 asks; values read
// from Parquet or Arrow are written as text (see formatCell). Parquet
// outputs hold the typed values; a cell that did not parse as its
// column's declared type is null there, and the rejected file's
// BrokenColumn names the type rule it broke. A row with such a cell that no
// rule rejected (the column's type was inferred) cannot be written to an
// accepted Parquet file: Rows refuses it.
package gate

import (
	"encoding/csv"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/assay-project/assay/engine/source"
)

// BrokenColumn is the column the rejected output adds after the data's
// columns: the ids of the row-level rules the row breaks, in policy order,
// joined by ";".
const BrokenColumn = "assay_broken"

// Format is the file format of an output.
type Format int

// Output formats.
const (
	CSV Format = iota
	Parquet
)

func (f Format) String() string {
	if f == Parquet {
		return "parquet"
	}
	return "csv"
}

// FormatOf tells the format of an output file by its extension: .csv, or
// .parquet (also .pq).
func FormatOf(path string) (Format, error) {
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv":
		return CSV, nil
	case ".parquet", ".pq":
		return Parquet, nil
	}
	return 0, fmt.Errorf("%s: name a .csv or .parquet file (the extension says the format)", path)
}

// Output is where one half of the rows goes.
type Output struct {
	W      io.Writer
	Format Format
}

// Writer writes the accepted rows to one output and the rejected rows to
// another; either may be absent. Begin, Rows and Close are called in that
// order; the counts are final after Close.
type Writer struct {
	mem                memory.Allocator
	accepted, rejected sink
	// Accepted and Rejected count the rows written to (or, for an absent
	// output, meant for) each half.
	Accepted, Rejected int64
}

// sink writes rows of batches to one output.
type sink interface {
	begin(schema *arrow.Schema) error
	// write writes rows sel of b (ascending indices); broken, when not nil,
	// holds the rule ids of each row of b, for BrokenColumn.
	write(b *source.Batch, sel []int, broken [][]string) error
	close() error
}

// New returns a Writer to the outputs; a nil Output is not written. mem
// allocates the Arrow buffers of Parquet outputs; nil means the default.
func New(accepted, rejected *Output, mem memory.Allocator) *Writer {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	w := &Writer{mem: mem}
	w.accepted = w.sinkFor(accepted, false)
	w.rejected = w.sinkFor(rejected, true)
	return w
}

func (w *Writer) sinkFor(o *Output, rejected bool) sink {
	switch {
	case o == nil:
		return nil
	case o.Format == Parquet:
		return &parquetSink{w: o.W, mem: w.mem, rejected: rejected}
	}
	return &csvSink{w: csv.NewWriter(o.W), rejected: rejected}
}

// Begin starts the outputs for batches of the given schema.
func (w *Writer) Begin(schema *arrow.Schema) error {
	if len(schema.FieldIndices(BrokenColumn)) > 0 && w.rejected != nil {
		return fmt.Errorf("the data has a column named %q, which the rejected file adds: rename the column", BrokenColumn)
	}
	for _, s := range []sink{w.accepted, w.rejected} {
		if s != nil {
			if err := s.begin(schema); err != nil {
				return err
			}
		}
	}
	return nil
}

// Rows sends each row of b to the accepted output when broken[i] is empty,
// else to the rejected one.
func (w *Writer) Rows(b *source.Batch, broken [][]string) error {
	var acc, rej []int
	for i := range int(b.Record.NumRows()) {
		if len(broken[i]) == 0 {
			acc = append(acc, i)
		} else {
			rej = append(rej, i)
		}
	}
	w.Accepted += int64(len(acc))
	w.Rejected += int64(len(rej))
	if w.accepted != nil && len(acc) > 0 {
		if err := w.accepted.write(b, acc, nil); err != nil {
			return err
		}
	}
	if w.rejected != nil && len(rej) > 0 {
		return w.rejected.write(b, rej, broken)
	}
	return nil
}

// Close finishes the outputs (it does not close their io.Writers).
func (w *Writer) Close() error {
	var first error
	for _, s := range []sink{w.accepted, w.rejected} {
		if s != nil {
			if err := s.close(); err != nil && first == nil {
				first = err
			}
		}
	}
	return first
}

// csvSink writes RFC 4180 CSV with a header line.
type csvSink struct {
	w        *csv.Writer
	rejected bool
	rec      []string
}

func (s *csvSink) begin(schema *arrow.Schema) error {
	for _, f := range schema.Fields() {
		s.rec = append(s.rec, f.Name)
	}
	if s.rejected {
		s.rec = append(s.rec, BrokenColumn)
	}
	return s.w.Write(s.rec)
}

func (s *csvSink) write(b *source.Batch, sel []int, broken [][]string) error {
	ncol := int(b.Record.NumCols())
	var invalid map[[2]int]string // (column, row) -> text, for typed cells
	if b.Text == nil {
		for k, cells := range b.Invalid {
			for _, c := range cells {
				if invalid == nil {
					invalid = map[[2]int]string{}
				}
				invalid[[2]int{k, c.Row}] = c.Text
			}
		}
	}
	for _, i := range sel {
		for k := range ncol {
			switch {
			case b.Text != nil:
				s.rec[k] = b.Text[k].Value(i)
			default:
				text, ok := invalid[[2]int{k, i}]
				if !ok {
					text = formatCell(b.Record.Column(k), i)
				}
				s.rec[k] = text
			}
		}
		if broken != nil {
			s.rec[ncol] = strings.Join(broken[i], ";")
		}
		if err := s.w.Write(s.rec); err != nil {
			return err
		}
	}
	return nil
}

func (s *csvSink) close() error {
	s.w.Flush()
	return s.w.Error()
}

// formatCell writes element i of a typed array as CSV text: empty for a
// missing value; integers in decimal; floats in the shortest form that
// reads back as the same float64 (NaN, +Inf and -Inf by those names);
// booleans as true and false; timestamps in RFC 3339 with their fraction of
// a second, in UTC for time-zone-aware types; dates as YYYY-MM-DD; strings
// as they are; other types as Arrow writes them.
func formatCell(arr arrow.Array, i int) string {
	if arr.IsNull(i) {
		return ""
	}
	switch a := arr.(type) {
	case *array.Float64:
		return strconv.FormatFloat(a.Value(i), 'g', -1, 64)
	case *array.Float32:
		return strconv.FormatFloat(float64(a.Value(i)), 'g', -1, 32)
	case *array.Timestamp:
		t := a.DataType().(*arrow.TimestampType)
		tm := a.Value(i).ToTime(t.Unit)
		if t.TimeZone == "" {
			return tm.Format("2006-01-02T15:04:05.999999999")
		}
		return tm.UTC().Format(time.RFC3339Nano)
	case *array.String:
		return a.Value(i)
	case *array.LargeString:
		return a.Value(i)
	case *array.StringView:
		return a.Value(i)
	}
	return arr.ValueStr(i)
}

// parquetSink writes Parquet with Snappy compression, in row groups of at
// most rowGroupRows rows.
type parquetSink struct {
	w        io.Writer
	mem      memory.Allocator
	rejected bool
	schema   *arrow.Schema
	fw       *pqarrow.FileWriter
}

// rowGroupRows bounds a row group, and so the rows a Parquet output keeps
// in memory before writing them.
const rowGroupRows = 128 * 1024

func (s *parquetSink) begin(schema *arrow.Schema) error {
	s.schema = schema
	if s.rejected {
		fields := append(slices.Clone(schema.Fields()), arrow.Field{Name: BrokenColumn, Type: arrow.BinaryTypes.String, Nullable: true})
		s.schema = arrow.NewSchema(fields, nil)
	}
	props := parquet.NewWriterProperties(parquet.WithAllocator(s.mem),
		parquet.WithCompression(compress.Codecs.Snappy), parquet.WithMaxRowGroupLength(rowGroupRows))
	// The writer closes a sink that is an io.Closer; the caller closes it.
	var err error
	s.fw, err = pqarrow.NewFileWriter(s.schema, struct{ io.Writer }{s.w}, props,
		pqarrow.NewArrowWriterProperties(pqarrow.WithAllocator(s.mem), pqarrow.WithStoreSchema()))
	return err
}

func (s *parquetSink) write(b *source.Batch, sel []int, broken [][]string) error {
	if !s.rejected {
		if err := unparsed(b, sel); err != nil {
			return err
		}
	}
	cols := make([]arrow.Array, 0, len(s.schema.Fields()))
	defer func() {
		for _, c := range cols {
			c.Release()
		}
	}()
	for k := range int(b.Record.NumCols()) {
		c, err := take(b.Record.Column(k), sel, s.mem)
		if err != nil {
			return err
		}
		cols = append(cols, c)
	}
	if broken != nil {
		sb := array.NewStringBuilder(s.mem)
		defer sb.Release()
		for _, i := range sel {
			sb.Append(strings.Join(broken[i], ";"))
		}
		cols = append(cols, sb.NewArray())
	}
	rec := array.NewRecordBatch(s.schema, cols, int64(len(sel)))
	defer rec.Release()
	return s.fw.WriteBuffered(rec)
}

func (s *parquetSink) close() error {
	return s.fw.Close()
}

// unparsed refuses a cell of rows sel that did not parse as its column's
// type: a typed file cannot hold its text, and as no type rule rejected its
// row (the column has no declared type, and the cell does not fit the type
// inferred from the start of the file), writing null would lose it
// silently.
func unparsed(b *source.Batch, sel []int) error {
	for k, cells := range b.Invalid {
		for _, c := range cells {
			if _, ok := slices.BinarySearch(sel, c.Row); ok {
				f := b.Record.Schema().Field(k)
				return fmt.Errorf("row %d, column %q: the cell %q is not %s like the rest of the column, and a Parquet file cannot hold it; declare the column's type in the policy, or write CSV",
					b.FirstRow+int64(c.Row), f.Name, c.Text, f.Type)
			}
		}
	}
	return nil
}

// take returns the elements sel (ascending indices) of arr: arr itself when
// sel is every index, else the runs of consecutive indices sliced and
// concatenated.
func take(arr arrow.Array, sel []int, mem memory.Allocator) (arrow.Array, error) {
	switch len(sel) {
	case arr.Len():
		arr.Retain()
		return arr, nil
	case 0:
		return array.NewSlice(arr, 0, 0), nil
	}
	var parts []arrow.Array
	defer func() {
		for _, p := range parts {
			p.Release()
		}
	}()
	for lo := 0; lo < len(sel); {
		hi := lo + 1
		for hi < len(sel) && sel[hi] == sel[hi-1]+1 {
			hi++
		}
		parts = append(parts, array.NewSlice(arr, int64(sel[lo]), int64(sel[hi-1]+1)))
		lo = hi
	}
	if len(parts) == 1 {
		parts[0].Retain()
		return parts[0], nil
	}
	return array.Concatenate(parts, mem)
}
