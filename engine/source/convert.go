package source

import (
	"math"
	"unicode/utf8"
	"unsafe"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// converter turns a column as a Parquet or Arrow file stores it into the
// type the Set reads it as. Values that do not convert become null and are
// listed with their text.
type converter func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell)

// newConverter returns the converter from stored type from to type to: nil
// when they are the same, false when no conversion exists.
//
// Conversions: integers, floats and decimals to number; integers, integral
// floats within range and unsigned values up to 2^63-1 to integer; anything
// flat to string (binary only when it is UTF-8); timestamps of any unit and
// dates to timestamp (nanoseconds rounded down to microseconds); dates and
// whole-day timestamps to date; booleans to boolean. Strings convert to all
// six types by the cell grammars of the CSV reader, and dictionaries convert
// as their values do.
func newConverter(from, to arrow.DataType) (converter, bool) {
	if arrow.TypeEqual(from, to) {
		return nil, true
	}
	k, ok := kindOf(to)
	if !ok {
		return nil, false
	}
	vt := from
	if d, ok := from.(*arrow.DictionaryType); ok {
		vt = d.ValueType
	}
	switch k {
	case kInt:
		if g := int64Getter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewInt64Builder(mem), g)
			}, true
		}
	case kFloat:
		if g := float64Getter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewFloat64Builder(mem), g)
			}, true
		}
	case kBool:
		if g := boolGetter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewBooleanBuilder(mem), g)
			}, true
		}
	case kTimestamp:
		if g := timestampGetter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewTimestampBuilder(mem, tTimestamp.(*arrow.TimestampType)), g)
			}, true
		}
	case kDate:
		if g := dateGetter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewDate32Builder(mem), g)
			}, true
		}
	case kString:
		if g := stringGetter(vt); g != nil {
			return func(a arrow.Array, mem memory.Allocator) (arrow.Array, []InvalidCell) {
				return convert(a, array.NewStringBuilder(mem), g)
			}, true
		}
	}
	return nil, false
}

// getter makes, from an array of stored values, a function that reads
// element i as a T, or false when it does not convert.
type getter[T any] func(values arrow.Array) func(i int) (T, bool)

// appender is the part of an Arrow builder that convert uses.
type appender[T any] interface {
	Append(T)
	AppendNull()
	Reserve(int)
	NewArray() arrow.Array
	Release()
}

// convert builds the converted array of a, element by element.
func convert[T any, B appender[T]](a arrow.Array, b B, g getter[T]) (arrow.Array, []InvalidCell) {
	defer b.Release()
	values, index := a, func(i int) int { return i }
	if d, ok := a.(*array.Dictionary); ok {
		values, index = d.Dictionary(), d.GetValueIndex
	}
	get := g(values)
	b.Reserve(a.Len())
	var bad []InvalidCell
	for i := 0; i < a.Len(); i++ {
		if a.IsNull(i) {
			b.AppendNull()
			continue
		}
		j := index(i)
		if values.IsNull(j) {
			b.AppendNull()
			continue
		}
		v, ok := get(j)
		if !ok {
			b.AppendNull()
			bad = append(bad, InvalidCell{Row: i, Text: values.ValueStr(j)})
			continue
		}
		b.Append(v)
	}
	return b.NewArray(), bad
}

// Families of stored types.
func isSigned(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64:
		return true
	}
	return false
}

func isUnsigned(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64:
		return true
	}
	return false
}

func isFloat(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.FLOAT16, arrow.FLOAT32, arrow.FLOAT64:
		return true
	}
	return false
}

func isText(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW, arrow.BINARY, arrow.LARGE_BINARY, arrow.BINARY_VIEW:
		return true
	}
	return false
}

func isDecimal(t arrow.DataType) bool {
	switch t.ID() {
	case arrow.DECIMAL32, arrow.DECIMAL64, arrow.DECIMAL128, arrow.DECIMAL256:
		return true
	}
	return false
}

// signedAt reads an array of signed integers.
func signedAt(a arrow.Array) func(int) int64 {
	switch a := a.(type) {
	case *array.Int8:
		return func(i int) int64 { return int64(a.Value(i)) }
	case *array.Int16:
		return func(i int) int64 { return int64(a.Value(i)) }
	case *array.Int32:
		return func(i int) int64 { return int64(a.Value(i)) }
	}
	return a.(*array.Int64).Value
}

