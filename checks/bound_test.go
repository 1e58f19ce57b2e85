package checks

import (
	"math"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestBoundFloat(t *testing.T) {
	mem := checkedMem(t)
	// Rows 1..8; row 6 is missing.
	b := newBatch(t, mem, 1, col{"w", tFloat, []any{1.0, 5.0, math.NaN(), 200.0, 150.0, nil, 151.0, -3.0}})
	release(t, b)
	env := envOf(b, 10)
	tests := []struct {
		name   string
		spec   rules.BoundSpec
		count  int64
		rows   []int64
		scores []float64
		msg    string
	}{
		{"maximum", rules.BoundSpec{Bound: rules.KindMaximum, Value: 150},
			3, []int64{3, 4, 7}, []float64{math.Inf(1), 50, 1}, "3 of 7 values (42.86%) are above 150"},
		{"exclusive maximum", rules.BoundSpec{Bound: rules.KindMaximum, Value: 150, Exclusive: true},
			4, []int64{3, 4, 7, 5}, []float64{math.Inf(1), 50, 1, 0}, "4 of 7 values (57.14%) are at or above 150"},
		{"minimum", rules.BoundSpec{Bound: rules.KindMinimum, Value: 1},
			2, []int64{3, 8}, []float64{math.Inf(1), 4}, "2 of 7 values (28.57%) are below 1"},
		{"exclusive minimum", rules.BoundSpec{Bound: rules.KindMinimum, Value: 1, Exclusive: true},
			3, []int64{3, 8, 1}, []float64{math.Inf(1), 4, 0}, "3 of 7 values (42.86%) are at or below 1"},
		{"nothing breaks", rules.BoundSpec{Bound: rules.KindMinimum, Value: math.Inf(-1)},
			1, []int64{3}, []float64{math.Inf(1)}, "1 of 7 values (14.29%) are below -Inf"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res := run(t, compile(t, newRule(tc.spec, atMost(0), "w"), env), b)
			count, rows, scores := listed(res)
			if count != tc.count || !reflect.DeepEqual(rows, tc.rows) || !reflect.DeepEqual(scores, tc.scores) {
				t.Errorf("offending %d %v %v, want %d %v %v", count, rows, scores, tc.count, tc.rows, tc.scores)
			}
			if want := float64(tc.count) / 7; float64(res.Measure.Value) != want {
				t.Errorf("measure %v, want %v", res.Measure.Value, want)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
		})
	}
}

// TestBoundFloat32: on a float32 column the bound is rounded as the data
// were: 0.1 stored as float32 is 0.100000001 but is not above 0.1.
func TestBoundFloat32(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", arrow.PrimitiveTypes.Float32, []any{0.1, 0.2}})
	release(t, b)
	res := run(t, compile(t, newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 0.1}, atMost(0), "x"), envOf(b, 5)), b)
	if count, rows, _ := listed(res); count != 1 || !reflect.DeepEqual(rows, []int64{2}) {
		t.Errorf("offending %d %v, want 1 [2]", count, rows)
	}
}

// TestBoundListing: the listing keeps the rows farthest beyond the bound,
// worst first, up to the cap; ties keep the earlier row; the count stays
// exact. Merged accumulators list the same rows.
func TestBoundListing(t *testing.T) {
	mem := checkedMem(t)
	vals := []any{10, 3, 12, 10, 1, 15, 11, 2, 12}
	b := newBatch(t, mem, 1, col{"n", tInt, vals})
	b1, b2 := split(t, b, 4)
	release(t, b, b1, b2)
	c := compile(t, newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 9}, atMost(0), "n"), envOf(b, 4))
	res := run(t, c, b)
	count, rows, scores := listed(res)
	if count != 6 || !reflect.DeepEqual(rows, []int64{6, 3, 9, 7}) || !reflect.DeepEqual(scores, []float64{6, 3, 3, 2}) {
		t.Errorf("offending %d %v %v, want 6 [6 3 9 7] [6 3 3 2]", count, rows, scores)
	}
	if v := res.Offending.Rows[0].Values["n"]; v != int64(15) {
		t.Errorf("worst row's value %v (%T), want int64 15", v, v)
	}
	sameResult(t, "merged", runMerged(t, c, b1, b2), res, 0)
}

// TestBoundVerdicts: a share exactly at the fail limit passes; above it
// fails; the warn limit works the same way below it.
func TestBoundVerdicts(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"n", tInt, []any{1, 2, 3, 4}})
	release(t, b)
	env := envOf(b, 0)
	spec := rules.BoundSpec{Bound: rules.KindMaximum, Value: 3} // 1 of 4 breaks: 0.25
	tests := []struct {
		warn, fail float64
		want       report.Verdict
	}{
		{0.25, 0.5, report.Pass},
		{0.2, 0.25, report.Warn},
		{0.1, 0.2, report.Fail},
		{0, 0.24, report.Fail},
	}
	for _, tc := range tests {
		tol := rules.Tolerance{Warn: rules.AtMost(tc.warn), Fail: rules.AtMost(tc.fail)}
		res := run(t, compile(t, newRule(spec, tol, "n"), env), b)
		if res.Verdict != tc.want {
			t.Errorf("share 0.25 with warn %v fail %v: %v, want %v", tc.warn, tc.fail, res.Verdict, tc.want)
		}
		if res.Offending == nil || res.Offending.Count != 1 || len(res.Offending.Rows) != 0 {
			t.Errorf("listing cap 0: %+v, want a count of 1 and no rows", res.Offending)
		}
	}
}

