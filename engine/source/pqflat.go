package source

import (
	"errors"
	"fmt"
	"math"
	"unsafe"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
)

// flatColumn reads one flat Parquet column straight into Arrow buffers of
// exactly a batch's size, one row group after another.
//
// pqarrow's record reader, which the other columns go through, reserves
// room for the next power of two above the batch size (twice the batch
// when BatchRows is itself a power of two, as the default is) and grows a
// builder for text; arrays made here hold no slack. A flat column is one
// without repetition and with at most one definition level (required or
// optional), whose physical values are its Arrow values: INT32 as int32 or
// date32, INT64 as int64 or a timestamp, FLOAT, DOUBLE, BOOLEAN, and
// BYTE_ARRAY as string or binary. These are the types for which pqarrow
// copies or references the values unchanged, so both readers give the same
// arrays. A BYTE_ARRAY column chunk that readsPages accepts is read page by
// page by textPages instead of arrow-go's column chunk reader, which gives
// a string column's dictionary codes as well (Batch.Codes).
type flatColumn struct {
	r    *file.Reader
	leaf int              // the column's leaf index in the file
	typ  arrow.DataType   // as pqarrow maps it
	mem  memory.Allocator // for the buffers of a batch but text bytes
	// textMem allocates the bytes of a text column: the strings of an
	// array point into them, and a check may keep such a string (a Go
	// map even stores the key of every assignment), so they are never
	// given a recycler.
	textMem memory.Allocator
	opt     bool // optional: values come with definition levels

	group int                    // next row group to open
	cr    file.ColumnChunkReader // of the current row group; nil before the first
	pages *textPages             // of the current row group instead of cr, see textPages
	left  int64                  // rows of the current row group not read yet

	defs  []int16             // definition levels of a batch, reused
	bools []bool              // boolean values of a batch, reused
	texts []parquet.ByteArray // byte-array values of one page read, reused
	dlen  int                 // text bytes of the previous batch, a size guess
}

// newFlatColumn returns the reader of leaf column leaf of r, read as typ,
// or nil when the column is not flat.
func newFlatColumn(r *file.Reader, leaf int, typ arrow.DataType, mem, textMem memory.Allocator) *flatColumn {
	descr := r.MetaData().Schema.Column(leaf)
	if descr.MaxRepetitionLevel() != 0 || descr.MaxDefinitionLevel() > 1 {
		return nil
	}
	ok := false
	switch descr.PhysicalType() {
	case parquet.Types.Int32:
		ok = typ.ID() == arrow.INT32 || typ.ID() == arrow.DATE32
	case parquet.Types.Int64:
		ok = typ.ID() == arrow.INT64 || typ.ID() == arrow.TIMESTAMP
	case parquet.Types.Float:
		ok = typ.ID() == arrow.FLOAT32
	case parquet.Types.Double:
		ok = typ.ID() == arrow.FLOAT64
	case parquet.Types.Boolean:
		ok = typ.ID() == arrow.BOOL
	case parquet.Types.ByteArray:
		ok = typ.ID() == arrow.STRING || typ.ID() == arrow.BINARY
	}
	if !ok {
		return nil
	}
	return &flatColumn{r: r, leaf: leaf, typ: typ, mem: mem, textMem: textMem, opt: descr.MaxDefinitionLevel() == 1}
}

// close lets go of the current row group's column chunk.
func (fc *flatColumn) close() {
	if fc.cr != nil {
		_ = fc.cr.Close()
		fc.cr = nil
	}
	if fc.pages != nil {
		fc.pages.close()
		fc.pages = nil
	}
}

// errShort is a column chunk with fewer values than its row group has rows.
var errShort = errors.New("a column chunk holds fewer values than its row group has rows")

