package source

import (
	"bytes"
	"context"
	"encoding/binary"
	"fmt"
	"os"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// parquetReadBuffer is the read buffer of one Parquet column chunk.
const parquetReadBuffer = 1 << 20

// openParquet opens the Parquet file of in, checking first that it is
// whole: a Parquet file ends with its footer, the footer's length and
// "PAR1". Column chunks are read through a buffer of parquetReadBuffer
// bytes rather than whole, so that the memory of a row group being read
// does not grow with its length. The pages' buffers come from the Set's
// recycler: a column chunk's reader frees them when it closes, and the
// next row group's reuse them (no array points into them: values are
// copied out of pages).
func (s *Set) openParquet(in *input, f *os.File, size int64) (*file.Reader, error) {
	tail := make([]byte, 8) // footer length, "PAR1"
	if size >= 12 {
		if _, err := f.ReadAt(tail, size-8); err != nil {
			return nil, &Error{Path: in.name, Msg: "cannot read the file: " + pathErrText(err), Err: err}
		}
	}
	if !bytes.Equal(tail[4:], parquetMagic) || int64(binary.LittleEndian.Uint32(tail))+12 > size {
		return nil, errorf(in.name, "the Parquet file is truncated: it does not end with its footer and \"PAR1\" (it was cut short; copy it again)")
	}
	props := parquet.NewReaderProperties(s.pool)
	props.BufferedStreamEnabled, props.BufferSize = true, parquetReadBuffer
	r, err := guard(func() (*file.Reader, error) { return file.NewParquetReader(f, file.WithReadProps(props)) })
	if err != nil {
		return nil, &Error{Path: in.name, Err: err,
			Msg: "cannot read the Parquet footer: " + err.Error() + " (the file is damaged; copy it again)"}
	}
	dropStoredSchema(r)
	return r, nil
}

// dropStoredSchema hides from pqarrow the Arrow schema a writer may store
// in a Parquet footer (the key "ARROW:schema", an Arrow IPC message in
// base64), so that column types come from the Parquet schema alone, which
// holds every type assay reads. pqarrow decodes that message with no
// bound on the lengths it holds (arrow-go v18.8.0, through
// flight.DeserializeSchema): in a damaged footer a length can make it
// allocate hundreds of gigabytes and end the process, which no recover can
// catch; FuzzParquet found such files. The key is renamed in the reader's
// copy of the footer only; the file is not touched.
func dropStoredSchema(r *file.Reader) {
	for _, kv := range r.MetaData().KeyValueMetadata() {
		if kv != nil && kv.Key == "ARROW:schema" {
			kv.Key = "ARROW:schema (not read)"
		}
	}
}

// inspectParquet reads the schema and row count of a Parquet input.
func (s *Set) inspectParquet(in *input, f *os.File, size int64) error {
	r, err := s.openParquet(in, f, size)
	if err != nil {
		return err
	}
	defer r.Close()
	fr, err := guard(func() (*pqarrow.FileReader, error) {
		return pqarrow.NewFileReader(r, pqarrow.ArrowReadProperties{}, s.opts.Allocator)
	})
	if err != nil {
		return &Error{Path: in.name, Err: err, Msg: "cannot read the Parquet schema: " + err.Error()}
	}
	sc, err := guard(fr.Schema)
	if err != nil {
		return &Error{Path: in.name, Err: err, Msg: "cannot map the Parquet schema to Arrow types: " + err.Error()}
	}
	setColumns(in, sc)
	in.Rows = r.NumRows()
	return checkNames(in, 0)
}

// setColumns takes the names and types of a Parquet or Arrow input from its
// schema.
func setColumns(in *input, sc *arrow.Schema) {
	in.names = make([]string, sc.NumFields())
	in.types = make([]arrow.DataType, sc.NumFields())
	for i, f := range sc.Fields() {
		in.names[i], in.types[i] = f.Name, f.Type
	}
}

// leaves appends the Parquet leaf column indices under field f.
func leaves(dst []int, f *pqarrow.SchemaField) []int {
	if f.IsLeaf() {
		return append(dst, f.ColIndex)
	}
	for i := range f.Children {
		dst = leaves(dst, &f.Children[i])
	}
	return dst
}

// scanParquet reads input i by record batches of at most BatchRows rows,
// decoding only the projected columns that are not skipped.
func (s *Set) scanParquet(ctx context.Context, i int, sc *scan, first int64) (int64, error) {
	in := s.inputs[i]
	f, size, err := openFile(in)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	r, err := s.openParquet(in, f, size)
	if err != nil {
		return 0, err
	}
	defer r.Close()
	total := r.NumRows()
	if total == 0 {
		return 0, nil
	}
	// read lists the columns of the batches to decode, in order.
	read := make([]int, 0, len(sc.proj))
	for k := range sc.proj {
		if !sc.skipped(k) {
			read = append(read, k)
		}
	}
	if len(read) == 0 {
		return total, emitRows(ctx, i, sc, first, total, int64(s.opts.BatchRows))
	}
	batchRows := int64(s.opts.BatchRows)
	fr, err := guard(func() (*pqarrow.FileReader, error) {
		return pqarrow.NewFileReader(r, pqarrow.ArrowReadProperties{BatchSize: batchRows}, s.opts.Allocator)
	})
	if err != nil {
		return 0, &Error{Path: in.name, Err: err, Msg: "cannot read the Parquet schema: " + err.Error()}
	}
	// Flat columns are read by flatColumn, the others by pqarrow's record
	// reader; both deliver batches of batchRows rows, the last one of the
	// file shorter, so their arrays line up.
	flat := make([]*flatColumn, len(sc.proj))
	var cols, viaArrow []int // leaves and batch columns of the record reader
	for _, k := range read {
		j := in.pos[sc.proj[k]]
		field := &fr.Manifest.Fields[j]
		if field.IsLeaf() {
			flat[k] = newFlatColumn(r, field.ColIndex, in.types[j], s.pool, s.opts.Allocator)
		}
		if flat[k] == nil {
			cols = leaves(cols, field)
			viaArrow = append(viaArrow, k)
		}
	}
	defer func() {
		for _, fc := range flat {
			if fc != nil {
				fc.close()
			}
		}
	}()
	var rr pqarrow.RecordReader
	if len(viaArrow) > 0 {
		rr, err = guard(func() (pqarrow.RecordReader, error) { return fr.GetRecordReader(ctx, cols, nil) })
		if err != nil {
			return 0, &Error{Path: in.name, Err: err, Msg: "cannot read the Parquet columns: " + err.Error()}
		}
		defer rr.Release()
	}
	decodeErr := func(rows int64, err error) error {
		return &Error{Path: in.name, Row: rows + 1, Err: err, Msg: fmt.Sprintf(
			"cannot decode the Parquet data after row %d: %v (the file is damaged; copy it again)", rows, err)}
	}
	stored := make([]arrow.Array, len(sc.proj))
	codes := make([]*array.Dictionary, len(sc.proj))
	var rows int64
	for rows < total {
		if err := ctx.Err(); err != nil {
			return rows, err
		}
		n := min(batchRows, total-rows)
		if rr != nil {
			more, err := guard(func() (bool, error) { return rr.Next(), nil })
			if err != nil {
				return rows, decodeErr(rows, err)
			}
			if !more {
				break
			}
			rec := rr.RecordBatch()
			if rec.NumRows() != n {
				return rows, decodeErr(rows, fmt.Errorf("a batch of %d rows where %d were due", rec.NumRows(), n))
			}
			for j, k := range viaArrow {
				stored[k] = rec.Column(j)
			}
		}
		err := s.readFlat(flat, stored, codes, int(n))
		if err == nil {
			err = s.deliver(in, i, sc, stored, codes, n, first+rows)
		} else {
			err = decodeErr(rows, err)
		}
		for k, fc := range flat {
			if fc != nil && stored[k] != nil {
				stored[k].Release()
				stored[k] = nil
			}
			if codes[k] != nil {
				codes[k].Release()
				codes[k] = nil
			}
		}
		if err != nil {
			return rows, err
		}
		rows += n
	}
	if rr != nil {
		if err := rr.Err(); err != nil {
			return rows, &Error{Path: in.name, Row: rows + 1, Err: err, Msg: fmt.Sprintf(
				"cannot read the Parquet data after row %d: %v (the file is damaged; copy it again)", rows, err)}
		}
	}
	if rows < total {
		return rows, decodeErr(rows, fmt.Errorf("the data ends after %d of the %d rows the footer declares", rows, total))
	}
	return rows, nil
}

// readFlat reads the next n rows of the flat columns into stored, and
// their dictionary codes, when the reader has them, into codes. An error
// names the column it comes from.
func (s *Set) readFlat(flat []*flatColumn, stored []arrow.Array, codes []*array.Dictionary, n int) error {
	for k, fc := range flat {
		if fc == nil {
			continue
		}
		a, c, err := fc.read(n)
		if err != nil {
			return fmt.Errorf("column %q: %w", fc.r.MetaData().Schema.Column(fc.leaf).Name(), err)
		}
		stored[k], codes[k] = a, c
	}
	return nil
}

// guard calls step, which runs arrow-go's decoders. They can panic on a
// damaged page or message (a bad length, offset or dictionary index)
// instead of returning an error; guard turns such a panic into an error so
// that a damaged file is reported like any other bad input. Only arrow-go's
// reading runs inside step, never our own code.
func guard[T any](step func() (T, error)) (v T, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("decoder failure: %v", p)
		}
	}()
	return step()
}

