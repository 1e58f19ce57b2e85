package rowexpr

import (
	"fmt"
	"math"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

var (
	tsType  = &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
	int64T  = arrow.PrimitiveTypes.Int64
	floatT  = arrow.PrimitiveTypes.Float64
	stringT = arrow.BinaryTypes.String
	boolT   = arrow.FixedWidthTypes.Boolean
	dateT   = arrow.FixedWidthTypes.Date32
)

// testTypes are the columns every test compiles against.
var testTypes = map[string]arrow.DataType{
	"a": int64T, "b": int64T, "c": int64T,
	"x": floatT, "y": floatT,
	"s": stringT, "u": stringT,
	"p": boolT, "q": boolT,
	"ts": tsType, "d": dateT,
}

// testOrder is the order of testTypes' columns in a record.
var testOrder = []string{"a", "b", "c", "x", "y", "s", "u", "p", "q", "ts", "d"}

// record builds a record batch with the columns of testTypes from rows,
// each a map from column name to value (int64, float64, string, bool,
// time.Time); a missing or nil value is a null.
func record(t testing.TB, mem memory.Allocator, rows []map[string]any) arrow.RecordBatch {
	t.Helper()
	fields := make([]arrow.Field, len(testOrder))
	for i, name := range testOrder {
		fields[i] = arrow.Field{Name: name, Type: testTypes[name], Nullable: true}
	}
	b := array.NewRecordBuilder(mem, arrow.NewSchema(fields, nil))
	defer b.Release()
	for _, row := range rows {
		for i, name := range testOrder {
			v, ok := row[name]
			if !ok || v == nil {
				b.Field(i).AppendNull()
				continue
			}
			switch fb := b.Field(i).(type) {
			case *array.Int64Builder:
				fb.Append(v.(int64))
			case *array.Float64Builder:
				fb.Append(v.(float64))
			case *array.StringBuilder:
				fb.Append(v.(string))
			case *array.BooleanBuilder:
				fb.Append(v.(bool))
			case *array.TimestampBuilder:
				ts, err := arrow.TimestampFromTime(v.(time.Time), arrow.Microsecond)
				if err != nil {
					t.Fatal(err)
				}
				fb.Append(ts)
			case *array.Date32Builder:
				fb.Append(arrow.Date32FromTime(v.(time.Time)))
			default:
				t.Fatalf("no builder for column %s", name)
			}
		}
	}
	return b.NewRecordBatch()
}

// newRecord is record with a checked allocator, released at the end of
// the test, which then fails if any Arrow memory is left.
func newRecord(t *testing.T, rows []map[string]any) arrow.RecordBatch {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	rec := record(t, mem, rows)
	t.Cleanup(func() {
		rec.Release()
		mem.AssertSize(t, 0)
	})
	return rec
}

// rowEnv is row i of rows as expr's env: every column, nil when null.
func rowEnv(row map[string]any) map[string]any {
	env := make(map[string]any, len(testOrder))
	for _, name := range testOrder {
		v := row[name]
		if testTypes[name] == dateT && v != nil {
			v = v.(time.Time).Truncate(24 * time.Hour)
		}
		env[name] = v
	}
	return env
}

// truths writes a result as one letter a row: T, F or ? for unknown.
func truths(ts []Truth) string {
	b := make([]byte, len(ts))
	for i, t := range ts {
		b[i] = "?FT"[t]
	}
	return string(b)
}

// evalAll compiles src against testTypes and evaluates it on rec.
func evalAll(t testing.TB, src string, rec arrow.RecordBatch) ([]Truth, []float64, *Program) {
	t.Helper()
	p, err := Compile(src, testTypes)
	if err != nil {
		t.Fatalf("Compile(%q): %v", src, err)
	}
	out := make([]Truth, rec.NumRows())
	gap := make([]float64, rec.NumRows())
	if err := p.NewEvaluator().Eval(rec, out, gap); err != nil {
		t.Fatalf("Eval(%q): %v", src, err)
	}
	return out, gap, p
}

func date(s string) time.Time {
	t, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		t, err = time.Parse(time.DateOnly, s)
	}
	if err != nil {
		panic(fmt.Sprintf("bad test time %q", s))
	}
	return t.UTC()
}

var nan = math.NaN()