// advance makes sure the current row group has rows left, opening the next
// one when it has none.
func (fc *flatColumn) advance() error {
	for fc.left == 0 {
		fc.close()
		if fc.group == fc.r.NumRowGroups() {
			return errShort
		}
		rg := fc.r.RowGroup(fc.group)
		fc.left = rg.NumRows()
		fc.group++
		if fc.left < 0 {
			return fmt.Errorf("row group %d claims %d rows", fc.group, fc.left)
		}
		md, err := rg.MetaData().ColumnChunk(fc.leaf)
		if err != nil {
			return err
		}
		if fc.typ.ID() == arrow.STRING || fc.typ.ID() == arrow.BINARY {
			if readsPages(md, fc.opt) {
				pr, err := guard(func() (file.PageReader, error) { return rg.GetColumnPageReader(fc.leaf) })
				if err != nil {
					return err
				}
				fc.pages = &textPages{pr: pr, opt: fc.opt}
				continue
			}
		}
		cr, err := guard(func() (file.ColumnChunkReader, error) { return rg.Column(fc.leaf) })
		if err != nil {
			return err
		}
		fc.cr = cr
	}
	return nil
}

// read returns the next n values of the column as an array of fc.typ and,
// when readTexts gives them, the same values as dictionary codes (see
// Batch.Codes); the caller owns both.
func (fc *flatColumn) read(n int) (arrow.Array, *array.Dictionary, error) {
	var valid *memory.Buffer
	var bits []byte
	if fc.opt {
		valid = zeroed(fc.mem, int(bitutil.BytesForBits(int64(n))))
		bits = valid.Bytes()
		if cap(fc.defs) < n {
			fc.defs = make([]int16, n)
		}
	}
	var buffers []*memory.Buffer
	var nulls int
	var codes *memory.Buffer
	var dict *array.String
	var err error
	switch fc.typ.ID() {
	case arrow.INT32, arrow.DATE32:
		buffers, nulls, err = readFixed(fc, n, bits, func(cr file.ColumnChunkReader, m int64, v []int32, d []int16) (int64, int, error) {
			return cr.(*file.Int32ColumnChunkReader).ReadBatch(m, v, d, nil)
		})
	case arrow.INT64, arrow.TIMESTAMP:
		buffers, nulls, err = readFixed(fc, n, bits, func(cr file.ColumnChunkReader, m int64, v []int64, d []int16) (int64, int, error) {
			return cr.(*file.Int64ColumnChunkReader).ReadBatch(m, v, d, nil)
		})
	case arrow.FLOAT32:
		buffers, nulls, err = readFixed(fc, n, bits, func(cr file.ColumnChunkReader, m int64, v []float32, d []int16) (int64, int, error) {
			return cr.(*file.Float32ColumnChunkReader).ReadBatch(m, v, d, nil)
		})
	case arrow.FLOAT64:
		buffers, nulls, err = readFixed(fc, n, bits, func(cr file.ColumnChunkReader, m int64, v []float64, d []int16) (int64, int, error) {
			return cr.(*file.Float64ColumnChunkReader).ReadBatch(m, v, d, nil)
		})
	case arrow.BOOL:
		buffers, nulls, err = fc.readBools(n, bits)
	default:
		buffers, nulls, codes, dict, err = fc.readTexts(n, bits)
	}
	if err != nil {
		if valid != nil {
			valid.Release()
		}
		return nil, nil, err
	}
	if nulls == 0 && valid != nil {
		valid.Release()
		valid = nil
	}
	buffers = append([]*memory.Buffer{valid}, buffers...)
	data := array.NewData(fc.typ, n, buffers, nil, nulls, 0)
	arr := array.MakeFromData(data)
	data.Release()
	var dicts *array.Dictionary
	if codes != nil {
		idata := array.NewData(arrow.PrimitiveTypes.Int32, n, []*memory.Buffer{valid, codes}, nil, nulls, 0)
		idx := array.NewInt32Data(idata)
		idata.Release()
		dicts = array.NewDictionaryArray(codesType, idx, dict)
		idx.Release()
		codes.Release()
	}
	for _, b := range buffers {
		if b != nil {
			b.Release()
		}
	}
	return arr, dicts, nil
}