// unsignedAt reads an array of unsigned integers.
func unsignedAt(a arrow.Array) func(int) uint64 {
	switch a := a.(type) {
	case *array.Uint8:
		return func(i int) uint64 { return uint64(a.Value(i)) }
	case *array.Uint16:
		return func(i int) uint64 { return uint64(a.Value(i)) }
	case *array.Uint32:
		return func(i int) uint64 { return uint64(a.Value(i)) }
	}
	return a.(*array.Uint64).Value
}

// floatAt reads an array of floats.
func floatAt(a arrow.Array) func(int) float64 {
	switch a := a.(type) {
	case *array.Float16:
		return func(i int) float64 { return float64(a.Value(i).Float32()) }
	case *array.Float32:
		return func(i int) float64 { return float64(a.Value(i)) }
	}
	return a.(*array.Float64).Value
}

// textAt reads an array of strings or binaries as bytes, valid while a is.
func textAt(a arrow.Array) func(int) []byte {
	switch a := a.(type) {
	case *array.String:
		return func(i int) []byte { return stringBytes(a.Value(i)) }
	case *array.LargeString:
		return func(i int) []byte { return stringBytes(a.Value(i)) }
	case *array.StringView:
		return func(i int) []byte { return stringBytes(a.Value(i)) }
	case *array.Binary:
		return a.Value
	case *array.LargeBinary:
		return a.Value
	}
	return a.(*array.BinaryView).Value
}

// stringBytes views s as bytes without copying; the parsers only read them.
func stringBytes(s string) []byte { return unsafe.Slice(unsafe.StringData(s), len(s)) }

// timestampMicros reads an array of timestamps as microseconds, rounding
// nanoseconds down; false when the value overflows.
func timestampMicros(a arrow.Array) func(int) (int64, bool) {
	ts := a.(*array.Timestamp)
	switch ts.DataType().(*arrow.TimestampType).Unit {
	case arrow.Second:
		return func(i int) (int64, bool) { return mulCheck(int64(ts.Value(i)), 1e6) }
	case arrow.Millisecond:
		return func(i int) (int64, bool) { return mulCheck(int64(ts.Value(i)), 1e3) }
	case arrow.Nanosecond:
		return func(i int) (int64, bool) { return floorDiv(int64(ts.Value(i)), 1e3), true }
	}
	return func(i int) (int64, bool) { return int64(ts.Value(i)), true }
}

// mulCheck returns v*m, false on overflow.
func mulCheck(v, m int64) (int64, bool) {
	if v > math.MaxInt64/m || v < math.MinInt64/m {
		return 0, false
	}
	return v * m, true
}

// floorDiv divides rounding towards minus infinity.
func floorDiv(v, d int64) int64 {
	q := v / d
	if v%d != 0 && v < 0 {
		q--
	}
	return q
}

const microsPerDay = 86400 * 1e6

func int64Getter(t arrow.DataType) getter[int64] {
	switch {
	case isSigned(t):
		return func(a arrow.Array) func(int) (int64, bool) {
			at := signedAt(a)
			return func(i int) (int64, bool) { return at(i), true }
		}
	case isUnsigned(t):
		return func(a arrow.Array) func(int) (int64, bool) {
			at := unsignedAt(a)
			return func(i int) (int64, bool) { v := at(i); return int64(v), v <= math.MaxInt64 }
		}
	case isFloat(t):
		return func(a arrow.Array) func(int) (int64, bool) {
			at := floatAt(a)
			return func(i int) (int64, bool) {
				f := at(i)
				if f != math.Trunc(f) || f < -(1<<63) || f >= 1<<63 {
					return 0, false
				}
				return int64(f), true
			}
		}
	case isText(t):
		return func(a arrow.Array) func(int) (int64, bool) {
			at := textAt(a)
			return func(i int) (int64, bool) { return parseInt(at(i)) }
		}
	}
	return nil
}