// deliver converts columns as stored, stored[k] holding column k of the
// batches (ignored when skipped), into a Batch of rows rows and hands it to
// sc.fn. codes, when not nil, holds the dictionary codes of stored columns
// where the reader had them; the batch carries those of the columns it
// passes on unconverted.
func (s *Set) deliver(in *input, i int, sc *scan, stored []arrow.Array, codes []*array.Dictionary, rows int64, firstRow int64) error {
	cols := make([]arrow.Array, len(sc.proj))
	var invalid map[int][]InvalidCell
	var kept []*array.Dictionary
	for k, c := range sc.proj {
		if sc.skipped(k) {
			cols[k] = sc.nulls.get(sc.schema.Field(k).Type, int(rows))
			continue
		}
		a := stored[k]
		conv := in.conv[c]
		if conv == nil {
			a.Retain()
			cols[k] = a
			if codes != nil && codes[k] != nil {
				if kept == nil {
					kept = make([]*array.Dictionary, len(sc.proj))
				}
				codes[k].Retain()
				kept[k] = codes[k]
			}
			continue
		}
		var bad []InvalidCell
		cols[k], bad = conv(a, s.opts.Allocator)
		if bad != nil {
			if invalid == nil {
				invalid = make(map[int][]InvalidCell)
			}
			invalid[k] = bad
		}
	}
	b := &Batch{Record: array.NewRecordBatch(sc.schema, cols, rows), Source: i, FirstRow: firstRow, Invalid: invalid, Codes: kept}
	for _, c := range cols {
		c.Release()
	}
	err := sc.fn(b)
	b.Release()
	return err
}

// emitRows delivers batches of total rows in which every column is null:
// none when the scan asks for no column, or all skipped.
func emitRows(ctx context.Context, i int, sc *scan, first, total, batchRows int64) error {
	cols := make([]arrow.Array, len(sc.proj))
	for done := int64(0); done < total; {
		if err := ctx.Err(); err != nil {
			return err
		}
		n := min(batchRows, total-done)
		for k := range cols {
			cols[k] = sc.nulls.get(sc.schema.Field(k).Type, int(n))
		}
		b := &Batch{Record: array.NewRecordBatch(sc.schema, cols, n), Source: i, FirstRow: first + done}
		for _, c := range cols {
			c.Release()
		}
		err := sc.fn(b)
		b.Release()
		if err != nil {
			return err
		}
		done += n
	}
	return nil
}
