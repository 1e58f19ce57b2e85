package source

import (
	"encoding/binary"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// packing is how a spill stores one column of one batch. A numeric column
// is stored in half its width when that is exact for every cell of the
// batch, null cells included: a scan of the spill rebuilds the very bits
// the batch held (see packer.pack and unpackColumn).
type packing uint8

const (
	packedPlain    packing = iota // as the batch holds it
	packedOffsets                 // 64-bit integers as uint32 offsets from the least valid value (packOffsets)
	packedDecimals                // float64 values as int32 mantissas of d decimals (packDecimals)
)

// maxDecimals is the most decimals d of packDecimals: 10^d (pow10, see
// cells.go) and an int32 mantissa are both exact in a float64.
const maxDecimals = 9

// packDecimals finds the fewest decimals d in 0..9 such that every value
// x[i] is float64(m[i]) / 10^d, bit for bit, for an int32 m[i], and writes
// those mantissas to m (len(m) >= len(x)). It returns false when there is
// none: a value needs more decimals or a mantissa outside int32, or it is
// NaN, infinite, -0 or subnormal.
//
// Both operands of the division are exact in a float64 and IEEE 754
// division is correctly rounded, so the quotient is the float64 nearest to
// the decimal m / 10^d: a value read from a text of at most d decimals
// (and at most 9 or so digits) comes back as it was parsed. The smallest d
// of a value also works for any larger d (10^k m / 10^(d+k) is the same
// number) unless the mantissa leaves int32, so d grows from 0 as values
// need it, and each value is checked at the final d: the decoding is
// verified for every value, which makes the packing exact by
// construction.
func packDecimals(x []float64, m []int32) (d int, ok bool) {
	p := pow10[0]
	for i := 0; i < len(x); i++ {
		v := x[i]
		if r, fits := mantissa(v, p); fits {
			m[i] = r
			continue
		}
		for {
			if d++; d > maxDecimals {
				return 0, false
			}
			p = pow10[d]
			if _, fits := mantissa(v, p); fits {
				break
			}
		}
		i = -1 // every value again at the new d
	}
	return d, true
}

// mantissa returns the int32 m with float64(m)/p == v bit for bit, and
// whether there is one (NaN and out of range products fail the bounds).
func mantissa(v, p float64) (int32, bool) {
	r := math.RoundToEven(v * p)
	if !(r >= math.MinInt32 && r <= math.MaxInt32) {
		return 0, false
	}
	m := int32(r)
	return m, math.Float64bits(float64(m)/p) == math.Float64bits(v)
}

// unpackDecimals reverses packDecimals: out[i] = float64(m[i]) / 10^d.
func unpackDecimals(m []int32, d int, out []float64) {
	p := pow10[d]
	out = out[:len(m)]
	for i, v := range m {
		out[i] = float64(v) / p
	}
}

// packOffsets writes the offsets of the valid values of x from the least
// of them, base, to m (len(m) >= len(x)), when they all fit in a uint32.
// valid is the validity bitmap of x (nil: all valid); a null cell must
// hold zero, as the readers make them, and its offset is left as it is.
// It returns false when the valid values span 2^32 or more or a null cell
// holds another value.
func packOffsets(x []int64, valid []byte, m []uint32) (base int64, ok bool) {
	lo, hi := int64(math.MaxInt64), int64(math.MinInt64)
	for i, v := range x {
		if valid != nil && !bitutil.BitIsSet(valid, i) {
			if v != 0 {
				return 0, false
			}
			continue
		}
		lo, hi = min(lo, v), max(hi, v)
	}
	if lo > hi { // no valid value
		return 0, true
	}
	if uint64(hi)-uint64(lo) > math.MaxUint32 { // the span, without overflow
		return 0, false
	}
	for i, v := range x {
		m[i] = uint32(uint64(v) - uint64(lo))
	}
	return lo, true
}

// unpackOffsets reverses packOffsets: out[i] = base + m[i], or zero where
// valid (nil: all valid) marks a null cell.
func unpackOffsets(m []uint32, base int64, valid []byte, out []int64) {
	out = out[:len(m)]
	for i, v := range m {
		out[i] = int64(uint64(base) + uint64(v))
	}
	if valid != nil {
		for i := range out {
			if !bitutil.BitIsSet(valid, i) {
				out[i] = 0
			}
		}
	}
}

// packedType returns the type a column of type t is stored as when packed
// with p.
func packedType(t arrow.DataType, p packing) arrow.DataType {
	switch p {
	case packedOffsets:
		return arrow.PrimitiveTypes.Uint32
	case packedDecimals:
		return arrow.PrimitiveTypes.Int32
	}
	return t
}

// packable returns the packing a column of type t may take besides
// packedPlain, or packedPlain.
func packable(t arrow.DataType) packing {
	switch t.ID() {
	case arrow.INT64, arrow.TIMESTAMP:
		return packedOffsets
	case arrow.FLOAT64:
		return packedDecimals
	}
	return packedPlain
}

// packer packs the columns of the batches a spill writes, in scratch
// memory of its own that the next batch reuses: the IPC writer has copied
// a batch out once its Write returns.
type packer struct {
	scratch [][]uint32 // by stored column
}

// pack returns a, column j of a batch, packed as compactly as is exact,
// with its packing and the parameter of that packing (packedOffsets: the
// base, packedDecimals: d). The caller releases the array returned.
func (pk *packer) pack(j int, a arrow.Array) (arrow.Array, packing, int64) {
	data := a.Data()
	p := packable(a.DataType())
	if p == packedPlain || data.Offset() != 0 || len(data.Buffers()) != 2 || data.Buffers()[1] == nil {
		a.Retain()
		return a, packedPlain, 0
	}
	if len(pk.scratch) <= j {
		pk.scratch = append(pk.scratch, make([][]uint32, j+1-len(pk.scratch))...)
	}
	n := a.Len()
	if cap(pk.scratch[j]) < n {
		pk.scratch[j] = make([]uint32, n)
	}
	out := pk.scratch[j][:n]
	var valid []byte
	if data.NullN() > 0 && data.Buffers()[0] != nil {
		valid = data.Buffers()[0].Bytes()
	}
	var param int64
	ok := false
	switch p {
	case packedOffsets:
		vals := arrow.Int64Traits.CastFromBytes(data.Buffers()[1].Bytes())[:n]
		param, ok = packOffsets(vals, valid, out)
	case packedDecimals:
		vals := arrow.Float64Traits.CastFromBytes(data.Buffers()[1].Bytes())[:n]
		var d int
		d, ok = packDecimals(vals, arrow.Int32Traits.CastFromBytes(arrow.Uint32Traits.CastToBytes(out)))
		param = int64(d)
	}
	if !ok {
		a.Retain()
		return a, packedPlain, 0
	}
	buffers := []*memory.Buffer{data.Buffers()[0], memory.NewBufferBytes(arrow.Uint32Traits.CastToBytes(out))}
	pd := array.NewData(packedType(a.DataType(), p), n, buffers, nil, data.NullN(), 0)
	defer pd.Release()
	return array.MakeFromData(pd), p, param
}

// unpackColumn rebuilds a column of type t from a, its packed form with
// packing p and parameter param, in memory of mem; the caller releases
// the array returned.
func unpackColumn(mem memory.Allocator, t arrow.DataType, a arrow.Array, p packing, param int64) arrow.Array {
	data := a.Data()
	n := a.Len()
	vals := memory.NewResizableBuffer(mem)
	vals.Resize(n * 8)
	var valid []byte
	bitmap := data.Buffers()[0]
	if data.NullN() > 0 && bitmap != nil {
		valid = bitmap.Bytes()
		if off := data.Offset(); off != 0 { // not written so, but read whatever comes
			valid = make([]byte, bitutil.BytesForBits(int64(n)))
			bitutil.CopyBitmap(bitmap.Bytes(), off, n, valid, 0)
			bitmap = memory.NewBufferBytes(valid)
		}
	}
	switch p {
	case packedOffsets:
		unpackOffsets(a.(*array.Uint32).Uint32Values(), param, valid, arrow.Int64Traits.CastFromBytes(vals.Bytes()))
	case packedDecimals:
		unpackDecimals(a.(*array.Int32).Int32Values(), int(param), arrow.Float64Traits.CastFromBytes(vals.Bytes()))
	}
	if valid == nil {
		bitmap = nil
	}
	out := array.NewData(t, n, []*memory.Buffer{bitmap, vals}, nil, data.NullN(), 0)
	vals.Release()
	defer out.Release()
	return array.MakeFromData(out)
}

// appendPackings appends the parameters of the packed columns of a
// spilled batch, in column order, to buf: a base as a varint, decimals as
// an unsigned one.
func appendPackings(buf []byte, packs []packing, params []int64) []byte {
	for j, p := range packs {
		switch p {
		case packedOffsets:
			buf = binary.AppendVarint(buf, params[j])
		case packedDecimals:
			buf = binary.AppendUvarint(buf, uint64(params[j]))
		}
	}
	return buf
}

// readPackings reverses appendPackings into params.
func readPackings(data []byte, packs []packing, params []int64) error {
	for j, p := range packs {
		var k int
		switch p {
		case packedOffsets:
			params[j], k = binary.Varint(data)
		case packedDecimals:
			var d uint64
			d, k = binary.Uvarint(data)
			if d > maxDecimals {
				k = 0
			}
			params[j] = int64(d)
		default:
			continue
		}
		if k <= 0 {
			return errDamaged
		}
		data = data[k:]
	}
	if len(data) != 0 {
		return errDamaged
	}
	return nil
}

// streamPackings returns the packing of each column of the schema of a
// stream of a spill whose columns have the types of stored, or an error
// when a column has another type.
func streamPackings(schema, stored *arrow.Schema) ([]packing, error) {
	if schema.NumFields() != stored.NumFields() {
		return nil, fmt.Errorf("%d columns, not %d", schema.NumFields(), stored.NumFields())
	}
	packs := make([]packing, stored.NumFields())
	for j, f := range stored.Fields() {
		t := schema.Field(j).Type
		switch p := packable(f.Type); {
		case arrow.TypeEqual(t, f.Type):
			packs[j] = packedPlain
		case p != packedPlain && arrow.TypeEqual(t, packedType(f.Type, p)):
			packs[j] = p
		default:
			return nil, fmt.Errorf("column %q of type %s, not %s", f.Name, t, f.Type)
		}
	}
	return packs, nil
}
