package checks

import (
	"regexp"
	"slices"
	"testing"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// finalAccumulator runs c over the batches, both passes, and returns the
// accumulator a gate would ask.
func finalAccumulator(t *testing.T, c Check, bs ...*source.Batch) Accumulator {
	t.Helper()
	a := c.NewAccumulator()
	observe(t, a, bs...)
	if r, ok := a.(Rescanner); ok {
		if next := r.SecondPass(); next != nil {
			a = next
			observe(t, a, bs...)
		}
	}
	return a
}

// rejected asks j about every batch and returns the data-row numbers it
// rejects.
func rejected(t *testing.T, j RowJudge, bs ...*source.Batch) []int64 {
	t.Helper()
	var rows []int64
	for _, b := range bs {
		bad := make([]bool, b.Record.NumRows())
		if err := j.Reject(b, bad); err != nil {
			t.Fatalf("Reject rows %d-: %v", b.FirstRow, err)
		}
		for i, x := range bad {
			if x {
				rows = append(rows, b.FirstRow+int64(i))
			}
		}
	}
	return rows
}

// TestReject checks, for every row-level kind, that the rows a gate
// rejects are exactly the offending rows the result counts and lists, with
// the data in one batch and cut in two; and that the other kinds are not
// row judges.
func TestReject(t *testing.T) {
	mem := checkedMem(t)
	whole := newBatch(t, mem, 1,
		col{"x", tFloat, []any{1.0, nil, 5.0, bad("abc"), -2.0, 5.0, 9.5, nil, 1.0}},
		col{"s", tString, []any{"ab", "abc", nil, "x", "ab", "toolong", "ab", "b1", "ab"}},
		col{"n", tInt, []any{1, 2, 3, 4, 5, 6, 7, 8, 1}},
	)
	first, second := split(t, whole, 4)
	release(t, whole, first, second)

	tests := []struct {
		rule *rules.Rule
		want []int64 // data rows rejected; nil for a kind that judges no row
	}{
		{newRule(rules.TypeSpec{Type: rules.TypeNumber}, atMost(0), "x"), []int64{4}},
		{newRule(rules.NullsSpec{}, atMost(0.5), "x"), []int64{2, 8}},
		{newRule(rules.NullsSpec{}, atMost(0), "s"), []int64{3}},
		{newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 0}, atMost(0), "x"), []int64{5}},
		{newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 5, Exclusive: true}, atMost(0), "x"), []int64{3, 6, 7}},
		{newRule(rules.EnumSpec{Values: []string{"ab", "abc"}}, atMost(0), "s"), []int64{4, 6, 8}},
		{newRule(rules.PatternSpec{Pattern: "^a", Regexp: regexp.MustCompile("^a")}, atMost(0), "s"), []int64{4, 6, 8}},
		{newRule(rules.LengthSpec{Bound: rules.KindMinLength, Length: 2}, atMost(0), "s"), []int64{4}},
		{newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 3}, atMost(1), "s"), []int64{6}},
		{newRule(rules.RowSpec{Name: "r", Expr: "x < n"}, atMost(0), "x", "n"), []int64{1, 3, 7, 9}}, // rows 2, 4 and 8 read a null
		{newRule(rules.UniqueSpec{}, atMost(0), "x"), []int64{1, 3, 6, 9}},
		{newRule(rules.KeySpec{}, atMost(0), "x", "s"), []int64{1, 9}},
		{newRule(rules.KeySpec{}, atMost(0), "n"), []int64{1, 9}},
		{newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 1), "x"), nil},
		{newRule(rules.RowCountSpec{}, within(0, 1)), nil},
		{newRule(rules.RequiredSpec{}, atMost(0), "x"), nil},
		{newRule(rules.ClosedSpec{Allowed: []string{"x"}}, atMost(0)), nil},
	}
	for _, tt := range tests {
		t.Run(tt.rule.ID, func(t *testing.T) {
			c := compile(t, tt.rule, envOf(whole, 100))
			for _, bs := range [][]*source.Batch{{whole}, {first, second}} {
				a := finalAccumulator(t, c, bs...)
				j, ok := a.(RowJudge)
				if ok != (tt.want != nil) {
					t.Fatalf("%T is a row judge: %v, want %v", a, ok, tt.want != nil)
				}
				if !ok {
					continue
				}
				got := rejected(t, j, bs...)
				if !slices.Equal(got, tt.want) {
					t.Errorf("%d batches: rejects rows %v, want %v", len(bs), got, tt.want)
				}
				count, rows, _ := listed(a.Finish())
				slices.Sort(rows)
				if count != int64(len(got)) || !slices.Equal(rows, got) {
					t.Errorf("%d batches: result counts %d and lists %v, the gate rejects %v", len(bs), count, rows, got)
				}
				// Asking again gives the same answer and leaves the result as it was.
				if again := rejected(t, j, bs...); !slices.Equal(again, got) {
					t.Errorf("asked again, rejects %v", again)
				}
				if count2, _, _ := listed(a.Finish()); count2 != count {
					t.Errorf("Reject changed the count from %d to %d", count, count2)
				}
			}
		})
	}
}
