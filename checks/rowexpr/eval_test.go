package rowexpr

import (
	"math"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// fixture has five rows with a null in most columns somewhere.
var fixture = []map[string]any{
	{"a": int64(1), "b": int64(2), "x": 0.5, "s": "apple", "p": true,
		"ts": date("2023-06-01T12:00:00Z"), "d": date("2023-06-01")},
	{"a": int64(5), "b": int64(5), "x": nan, "s": "Banana", "p": false,
		"ts": date("2024-01-01T00:00:00Z"), "d": date("2024-01-01")},
	{"b": int64(3), "x": -1.5,
		"ts": date("1969-12-31T23:59:59.5Z"), "d": date("1969-12-31")},
	{"a": int64(-7), "b": int64(0), "x": math.Inf(1), "s": "", "p": true,
		"d": date("2024-03-01")},
	{"a": int64(10), "s": "éclair", "p": false,
		"ts": date("2024-02-29T00:00:00Z")},
}

func TestEval(t *testing.T) {
	tests := []struct {
		src  string
		want string // one letter a row of fixture: T, F, ? (unknown)
		path Path
	}{
		// comparisons; a null makes the row unknown
		{`a <= b`, "TT?T?", Vectorized},
		{`a < b`, "TF?T?", Vectorized},
		{`a == 5`, "FT?FF", Vectorized},
		{`a != 5`, "TF?TT", Vectorized},
		{`b >= a`, "TT?T?", Vectorized},
		{`a < 2.5`, "TF?TF", Vectorized}, // int promoted to float
		{`s < "b"`, "TT?TF", Vectorized}, // byte order: "B" < "a"
		{`p == true`, "TF?TF", Vectorized},
		// NaN is a value: every comparison false but !=
		{`x > 0`, "TFFT?", Vectorized},
		{`x <= 0`, "FFTF?", Vectorized},
		{`x != x`, "FTFF?", Vectorized},
		{`x == x`, "TFTT?", Vectorized},
		// arithmetic; / is a float division, % by zero is unknown
		{`a + b == 3`, "TF?F?", Vectorized},
		{`a - b < 0`, "TF?T?", Vectorized},
		{`a * b > 20`, "FT?F?", Vectorized},
		{`a / b > 1`, "FF?F?", Vectorized},                   // -7/0 = -Inf
		{`b / 0 > 1`, "TTTF?", Vectorized},                   // 2/0 = +Inf; 0/0 = NaN
		{`a % b == 0`, "FT???", Vectorized},                  // 4th row: b is 0
		{`-a < 0`, "TT?FT", Vectorized},                      // unary minus
		{`a + 9223372036854775807 < 0`, "TT?FT", Vectorized}, // int64 wraps around, as in expr
		{`a ** 2 == 25`, "FT?FF", Vectorized},                // float power
		{`x * 2 > 0.5`, "TFFT?", Vectorized},
		// three-valued logic
		{`a > 2 || p`, "TT?TT", Vectorized},
		{`a > 2 && p`, "FF?FF", Vectorized},
		{`!(a > 2)`, "TF?TF", Vectorized},
		{`not p`, "FT?FT", Vectorized},
		{`a > 100 and b > 5`, "FFFFF", Vectorized}, // 3rd row: unknown and false
		{`a > 100 or b > 2`, "FTTF?", Vectorized},  // 3rd row: unknown or true,
		// null tests and ??
		{`a == nil`, "FFTFF", Vectorized},
		{`nil != s`, "TTFTT", Vectorized},
		{`a != nil && a > 2`, "FTFFT", Vectorized},
		{`(a ?? 0) >= 0`, "TTTFT", Vectorized},
		{`(a ?? b ?? 0) > 2`, "FTTFT", Vectorized},
		{`(s ?? "") == ""`, "FFTTF", Vectorized},
		// ternary: unknown when the condition is
		{`p ? a > 0 : b > 0`, "TT?F?", Vectorized},
		{`if p { a > 0 } else { x > 0 }`, "TF?F?", Vectorized},
		// in
		{`a in [1, 10]`, "TF?FT", Vectorized},
		{`a not in [1, 10]`, "FT?TF", Vectorized},
		{`a in [1.0, 5.5, "x"]`, "TF?FF", Vectorized},
		{`x in [0.5, 2]`, "TFFF?", Vectorized},
		{`s in ["apple", ""]`, "TF?TF", Vectorized},
		{`a in -10..1`, "TF?TF", Vectorized},
		{`a in 5..1`, "FF?FF", Vectorized}, // an empty range
		// strings
		{`lower(s) == "banana"`, "FT?FF", Vectorized},
		{`upper(s) == "ÉCLAIR"`, "FF?FT", Vectorized},
		{`len(s) == 6`, "FT?FT", Vectorized}, // characters, not bytes
		{`s matches "^[A-Z]"`, "FT?FF", Vectorized},
		{`s startsWith "B" or s endsWith "r"`, "FT?FT", Vectorized},
		{`s contains "an"`, "FT?FF", Vectorized},
		{`hasPrefix(s, "ap") || hasSuffix(s, "na")`, "TT?FF", Vectorized},
		{`trim(" " + s + " ") == s`, "TT?TT", Vectorized},
		{`trimPrefix(s, "Ban") == "ana"`, "FT?FF", Vectorized},
		{`s + "!" == "apple!"`, "TF?FF", Vectorized},
		// functions
		{`abs(a) > 5`, "FF?TT", Vectorized},
		{`round(x) == 1`, "TFFF?", Vectorized}, // half away from zero
		{`floor(x) == -2 || ceil(x) == 1`, "TFTF?", Vectorized},
		{`max(a, b) == 5`, "FT?F?", Vectorized},
		{`min(a, b, 3) == 1`, "TF?F?", Vectorized},
		{`sqrt(b) == 0`, "FFFT?", Vectorized},
		{`log(b) < 0`, "FFFT?", Vectorized}, // log(0) = -Inf
		{`exp(0) == 1 && int(x) == 0`, "TFFF?", Vectorized},
		{`float(a) / 2 == 0.5`, "TF?FF", Vectorized},
		// instants: timestamps and dates compare exactly
		{`ts < date("2024-01-01")`, "TFT?F", Vectorized},
		{`d <= ts`, "TTT??", Vectorized},
		{`d == ts`, "FTF??", Vectorized},
		{`ts > date("1969-12-31T23:59:59.25Z")`, "TTT?T", Vectorized},
		// outside the subset: on expr's machine; nulls make the row unknown
		{`ts.Year() == 2024`, "FTF?T", Mixed},
		{`string(a) == "1" || b > 2`, "TTTF?", Mixed},
		{`let z = a ?? 0; z >= 0`, "TTTFT", Interpreted},
		{`a > 0 && indexOf(s, "a") == 0`, "TF?FF", Mixed},
		{`all([a, b], # > 0)`, "TT?F?", Interpreted},
	}
	rec := newRecord(t, fixture)
	for _, tt := range tests {
		t.Run(tt.src, func(t *testing.T) {
			got, _, p := evalAll(t, tt.src, rec)
			if truths(got) != tt.want {
				t.Errorf("got %s, want %s", truths(got), tt.want)
			}
			if p.Path() != tt.path {
				t.Errorf("path %v (fallbacks %q), want %v", p.Path(), p.Fallbacks(), tt.path)
			}
		})
	}
}

// TestKleene checks and, or and not on every pair of true, false and
// unknown against the truth tables of Kleene's strong three-valued logic
// (S. C. Kleene, Introduction to Metamathematics, 1952, §64), which SQL
// uses for null.
func TestKleene(t *testing.T) {
	vals := []any{true, false, nil}
	var rows []map[string]any
	for _, p := range vals {
		for _, q := range vals {
			rows = append(rows, map[string]any{"p": p, "q": q})
		}
	}
	// Rows in order (p, q): TT TF T? FT FF F? ?T ?F ??
	tests := []struct{ src, want string }{
		{`p && q`, "TF?FFF?F?"},
		{`q and p`, "TF?FFF?F?"},
		{`p || q`, "TTTTF?T??"},
		{`q or p`, "TTTTF?T??"},
		{`!p`, "FFFTTT???"},
		{`not (p && q)`, "FT?TTT?T?"},
		{`p == q`, "TF?FT????"},
		{`p != q`, "FT?TF????"},
		{`p ? q : false`, "TF?FFF???"},
	}
	rec := newRecord(t, rows)
	for _, tt := range tests {
		got, _, _ := evalAll(t, tt.src, rec)
		if truths(got) != tt.want {
			t.Errorf("%s: got %s, want %s", tt.src, truths(got), tt.want)
		}
	}
}

func TestGap(t *testing.T) {
	tests := []struct {
		src      string
		measured bool
		want     []float64 // per fixture row
	}{
		{`a <= b - 4`, true, []float64{3, 4, 0, 0, 0}}, // 1 > -2 by 3, 5 > 1 by 4
		{`b > a`, true, []float64{0, 0, 0, 0, 0}},      // row 1: 5 > 5 false by 0
		{`x >= 1`, true, []float64{0.5, math.NaN(), 2.5, 0, 0}},
		{`ts >= d + duration("13h")`, true, []float64{3600, 13 * 3600, 0, 0, 0}}, // d + 13h on the machine
		{`ts >= date("2024-01-01")`, true, []float64{214*86400 - 12*3600, 0, 1704067200.5, 0, 0}},
		{`a > 0 && b > 0`, false, []float64{0, 0, 0, 1, 0}},
		{`s != "apple"`, false, []float64{1, 0, 0, 0, 0}},
	}
	rec := newRecord(t, fixture)
	for _, tt := range tests {
		got, gap, p := evalAll(t, tt.src, rec)
		if p.Measured() != tt.measured {
			t.Errorf("%s: Measured() = %v, want %v", tt.src, p.Measured(), tt.measured)
		}
		if tt.want == nil {
			continue
		}
		for i := range tt.want {
			w := tt.want[i]
			if got[i] == False && math.IsNaN(w) != math.IsNaN(gap[i]) || !math.IsNaN(w) && gap[i] != w {
				t.Errorf("%s: row %d (%v): gap %v, want %v", tt.src, i, got[i], gap[i], w)
			}
		}
	}
}

// TestLayouts reads narrower integers, float32, other string layouts,
// date64 and timestamps of every unit, and compares instants across units
// exactly (one nanosecond apart is apart).
func TestLayouts(t *testing.T) {
	unit := func(u arrow.TimeUnit) arrow.DataType { return &arrow.TimestampType{Unit: u} }
	cols := []struct {
		name string
		typ  arrow.DataType
		vals []any // the middle row is null
	}{
		{"i32", arrow.PrimitiveTypes.Int32, []any{int32(-5), int32(math.MaxInt32)}},
		{"u8", arrow.PrimitiveTypes.Uint8, []any{uint8(200), uint8(0)}},
		{"f32", arrow.PrimitiveTypes.Float32, []any{float32(0.5), float32(0.1)}},
		{"ls", arrow.BinaryTypes.LargeString, []any{"é", ""}},
		{"sv", arrow.BinaryTypes.StringView, []any{"a long string, longer than twelve bytes", "x"}},
		{"d64", arrow.FixedWidthTypes.Date64, []any{arrow.Date64(1704067200000), arrow.Date64(-86400000)}},
		{"tss", unit(arrow.Second), []any{arrow.Timestamp(1704067200), arrow.Timestamp(-1)}},
		{"tsms", unit(arrow.Millisecond), []any{arrow.Timestamp(1704067200001), arrow.Timestamp(-1)}},
		{"tsns", unit(arrow.Nanosecond), []any{arrow.Timestamp(1704067199999999999), arrow.Timestamp(-1)}},
	}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	fields := make([]arrow.Field, len(cols))
	arrs := make([]arrow.Array, len(cols))
	types := map[string]arrow.DataType{}
	for k, c := range cols {
		fields[k] = arrow.Field{Name: c.name, Type: c.typ, Nullable: true}
		types[c.name] = c.typ
		b := array.NewBuilder(mem, c.typ)
		for _, v := range []any{c.vals[0], nil, c.vals[1]} {
			if v == nil {
				b.AppendNull()
				continue
			}
			switch bb := b.(type) {
			case *array.Int32Builder:
				bb.Append(v.(int32))
			case *array.Uint8Builder:
				bb.Append(v.(uint8))
			case *array.Float32Builder:
				bb.Append(v.(float32))
			case *array.LargeStringBuilder:
				bb.Append(v.(string))
			case *array.StringViewBuilder:
				bb.Append(v.(string))
			case *array.Date64Builder:
				bb.Append(v.(arrow.Date64))
			case *array.TimestampBuilder:
				bb.Append(v.(arrow.Timestamp))
			}
		}
		arrs[k] = b.NewArray()
		b.Release()
	}
	rec := array.NewRecordBatch(arrow.NewSchema(fields, nil), arrs, 3)
	defer rec.Release()
	for _, a := range arrs {
		a.Release()
	}
	tests := []struct{ src, want string }{
		{`i32 + u8 == 195`, "T?F"},
		{`i32 == 2147483647 && u8 < 1`, "F?T"},
		{`f32 == 0.5`, "T?F"},
		{`f32 == 0.1`, "F?F"}, // float32(0.1) read as float64 is not 0.1
		{`f32 > 0.09 && f32 < 0.11 || f32 == 0.5`, "T?T"},
		{`len(ls) == 1 && sv contains "twelve"`, "T?F"},
		{`tsms > tss`, "T?T"},  // 1 ms after; -1 ms is after -1 s
		{`tsns < tss`, "T?F"},  // 1 ns before
		{`tsns < tsms`, "T?F"}, // -1 ns is after -1 ms
		{`d64 == tss`, "T?F"},
		{`d64 < date("1970-01-01") == (tss < date("1970-01-01"))`, "T?T"},
		{`tsns.Nanosecond() == 999999999`, "T?T"}, // on the machine
	}
	for _, tt := range tests {
		p, err := Compile(tt.src, types)
		if err != nil {
			t.Errorf("Compile(%q): %v", tt.src, err)
			continue
		}
		out := make([]Truth, 3)
		if err := p.NewEvaluator().Eval(rec, out, nil); err != nil {
			t.Errorf("Eval(%q): %v", tt.src, err)
			continue
		}
		if truths(out) != tt.want {
			t.Errorf("%s: got %s, want %s", tt.src, truths(out), tt.want)
		}
	}
}
