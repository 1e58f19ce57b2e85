package source

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
)

// The Arrow types of the six column types a policy can declare
// (Options.Types takes these; any other declared type is an error).
var (
	tInt64     arrow.DataType = arrow.PrimitiveTypes.Int64
	tFloat64   arrow.DataType = arrow.PrimitiveTypes.Float64
	tString    arrow.DataType = arrow.BinaryTypes.String
	tBoolean   arrow.DataType = arrow.FixedWidthTypes.Boolean
	tTimestamp arrow.DataType = arrow.FixedWidthTypes.Timestamp_us // microseconds, UTC
	tDate      arrow.DataType = arrow.FixedWidthTypes.Date32
)

// kind is one of the six declarable types, as the CSV reader and the
// converters handle them.
type kind uint8

const (
	kString kind = iota
	kInt
	kFloat
	kBool
	kTimestamp
	kDate
)

func (k kind) dataType() arrow.DataType {
	switch k {
	case kInt:
		return tInt64
	case kFloat:
		return tFloat64
	case kBool:
		return tBoolean
	case kTimestamp:
		return tTimestamp
	case kDate:
		return tDate
	}
	return tString
}

// kindOf returns the kind whose Arrow type is t, or false when t is not one
// of the six declarable types.
func kindOf(t arrow.DataType) (kind, bool) {
	for k := kString; k <= kDate; k++ {
		if arrow.TypeEqual(t, k.dataType()) {
			return k, true
		}
	}
	return 0, false
}

// typeName names t in messages: the policy's word for the six declarable
// types, Arrow's name otherwise.
func typeName(t arrow.DataType) string {
	k, ok := kindOf(t)
	if !ok {
		return t.String()
	}
	return [...]string{"string", "integer", "number", "boolean", "timestamp", "date"}[k]
}

// normalType is the type a column stored as t is read as when the policy
// declares none: integers that fit in int64 widen to int64, floats to
// float64, string variants and string dictionaries to utf8, dates to date32,
// and timestamps in seconds, milliseconds or microseconds to
// timestamp[us, UTC] (a timestamp without a time zone is taken as UTC). All
// of these are lossless. Other types (uint64, timestamp[ns], decimals,
// binary, nested types) stay as stored.
func normalType(t arrow.DataType) arrow.DataType {
	switch t.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64, arrow.UINT8, arrow.UINT16, arrow.UINT32:
		return tInt64
	case arrow.FLOAT16, arrow.FLOAT32, arrow.FLOAT64:
		return tFloat64
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW:
		return tString
	case arrow.DATE32, arrow.DATE64:
		return tDate
	case arrow.TIMESTAMP:
		if t.(*arrow.TimestampType).Unit != arrow.Nanosecond {
			return tTimestamp
		}
	case arrow.DICTIONARY:
		if v := normalType(t.(*arrow.DictionaryType).ValueType); arrow.TypeEqual(v, tString) {
			return tString
		}
	}
	return t
}

// Format is the layout of an input file.
type Format int

// The formats Open recognises.
const (
	CSV Format = iota
	Parquet
	ArrowFile
	ArrowStream
)

func (f Format) String() string {
	switch f {
	case CSV:
		return "csv"
	case Parquet:
		return "parquet"
	case ArrowFile:
		return "arrow-file"
	case ArrowStream:
		return "arrow-stream"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}