func float64Getter(t arrow.DataType) getter[float64] {
	switch {
	case isSigned(t):
		return func(a arrow.Array) func(int) (float64, bool) {
			at := signedAt(a)
			return func(i int) (float64, bool) { return float64(at(i)), true }
		}
	case isUnsigned(t):
		return func(a arrow.Array) func(int) (float64, bool) {
			at := unsignedAt(a)
			return func(i int) (float64, bool) { return float64(at(i)), true }
		}
	case isFloat(t):
		return func(a arrow.Array) func(int) (float64, bool) {
			at := floatAt(a)
			return func(i int) (float64, bool) { return at(i), true }
		}
	case isDecimal(t):
		// The decimal text parsed by the number grammar rounds correctly.
		return func(a arrow.Array) func(int) (float64, bool) {
			return func(i int) (float64, bool) { return parseFloat([]byte(a.ValueStr(i))) }
		}
	case isText(t):
		return func(a arrow.Array) func(int) (float64, bool) {
			at := textAt(a)
			return func(i int) (float64, bool) { return parseFloat(at(i)) }
		}
	}
	return nil
}

func boolGetter(t arrow.DataType) getter[bool] {
	switch {
	case t.ID() == arrow.BOOL:
		return func(a arrow.Array) func(int) (bool, bool) {
			b := a.(*array.Boolean)
			return func(i int) (bool, bool) { return b.Value(i), true }
		}
	case isText(t):
		return func(a arrow.Array) func(int) (bool, bool) {
			at := textAt(a)
			return func(i int) (bool, bool) { return parseBool(at(i)) }
		}
	}
	return nil
}

func timestampGetter(t arrow.DataType) getter[arrow.Timestamp] {
	switch t.ID() {
	case arrow.TIMESTAMP:
		return func(a arrow.Array) func(int) (arrow.Timestamp, bool) {
			at := timestampMicros(a)
			return func(i int) (arrow.Timestamp, bool) { v, ok := at(i); return arrow.Timestamp(v), ok }
		}
	case arrow.DATE32:
		return func(a arrow.Array) func(int) (arrow.Timestamp, bool) {
			d := a.(*array.Date32)
			return func(i int) (arrow.Timestamp, bool) { return arrow.Timestamp(int64(d.Value(i)) * microsPerDay), true }
		}
	case arrow.DATE64:
		return func(a arrow.Array) func(int) (arrow.Timestamp, bool) {
			d := a.(*array.Date64)
			return func(i int) (arrow.Timestamp, bool) {
				v, ok := mulCheck(int64(d.Value(i)), 1e3)
				return arrow.Timestamp(v), ok
			}
		}
	}
	if isText(t) {
		return func(a arrow.Array) func(int) (arrow.Timestamp, bool) {
			at := textAt(a)
			return func(i int) (arrow.Timestamp, bool) { v, ok := parseTimestamp(at(i)); return arrow.Timestamp(v), ok }
		}
	}
	return nil
}

func dateGetter(t arrow.DataType) getter[arrow.Date32] {
	switch t.ID() {
	case arrow.DATE32:
		return func(a arrow.Array) func(int) (arrow.Date32, bool) {
			d := a.(*array.Date32)
			return func(i int) (arrow.Date32, bool) { return d.Value(i), true }
		}
	case arrow.DATE64:
		return func(a arrow.Array) func(int) (arrow.Date32, bool) {
			d := a.(*array.Date64)
			return func(i int) (arrow.Date32, bool) {
				return arrow.Date32(floorDiv(int64(d.Value(i)), 86400*1e3)), true
			}
		}
	case arrow.TIMESTAMP:
		return func(a arrow.Array) func(int) (arrow.Date32, bool) {
			at := timestampMicros(a)
			return func(i int) (arrow.Date32, bool) {
				v, ok := at(i)
				return arrow.Date32(floorDiv(v, microsPerDay)), ok && v%microsPerDay == 0
			}
		}
	}
	if isText(t) {
		return func(a arrow.Array) func(int) (arrow.Date32, bool) {
			at := textAt(a)
			return func(i int) (arrow.Date32, bool) { v, ok := parseDate(at(i)); return arrow.Date32(v), ok }
		}
	}
	return nil
}

func stringGetter(t arrow.DataType) getter[string] {
	switch {
	case isText(t):
		return func(a arrow.Array) func(int) (string, bool) {
			at := textAt(a)
			return func(i int) (string, bool) { b := at(i); return string(b), utf8.Valid(b) }
		}
	case arrow.IsNested(t.ID()) || t.ID() == arrow.DICTIONARY || t.ID() == arrow.EXTENSION:
		return nil
	}
	return func(a arrow.Array) func(int) (string, bool) {
		return func(i int) (string, bool) { return a.ValueStr(i), true }
	}
}
