package checks

import (
	"encoding/binary"
	"math"
	"reflect"
	"slices"
	"testing"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// hashes replaces the hash of a unique or key check, to force collisions:
// h hashes a row's bytes, and a value's 64 bits as the bytes a row holding
// only that value would have.
func hashes(t *testing.T, c Check, h func([]byte) uint64) {
	t.Helper()
	d, ok := c.(*dupCheck)
	if !ok {
		t.Fatalf("check %T is not a dupCheck", c)
	}
	d.hash = h
	d.word = func(x uint64) uint64 { return h(binary.LittleEndian.AppendUint64([]byte{tagValue}, x)) }
}

func TestUnique(t *testing.T) {
	mem := checkedMem(t)
	// Non-null values 1 2 2 3 3 3 9: 5 of 7 belong to a duplicated value.
	// The cell that did not parse (row 9) is not a value.
	b := newBatch(t, mem, 1, col{"n", tInt, []any{1, 2, 3, 2, nil, 3, 3, 9, bad("3")}})
	b1, b2 := split(t, b, 4)
	release(t, b, b1, b2)
	tests := []struct {
		name  string
		hash  func([]byte) uint64
		limit int
		rows  []int64
	}{
		{"seeded hash", nil, 10, []int64{3, 6, 7, 2, 4}},
		{"every value collides", func([]byte) uint64 { return 42 }, 10, []int64{3, 6, 7, 2, 4}},
		{"collisions by length", func(b []byte) uint64 { return uint64(len(b)) }, 10, []int64{3, 6, 7, 2, 4}},
		{"listing capped inside a group", nil, 4, []int64{3, 6, 7, 2}},
		{"listing capped at a group", nil, 3, []int64{3, 6, 7}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, newRule(rules.UniqueSpec{}, atMost(0.7), "n"), envOf(b, tc.limit))
			if tc.hash != nil {
				hashes(t, c, tc.hash)
			}
			res := run(t, c, b)
			if res.Measure.Value != 5.0/7 || res.Verdict != report.Fail {
				t.Errorf("measure %v %v, want %v fail", res.Measure.Value, res.Verdict, 5.0/7)
			}
			count, rows, scores := listed(res)
			if count != 5 || !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("offending %d %v, want 5 %v", count, rows, tc.rows)
			}
			for i, s := range scores {
				if want := map[int64]float64{3: 3, 6: 3, 7: 3, 2: 2, 4: 2}[rows[i]]; s != want {
					t.Errorf("row %d scores %v, want its group's size %v", rows[i], s, want)
				}
			}
			if want := "5 of 7 values (71.43%) share their value with another row (2 duplicated values)"; res.Message != want {
				t.Errorf("message %q, want %q", res.Message, want)
			}
			if v := res.Offending.Rows[0].Values["n"]; v != int64(3) {
				t.Errorf("first listed value %v (%T), want int64 3", v, v)
			}
			sameResult(t, "merged", runMerged(t, c, b1, b2), res, 0)
		})
	}
}

// TestUniqueTwoPasses follows the Rescanner flow step by step with every
// hash colliding: the first pass can only suspect every value; the second
// groups by the actual values and counts exactly.
func TestUniqueTwoPasses(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"s", tString, []any{"a", "b", "a", "c", nil}})
	release(t, b)
	c := compile(t, newRule(rules.UniqueSpec{}, atMost(0), "s"), envOf(b, 10))
	hashes(t, c, func([]byte) uint64 { return 7 })
	first := c.NewAccumulator()
	observe(t, first, b)
	h := first.(*HashAccumulator)
	if all := slices.Concat(h.Hashes...); h.Of != 4 || !reflect.DeepEqual(all, []uint64{7, 7, 7, 7}) {
		t.Errorf("first pass %+v, want 4 values all under hash 7", h.HashCounts)
	}
	if got := first.Finish(); got.Measure.Value != 1 || got.Offending.Count != 4 {
		t.Errorf("first-pass result %v %+v, want the hash count 1 and 4 rows", got.Measure.Value, got.Offending)
	}
	second := h.SecondPass()
	observe(t, second, b)
	d := second.(*DuplicateAccumulator)
	if d.DuplicateState != (DuplicateState{Of: 4, Rows: 2, Groups: 1}) {
		t.Errorf("second pass %+v, want {4 2 1}", d.DuplicateState)
	}
	res := second.Finish()
	if count, rows, _ := listed(res); res.Measure.Value != 0.5 || count != 2 || !reflect.DeepEqual(rows, []int64{1, 3}) {
		t.Errorf("result %v, offending %d %v, want 0.5, 2 [1 3]", res.Measure.Value, count, rows)
	}
}

func TestUniqueFloats(t *testing.T) {
	mem := checkedMem(t)
	// -0 and 0 are one value; NaNs are one value.
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{0.0, math.Copysign(0, -1), math.NaN(), 1.5, math.NaN(), 2.5}})
	release(t, b)
	res := run(t, compile(t, newRule(rules.UniqueSpec{}, atMost(0), "x"), envOf(b, 10)), b)
	if count, rows, _ := listed(res); count != 4 || !reflect.DeepEqual(rows, []int64{1, 2, 3, 5}) {
		t.Errorf("offending %d %v, want 4 [1 2 3 5]", count, rows)
	}
	if v := res.Offending.Rows[2].Values["x"]; v != "NaN" {
		t.Errorf("NaN listed as %v, want its name", v)
	}
}

func TestUniqueNothingRepeats(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"b", tBool, []any{true, nil, false}})
	release(t, b)
	res := run(t, compile(t, newRule(rules.UniqueSpec{}, atMost(0), "b"), envOf(b, 10)), b)
	if res.Measure.Value != 0 || res.Verdict != report.Pass || res.Offending != nil {
		t.Errorf("result %+v, want 0, pass, nothing listed", res)
	}
	if want := "none of 2 values share their value with another row"; res.Message != want {
		t.Errorf("message %q, want %q", res.Message, want)
	}
}
