package checks

import (
	"fmt"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// class is how a check reads a column's Arrow type.
type class int

const (
	classOther   class = iota
	classInteger       // int8..int64, uint8..uint32: read as int64
	classNumber        // float32, float64: read as float64
	classString        // utf8, large_utf8, utf8_view
	classBoolean
	classTime // timestamp (any unit), date32, date64: read as int64 in the column's unit
)

// classOf returns the class of dt. uint64 is left out on purpose: its upper
// half does not fit the int64 every integer check reads.
func classOf(dt arrow.DataType) class {
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64, arrow.UINT8, arrow.UINT16, arrow.UINT32:
		return classInteger
	case arrow.FLOAT32, arrow.FLOAT64:
		return classNumber
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW:
		return classString
	case arrow.BOOL:
		return classBoolean
	case arrow.TIMESTAMP, arrow.DATE32, arrow.DATE64:
		return classTime
	}
	return classOther
}

// column is a column bound to its index in the schema of the batches.
type column struct {
	name  string
	index int
	typ   arrow.DataType
	class class
	// perSecond is, for time columns, how many of the column's units make a
	// second (1e6 for timestamp[us], 1/86400 for date32); 1 for others.
	perSecond float64
}

// bindColumn finds column name in env's schema.
func bindColumn(env *Env, name string) (column, error) {
	idx := env.Schema.FieldIndices(name)
	if len(idx) == 0 {
		return column{}, fmt.Errorf("column %q is not in the data", name)
	}
	if len(idx) > 1 {
		return column{}, fmt.Errorf("column %q appears %d times in the data", name, len(idx))
	}
	dt := env.Schema.Field(idx[0]).Type
	c := column{name: name, index: idx[0], typ: dt, class: classOf(dt), perSecond: 1}
	switch t := dt.(type) {
	case *arrow.TimestampType:
		c.perSecond = float64(1e9 / t.Unit.Multiplier())
	case *arrow.Date32Type:
		c.perSecond = 1.0 / 86400
	case *arrow.Date64Type:
		c.perSecond = 1e3
	}
	return c, nil
}

// bindOne binds the only column rule r reads; what names the rule's kind
// for the error.
func bindOne(r *rules.Rule, env *Env, what string) (column, error) {
	if len(r.Columns) != 1 {
		return column{}, fmt.Errorf("%s reads one column, the rule names %d", what, len(r.Columns))
	}
	return bindColumn(env, r.Columns[0])
}

// bindColumnOf binds the only column rule r reads and checks that its class
// is one of want.
func bindColumnOf(r *rules.Rule, env *Env, what string, want ...class) (column, error) {
	c, err := bindOne(r, env, what)
	if err != nil {
		return column{}, err
	}
	for _, w := range want {
		if c.class == w {
			return c, nil
		}
	}
	return column{}, fmt.Errorf("column %q holds %s; %s applies to %s", c.name, typeWords(c.typ), what, classList(want))
}

// typeWords names an Arrow type the way the policy would, with the Arrow
// name beside it: "numbers (float64)".
func typeWords(dt arrow.DataType) string {
	words := map[class]string{
		classInteger: "integers", classNumber: "numbers", classString: "strings",
		classBoolean: "booleans", classTime: "timestamps",
	}
	w, ok := words[classOf(dt)]
	switch {
	case dt.ID() == arrow.DATE32 || dt.ID() == arrow.DATE64:
		w = "dates"
	case !ok:
		w = "values"
	}
	return fmt.Sprintf("%s (%s)", w, dt)
}

func classList(cs []class) string {
	names := map[class][]string{
		classInteger: {"integers"}, classNumber: {"numbers"}, classString: {"strings"},
		classBoolean: {"booleans"}, classTime: {"dates", "timestamps"},
	}
	var words []string
	for _, c := range cs {
		words = append(words, names[c]...)
	}
	if len(words) == 1 {
		return words[0]
	}
	return strings.Join(words[:len(words)-1], ", ") + " and " + words[len(words)-1]
}

