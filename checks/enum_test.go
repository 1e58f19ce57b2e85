package checks

import (
	"math"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

func TestEnum(t *testing.T) {
	mem := checkedMem(t)
	const jan1 = 1704067200
	tests := []struct {
		name string
		c    col
		spec rules.EnumSpec
		rows []int64
		msg  string
	}{
		{"strings compare exactly", col{"s", tString, []any{"A", "B", "Z", nil, "a"}},
			rules.EnumSpec{Values: []string{"A", "B"}}, []int64{3, 5}, "2 of 4 values (50%) are outside the list A, B"},
		{"integers compare numerically", col{"n", tInt, []any{1, 2, 3, nil, 1}},
			rules.EnumSpec{Values: []string{"1.0", "2.5"}, Numbers: []float64{1, 2.5}}, []int64{2, 3}, "2 of 4 values (50%) are outside the list 1.0, 2.5"},
		{"narrow integers", col{"n", arrow.PrimitiveTypes.Int32, []any{7, 8}},
			rules.EnumSpec{Values: []string{"8"}, Numbers: []float64{8}}, []int64{1}, "1 of 2 values (50%) are outside the list 8"},
		{"floats: -0 is 0, NaN is never a member", col{"x", tFloat, []any{1.0, math.Copysign(0, -1), math.NaN(), 2.0}},
			rules.EnumSpec{Values: []string{"0", "1"}, Numbers: []float64{0, 1}}, []int64{3, 4}, "2 of 4 values (50%) are outside the list 0, 1"},
		{"float32, members rounded as the data were", col{"x", arrow.PrimitiveTypes.Float32, []any{0.1, 0.25}},
			rules.EnumSpec{Values: []string{"0.1"}, Numbers: []float64{0.1}}, []int64{2}, "1 of 2 values (50%) are outside the list 0.1"},
		{"booleans by their words", col{"b", tBool, []any{true, false, nil, true}},
			rules.EnumSpec{Values: []string{"True"}}, []int64{2}, "1 of 3 values (33.33%) are outside the list True"},
		{"dates as seconds", col{"d", tDate, []any{19723, 19724}},
			rules.EnumSpec{Values: []string{"2024-01-01"}, Numbers: []float64{jan1}}, []int64{2}, "1 of 2 values (50%) are outside the list 2024-01-01"},
		{"timestamps to the microsecond", col{"t", tTime, []any{jan1*1_000_000 + 1, jan1 * 1_000_000}},
			rules.EnumSpec{Values: []string{"2024-01-01T00:00:00.000001Z"}, Numbers: []float64{jan1 + 1e-6}}, []int64{2},
			"1 of 2 values (50%) are outside the list 2024-01-01T00:00:00.000001Z"},
		{"no value breaks", col{"s", tString, []any{"A", nil}},
			rules.EnumSpec{Values: []string{"A"}}, nil, "none of 1 value are outside the list A"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := newBatch(t, mem, 1, tc.c)
			release(t, b)
			res := run(t, compile(t, newRule(tc.spec, atMost(0), tc.c.name), envOf(b, 10)), b)
			count, rows, _ := listed(res)
			if count != int64(len(tc.rows)) || !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("offending %d %v, want %v", count, rows, tc.rows)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
		})
	}
}

func TestEnumMerge(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"s", tString, []any{"x", "a", "y", nil, "b", "z", "a"}})
	b1, b2 := split(t, b, 3)
	release(t, b, b1, b2)
	c := compile(t, newRule(rules.EnumSpec{Values: []string{"a", "b"}}, atMost(0.5), "s"), envOf(b, 2))
	want := run(t, c, b)
	sameResult(t, "enum", runMerged(t, c, b1, b2), want, 0)
	if count, rows, _ := listed(want); count != 3 || !reflect.DeepEqual(rows, []int64{1, 3}) {
		t.Errorf("offending %d %v, want 3 [1 3] (equal scores keep the first rows)", count, rows)
	}
	if s := want.Measure.Value; s != 0.5 || want.Verdict.String() != "pass" {
		t.Errorf("measure %v %v, want 0.5 pass", s, want.Verdict)
	}
}

// TestTextSet: a set of few members (kept by first byte) and one of many
// (a map) answer as a map of the members would.
func TestTextSet(t *testing.T) {
	probes := []string{"", "north", "nort", "northh", "North", "south", "s", "lab", "la", "é", "éa", "\x00", "depot", "x9"}
	for _, members := range [][]string{
		nil,
		{""},
		{"north", "south", "east", "west", "lab", "depot"},
		{"n", "north", "nor", "", "é", "north"},
		{"a", "b", "c", "d", "e", "f", "g", "h", "i", "lab", "north"},
	} {
		set := newTextSet(members)
		want := map[string]bool{}
		for _, m := range members {
			want[m] = true
		}
		for _, p := range append(probes, members...) {
			if got := set.has(p); got != want[p] {
				t.Errorf("members %q: has(%q) = %v, want %v", members, p, got, want[p])
			}
		}
	}
}