// codesType is the type of the codes of a string column (Batch.Codes).
var codesType = &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}

// fixed are the Go types of fixed-width Parquet values.
type fixed interface {
	int32 | int64 | float32 | float64
}

// readFixed reads n fixed-width values into a buffer of exactly n values.
// It returns the values buffer and the null count.
func readFixed[T fixed](fc *flatColumn, n int, bits []byte, readBatch func(file.ColumnChunkReader, int64, []T, []int16) (int64, int, error)) ([]*memory.Buffer, int, error) {
	var zero T
	buf := sized(fc.mem, n*int(unsafe.Sizeof(zero)))
	nulls, err := readRows(fc, arrow.GetData[T](buf.Bytes()), bits, readBatch)
	if err != nil {
		buf.Release()
		return nil, 0, err
	}
	return []*memory.Buffer{buf}, nulls, nil
}

// readRows fills vals, one value per row, crossing row groups as needed:
// each read fills the values of the rows it covers densely, and the values
// of an optional column are then spread to their rows from the back, in
// place, as its definition levels place them, bits getting their validity.
// It returns the null count.
func readRows[T any](fc *flatColumn, vals []T, bits []byte, readBatch func(file.ColumnChunkReader, int64, []T, []int16) (int64, int, error)) (int, error) {
	nulls := 0
	for done := 0; done < len(vals); {
		if err := fc.advance(); err != nil {
			return 0, err
		}
		want := min(int64(len(vals)-done), fc.left)
		part := vals[done : done+int(want)]
		var defs []int16
		if fc.opt {
			defs = fc.defs[:want]
		}
		rows, got, err := guardRead(func() (int64, int, error) { return readBatch(fc.cr, want, part, defs) })
		if err == nil && rows != want {
			err = errShort
		}
		if err != nil {
			return 0, err
		}
		if fc.opt {
			k, err := spread(part, got, defs, bits, done)
			if err != nil {
				return 0, err
			}
			nulls += k
		}
		done += int(want)
		fc.left -= want
	}
	return nulls, nil
}

// guardRead runs one read of a column chunk reader under guard: the rows
// it covered, the values it read and its error.
func guardRead(read func() (int64, int, error)) (int64, int, error) {
	type counts struct {
		rows int64
		got  int
	}
	c, err := guard(func() (counts, error) {
		rows, got, err := read()
		return counts{rows, got}, err
	})
	return c.rows, c.got, err
}

// spread moves the got dense values at the front of vals to the rows whose
// definition level is 1, from the back so that no value is overwritten
// before it moves, zeroes the null rows, sets the validity bits of the
// rows (offset by first) and returns the null count. It fails, changing
// nothing, when the levels do not define got rows, as in a damaged file.
func spread[T any](vals []T, got int, defs []int16, bits []byte, first int) (int, error) {
	defined := 0
	for _, d := range defs {
		if d == 1 {
			defined++
		}
	}
	if defined != got {
		return 0, fmt.Errorf("%d values for %d defined rows", got, defined)
	}
	var zero T
	j := got - 1
	for i := len(defs) - 1; i >= 0; i-- {
		if defs[i] == 1 {
			vals[i] = vals[j]
			j--
			bitutil.SetBit(bits, first+i)
		} else {
			vals[i] = zero
		}
	}
	return len(defs) - got, nil
}

// readBools reads n booleans into a bitmap.
func (fc *flatColumn) readBools(n int, bits []byte) ([]*memory.Buffer, int, error) {
	if cap(fc.bools) < n {
		fc.bools = make([]bool, n)
	}
	vals := fc.bools[:n]
	nulls, err := readRows(fc, vals, bits, func(cr file.ColumnChunkReader, m int64, v []bool, d []int16) (int64, int, error) {
		return cr.(*file.BooleanColumnChunkReader).ReadBatch(m, v, d, nil)
	})
	if err != nil {
		return nil, 0, err
	}
	buf := zeroed(fc.mem, int(bitutil.BytesForBits(int64(n))))
	out := buf.Bytes()
	for i, v := range vals {
		if v {
			bitutil.SetBit(out, i)
		}
	}
	return []*memory.Buffer{buf}, nulls, nil
}