// in returns the column's array in batch b, after making sure the batch has
// the schema the check was compiled for.
func (c column) in(b *source.Batch) (arrow.Array, error) {
	if c.index >= int(b.Record.NumCols()) || b.Record.ColumnName(c.index) != c.name ||
		!arrow.TypeEqual(b.Record.Column(c.index).DataType(), c.typ) {
		return nil, fmt.Errorf("column %q: batch does not have the schema the rule was compiled for", c.name)
	}
	return b.Record.Column(c.index), nil
}

// valid reads an array's validity bitmap without a method call per value.
// The zero valid says every value is present.
type valid struct {
	bits   []byte
	offset int
}

func validOf(a arrow.Array) valid {
	if a.NullN() == 0 {
		return valid{}
	}
	return valid{bits: a.NullBitmapBytes(), offset: a.Data().Offset()}
}

// at reports whether element i holds a value.
func (v valid) at(i int) bool {
	return v.bits == nil || bitutil.BitIsSet(v.bits, v.offset+i)
}

// int64s returns the values of an integer or time array as int64 in the
// column's own unit. Null slots hold arbitrary values. Int64 arrays are read
// in place; narrower types are widened into *buf, which is reused.
func int64s(a arrow.Array, buf *[]int64) []int64 {
	switch a := a.(type) {
	case *array.Int64:
		return a.Int64Values()
	case *array.Timestamp:
		return widen(buf, a.TimestampValues())
	case *array.Date64:
		return widen(buf, a.Date64Values())
	case *array.Date32:
		return widen(buf, a.Date32Values())
	case *array.Int32:
		return widen(buf, a.Int32Values())
	case *array.Int16:
		return widen(buf, a.Int16Values())
	case *array.Int8:
		return widen(buf, a.Int8Values())
	case *array.Uint32:
		return widen(buf, a.Uint32Values())
	case *array.Uint16:
		return widen(buf, a.Uint16Values())
	case *array.Uint8:
		return widen(buf, a.Uint8Values())
	}
	panic(fmt.Sprintf("checks: int64s of %s", a.DataType()))
}

func widen[T ~int8 | ~int16 | ~int32 | ~int64 | ~uint8 | ~uint16 | ~uint32](buf *[]int64, src []T) []int64 {
	out := (*buf)[:0]
	for _, v := range src {
		out = append(out, int64(v))
	}
	*buf = out
	return out
}

// float64s returns the values of a float32 or float64 array as float64.
// Float64 arrays are read in place; float32 ones are widened into *buf.
func float64s(a arrow.Array, buf *[]float64) []float64 {
	switch a := a.(type) {
	case *array.Float64:
		return a.Float64Values()
	case *array.Float32:
		out := (*buf)[:0]
		for _, v := range a.Float32Values() {
			out = append(out, float64(v))
		}
		*buf = out
		return out
	}
	panic(fmt.Sprintf("checks: float64s of %s", a.DataType()))
}

// eachString calls f with every non-null value of a string array.
func eachString(a arrow.Array, f func(i int, s string)) {
	switch a := a.(type) {
	case *array.String:
		// The common case, written out: through the generic loop each
		// Value is a call by dictionary, not inlined.
		v := validOf(a)
		for i := range a.Len() {
			if v.at(i) {
				f(i, a.Value(i))
			}
		}
	case *array.LargeString:
		stringLoop(a, f)
	case *array.StringView:
		stringLoop(a, f)
	default:
		panic(fmt.Sprintf("checks: eachString of %s", a.DataType()))
	}
}

func stringLoop[A interface {
	arrow.Array
	Value(int) string
}](a A, f func(i int, s string)) {
	v := validOf(a)
	for i := range a.Len() {
		if v.at(i) {
			f(i, a.Value(i))
		}
	}
}