// TestIntRange: bounds on integer columns become the allowed whole
// numbers exactly, saturating at the ends of int64.
func TestIntRange(t *testing.T) {
	const lo, hi = math.MinInt64, math.MaxInt64
	tests := []struct {
		bound   rules.Kind
		v       float64
		excl    bool
		wantLo  int64
		wantHi  int64
		comment string
	}{
		{rules.KindMinimum, 0.5, false, 1, hi, "ceil"},
		{rules.KindMinimum, -0.5, false, 0, hi, "ceil of a negative"},
		{rules.KindMinimum, 2, true, 3, hi, "exclusive whole"},
		{rules.KindMinimum, 2.5, true, 3, hi, "exclusive fraction"},
		{rules.KindMaximum, 2.5, false, lo, 2, "floor"},
		{rules.KindMaximum, 2, true, lo, 1, "exclusive whole"},
		{rules.KindMaximum, -2.5, true, lo, -3, "exclusive negative fraction"},
		{rules.KindMinimum, 1e19, false, hi, lo, "above every int64: nothing allowed"},
		{rules.KindMaximum, -1e19, false, hi, lo, "below every int64: nothing allowed"},
		{rules.KindMinimum, -1e19, false, lo, hi, "below every int64: everything allowed"},
		{rules.KindMaximum, 1e19, false, lo, hi, "above every int64: everything allowed"},
		{rules.KindMaximum, 0x1p63, true, lo, hi, "2^63 exclusive"},
	}
	for _, tc := range tests {
		gotLo, gotHi := intRange(rules.BoundSpec{Bound: tc.bound, Value: tc.v, Exclusive: tc.excl}, 1)
		if gotLo != tc.wantLo || gotHi != tc.wantHi {
			t.Errorf("%s %v exclusive %v (%s): [%d, %d], want [%d, %d]", tc.bound, tc.v, tc.excl, tc.comment, gotLo, gotHi, tc.wantLo, tc.wantHi)
		}
	}
}

// TestBoundTime: bounds on timestamps and dates are seconds since the
// epoch, compared exactly in the column's unit; scores are in seconds.
func TestBoundTime(t *testing.T) {
	mem := checkedMem(t)
	const jan1 = 1704067200 // 2024-01-01T00:00:00Z
	const us = 1_000_000
	ts := newBatch(t, mem, 1, col{"at", tTime, []any{jan1*us - 1, jan1 * us, jan1*us + 1, (jan1 - 3600) * us}})
	ds := newBatch(t, mem, 1, col{"on", tDate, []any{19722, 19723, 19724}}) // 2023-12-31, 2024-01-01, 2024-01-02
	release(t, ts, ds)
	tests := []struct {
		name   string
		spec   rules.BoundSpec
		batch  int
		rows   []int64
		scores []float64
		msg    string
	}{
		{name: "timestamp minimum", spec: rules.BoundSpec{Bound: rules.KindMinimum, Value: jan1, Text: "2024-01-01T00:00:00Z"},
			rows: []int64{4, 1}, scores: []float64{3600, 1e-6}, msg: "2 of 4 values (50%) are below 2024-01-01T00:00:00Z"},
		{name: "timestamp exclusive maximum to the microsecond", spec: rules.BoundSpec{Bound: rules.KindMaximum, Value: jan1 + 1e-6, Exclusive: true},
			rows: []int64{3}, scores: []float64{0}, msg: "1 of 4 values (25%) are at or above 2024-01-01T00:00:00.000001Z"},
		{name: "date maximum", batch: 1, spec: rules.BoundSpec{Bound: rules.KindMaximum, Value: jan1, Text: "2024-01-01"},
			rows: []int64{3}, scores: []float64{86400}, msg: "1 of 3 values (33.33%) are above 2024-01-01"},
		{name: "date minimum at noon", batch: 1, spec: rules.BoundSpec{Bound: rules.KindMinimum, Value: jan1 + 43200},
			rows: []int64{1, 2}, scores: []float64{129600, 43200}, msg: "2 of 3 values (66.67%) are below 2024-01-01T12:00:00Z"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b, name := ts, "at"
			if tc.batch == 1 {
				b, name = ds, "on"
			}
			res := run(t, compile(t, newRule(tc.spec, atMost(0), name), envOf(b, 10)), b)
			_, rows, scores := listed(res)
			if !reflect.DeepEqual(rows, tc.rows) || !closeAll(scores, tc.scores, 1e-9) {
				t.Errorf("offending %v %v, want %v %v", rows, scores, tc.rows, tc.scores)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
		})
	}
}

func closeAll(got, want []float64, tol float64) bool {
	if len(got) != len(want) {
		return false
	}
	for i := range got {
		if math.Abs(got[i]-want[i]) > tol*math.Max(1, math.Abs(want[i])) {
			return false
		}
	}
	return true
}
