package source

import (
	"encoding/binary"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// nullSet holds the cell texts read as null.
type nullSet struct {
	lens   uint64 // bit n is set when some token is n bytes long (n < 64)
	long   bool   // some token is 64 bytes or longer
	tokens []string
}

func newNullSet(tokens []string) *nullSet {
	ns := &nullSet{tokens: tokens}
	for _, t := range tokens {
		if len(t) < 64 {
			ns.lens |= 1 << len(t)
		} else {
			ns.long = true
		}
	}
	return ns
}

// has reports whether b is a null token.
func (ns *nullSet) has(b []byte) bool {
	if len(b) < 64 {
		if ns.lens&(1<<len(b)) == 0 {
			return false
		}
	} else if !ns.long {
		return false
	}
	for _, t := range ns.tokens {
		if string(b) == t {
			return true
		}
	}
	return false
}

// column accumulates the cells of one CSV column for a batch, parsing them
// straight into Arrow buffers: a validity bitmap and the values (int64,
// float64 and timestamp as 8-byte values, date as 4-byte days, booleans as a
// bitmap, strings as int32 offsets plus bytes).
type column struct {
	kind      kind
	mem       memory.Allocator
	nulls     *nullSet
	nullFirst bool // test for a null token before parsing; else only when parsing fails

	n, nullCount int
	valid        *memory.Buffer
	bits         []byte
	vals         *memory.Buffer
	i64          []int64
	f64          []float64
	i32          []int32 // dates, or string offsets
	vbits        []byte  // boolean values
	data         *memory.Buffer
	dbuf         []byte
	dlen         int // bytes in data; kept after finish as a size guess
	invalid      []InvalidCell

	// The last date read by a date or timestamp column, as written and
	// as days since 1970-01-01: successive cells often share it, and then
	// it is not parsed again. All zero bytes (no date) at first.
	day  [10]byte
	days int64
}

func newColumn(k kind, nulls *nullSet, mem memory.Allocator) *column {
	c := &column{kind: k, nulls: nulls, mem: mem, nullFirst: k == kString}
	// When no null token parses as the kind, as none of the default ones
	// does, a cell that parses is no null token, and the test can wait
	// until parsing fails.
	fit := [...]uint8{kInt: fitInt, kFloat: fitFloat, kBool: fitBool, kTimestamp: fitTimestamp, kDate: fitDate}[k]
	for _, t := range nulls.tokens {
		if fits([]byte(t))&fit != 0 {
			c.nullFirst = true
		}
	}
	return c
}

// start readies the column for a batch of up to rows rows. The validity
// bitmap starts with every cell valid, as most are; append clears the bit
// of a null cell. The values are written by append, null cells as zero,
// so their buffers are not cleared first.
func (c *column) start(rows int) {
	c.n, c.nullCount, c.invalid = 0, 0, nil
	c.valid = sized(c.mem, int(bitutil.BytesForBits(int64(rows))))
	c.bits = c.valid.Bytes()
	memory.Set(c.bits, 0xff)
	switch c.kind {
	case kInt, kTimestamp:
		c.vals = sized(c.mem, rows*8)
		c.i64 = arrow.Int64Traits.CastFromBytes(c.vals.Bytes())
	case kFloat:
		c.vals = sized(c.mem, rows*8)
		c.f64 = arrow.Float64Traits.CastFromBytes(c.vals.Bytes())
	case kDate:
		c.vals = sized(c.mem, rows*4)
		c.i32 = arrow.Int32Traits.CastFromBytes(c.vals.Bytes())
	case kBool:
		c.vals = zeroed(c.mem, int(bitutil.BytesForBits(int64(rows))))
		c.vbits = c.vals.Bytes()
	case kString:
		c.vals = sized(c.mem, (rows+1)*4)
		c.i32 = arrow.Int32Traits.CastFromBytes(c.vals.Bytes())
		c.i32[0] = 0
		// The previous batch's size is a good guess.
		size := max(64<<10, c.dlen+c.dlen/8)
		c.data = memory.NewResizableBuffer(c.mem)
		c.data.Reserve(size)
		c.dbuf, c.dlen = c.data.Buf(), 0
	}
}

// sized allocates a buffer of n bytes, of any content.
func sized(mem memory.Allocator, n int) *memory.Buffer {
	b := memory.NewResizableBuffer(mem)
	b.Resize(n)
	return b
}

// zeroed allocates a buffer of n zero bytes.
func zeroed(mem memory.Allocator, n int) *memory.Buffer {
	b := sized(mem, n)
	memory.Set(b.Bytes(), 0)
	return b
}

// append adds one cell.
func (c *column) append(b []byte) {
	i := c.n
	c.n++
	if c.nullFirst && c.nulls.has(b) {
		c.null(i)
		return
	}
	ok := true
	switch c.kind {
	case kInt:
		c.i64[i], ok = parseInt(b)
	case kFloat:
		c.f64[i], ok = parseFloat(b)
	case kTimestamp:
		if ok = len(b) >= 19 && c.date(b); ok {
			c.i64[i], ok = timeOfDay(b, c.days)
		} else {
			c.i64[i] = 0
		}
	case kDate:
		ok = len(b) == 10 && c.date(b)
		c.i32[i] = 0
		if ok {
			c.i32[i] = int32(c.days)
		}
	case kBool:
		var v bool
		v, ok = parseBool(b)
		if v {
			bitutil.SetBit(c.vbits, i)
		}
	case kString:
		end := c.dlen + len(b)
		if end > len(c.dbuf) {
			c.data.Reserve(max(end, 2*len(c.dbuf)))
			c.dbuf = c.data.Buf()
		}
		copy(c.dbuf[c.dlen:], b)
		c.dlen = end
		c.i32[i+1] = int32(end)
	}
	if !ok {
		c.fail(i, b)
	}
}

// fail makes cell i, whose text b did not parse, null: invalid unless a
// null token. The parsers return zero when they fail.
func (c *column) fail(i int, b []byte) {
	c.null(i)
	if c.nullFirst || !c.nulls.has(b) {
		c.invalid = append(c.invalid, InvalidCell{Row: i, Text: string(b)})
	}
}

// appendCells adds the cells cells[0], cells[stride], ... of buf, as
// append does one by one. Integer and number columns whose null tokens
// do not parse take a loop of their own.
func (c *column) appendCells(buf []byte, cells []span, stride int) {
	switch {
	case c.kind == kFloat && !c.nullFirst:
		appendNumbers(c, c.f64, buf, cells, stride, parseFloat)
	case c.kind == kInt && !c.nullFirst:
		appendNumbers(c, c.i64, buf, cells, stride, parseInt)
	default:
		for k := 0; k < len(cells); k += stride {
			c.append(buf[cells[k].start:cells[k].end])
		}
	}
}

// appendNumbers is appendCells for a column of numbers dst whose null
// tokens do not parse by parse: a cell that does not parse is null.
func appendNumbers[T int64 | float64](c *column, dst []T, buf []byte, cells []span, stride int, parse func([]byte) (T, bool)) {
	for k := 0; k < len(cells); k += stride {
		b := buf[cells[k].start:cells[k].end]
		i := c.n
		c.n++
		v, ok := parse(b)
		dst[i] = v
		if !ok {
			c.fail(i, b)
		}
	}
}

// date sets c.days to the day of the date at the start of b (which has at
// least 10 bytes), false when it is not a date; the text of the last date
// read is remembered and not parsed again.
func (c *column) date(b []byte) bool {
	if binary.LittleEndian.Uint64(b) == binary.LittleEndian.Uint64(c.day[:]) && b[8] == c.day[8] && b[9] == c.day[9] {
		return true // the same ten bytes, compared without a call
	}
	days, ok := parseYMD(b)
	if ok {
		copy(c.day[:], b)
		c.days = days
	}
	return ok
}

// null makes cell i null, its value zero (or, for strings, empty).
func (c *column) null(i int) {
	c.nullCount++
	bitutil.ClearBit(c.bits, i)
	switch c.kind {
	case kInt, kTimestamp:
		c.i64[i] = 0
	case kFloat:
		c.f64[i] = 0
	case kDate:
		c.i32[i] = 0
	case kString:
		c.i32[i+1] = int32(c.dlen)
	}
}

// finish returns the column's cells as an array and lets go of the batch's
// buffers.
func (c *column) finish() arrow.Array {
	n := c.n
	if c.nullCount == 0 {
		c.valid.Release()
		c.valid = nil
	} else {
		c.valid.ResizeNoShrink(int(bitutil.BytesForBits(int64(n))))
		if tail := n % 8; tail != 0 { // the bits past the last cell
			c.bits[n/8] &= byte(1)<<tail - 1
		}
	}
	buffers := []*memory.Buffer{c.valid, c.vals}
	switch c.kind {
	case kInt, kTimestamp, kFloat:
		c.vals.ResizeNoShrink(n * 8)
	case kDate:
		c.vals.ResizeNoShrink(n * 4)
	case kBool:
		c.vals.ResizeNoShrink(int(bitutil.BytesForBits(int64(n))))
	case kString:
		c.vals.ResizeNoShrink((n + 1) * 4)
		c.data.ResizeNoShrink(c.dlen)
		buffers = append(buffers, c.data)
	}
	data := array.NewData(c.kind.dataType(), n, buffers, nil, c.nullCount, 0)
	arr := array.MakeFromData(data)
	data.Release()
	c.release()
	return arr
}

// release drops the column's references to its buffers.
func (c *column) release() {
	for _, b := range []*memory.Buffer{c.valid, c.vals, c.data} {
		if b != nil {
			b.Release()
		}
	}
	c.valid, c.vals, c.data = nil, nil, nil
	c.bits, c.i64, c.f64, c.i32, c.vbits, c.dbuf = nil, nil, nil, nil, nil, nil
}