// readTexts reads n byte arrays into int32 offsets and one data buffer. The
// data buffer starts at the previous batch's size. When the batch's rows
// all come from one column chunk read by textPages, and only from its pages
// of dictionary indices, and the column is a string column, it returns as
// well their indices (codes, int32 by row, 0 at nulls) and the chunk's
// dictionary; else codes and dict are nil.
func (fc *flatColumn) readTexts(n int, bits []byte) (buffers []*memory.Buffer, nulls int, codes *memory.Buffer, dict *array.String, err error) {
	offBuf := sized(fc.mem, (n+1)*4)
	o := textOut{offs: arrow.Int32Traits.CastFromBytes(offBuf.Bytes()), data: memory.NewResizableBuffer(fc.textMem), bits: bits}
	o.offs[0] = 0
	o.data.Reserve(max(fc.dlen+fc.dlen/8, 4096))
	o.dbuf = o.data.Buf()
	fail := func(err error) ([]*memory.Buffer, int, *memory.Buffer, *array.String, error) {
		offBuf.Release()
		o.data.Release()
		if codes != nil {
			codes.Release()
		}
		return nil, 0, nil, nil, err
	}
	for row := 0; row < n; {
		if err := fc.advance(); err != nil {
			return fail(err)
		}
		want := min(int64(n-row), fc.left)
		if fc.pages == nil {
			rows, err := fc.readPage(&o, row, want)
			if err != nil {
				return fail(err)
			}
			row += int(rows)
			fc.left -= rows
			continue
		}
		if row == 0 && want == int64(n) && fc.typ.ID() == arrow.STRING {
			codes = sized(fc.mem, n*4)
			o.codes = arrow.Int32Traits.CastFromBytes(codes.Bytes())
		}
		if err := fc.pages.read(&o, row, int(want)); err != nil {
			return fail(err)
		}
		row += int(want)
		fc.left -= want
	}
	if codes != nil && o.plain {
		codes.Release()
		codes = nil
	}
	if codes != nil { // the rows came in one read, from fc.pages' chunk
		dict = fc.pages.dict
	}
	dlen := int(o.offs[n])
	o.data.ResizeNoShrink(dlen)
	fc.dlen = dlen
	return []*memory.Buffer{offBuf, o.data}, o.nulls, codes, dict, nil
}

// readPage reads at most want byte arrays of the current column chunk
// reader into o from row on, from one page at most: a page's values point
// into the page, so they are copied out before the next read. It returns
// the number of rows read.
func (fc *flatColumn) readPage(o *textOut, row int, want int64) (int64, error) {
	if int64(cap(fc.texts)) < want {
		fc.texts = make([]parquet.ByteArray, want)
	}
	vals := fc.texts[:want]
	var defs []int16
	if fc.opt {
		defs = fc.defs[:want]
	}
	rows, got, err := guardRead(func() (int64, int, error) {
		return fc.cr.(*file.ByteArrayColumnChunkReader).ReadBatchInPage(want, vals, defs, nil)
	})
	if err == nil && rows == 0 {
		err = errShort
	}
	if err != nil {
		return 0, err
	}
	dlen := int(o.offs[row])
	k := 0 // next dense value
	for i := range int(rows) {
		if fc.opt && defs[i] != 1 {
			o.offs[row+i+1] = int32(dlen)
			o.nulls++
			continue
		}
		v := vals[k]
		k++
		end := dlen + len(v)
		if end > math.MaxInt32 {
			return 0, errTextSize
		}
		o.reserve(end)
		copy(o.dbuf[dlen:], v)
		dlen = end
		o.offs[row+i+1] = int32(end)
		if fc.opt {
			bitutil.SetBit(o.bits, row+i)
		}
	}
	if k != got {
		return 0, fmt.Errorf("%d values for %d defined rows", got, k)
	}
	return rows, nil
}
