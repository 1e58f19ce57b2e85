package checks

import (
	"reflect"
	"testing"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestNulls(t *testing.T) {
	mem := checkedMem(t)
	// Rows 1..6: two missing values (rows 2 and 5) and one cell that did not
	// parse (row 4), which is not missing.
	b := newBatch(t, mem, 1, col{"w", tFloat, []any{1.0, nil, 3.0, bad("x"), nil, 6.0}})
	release(t, b)
	env := envOf(b, 10)
	tests := []struct {
		name    string
		tol     rules.Tolerance
		verdict report.Verdict
	}{
		{"at the fail limit passes", atMost(2.0 / 6), report.Pass},
		{"above the fail limit fails", atMost(0.33), report.Fail},
		{"warn only", rules.Tolerance{Warn: rules.AtMost(0.1)}, report.Warn},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, newRule(rules.NullsSpec{}, tc.tol, "w"), env)
			res := run(t, c, b)
			if got := float64(res.Measure.Value); got != 2.0/6 {
				t.Errorf("measure %v, want %v", got, 2.0/6)
			}
			if res.Verdict != tc.verdict {
				t.Errorf("verdict %v, want %v", res.Verdict, tc.verdict)
			}
			count, rows, _ := listed(res)
			if count != 2 || !reflect.DeepEqual(rows, []int64{2, 5}) {
				t.Errorf("offending %d %v, want 2 [2 5]", count, rows)
			}
			if want := "2 of 6 rows (33.33%) are missing a value"; res.Message != want {
				t.Errorf("message %q, want %q", res.Message, want)
			}
		})
	}
}

func TestNullsState(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"w", tInt, []any{nil, nil, nil, 4, nil}})
	release(t, b)
	c := compile(t, newRule(rules.NullsSpec{}, atMost(0), "w"), envOf(b, 2))
	a := c.NewAccumulator()
	observe(t, a, b)
	s := a.(*NullsAccumulator).NullsState
	if s != (NullsState{Rows: 5, Nulls: 4}) {
		t.Errorf("state %+v, want {5 4}", s)
	}
	res := a.Finish()
	count, rows, _ := listed(res)
	if count != 4 || !reflect.DeepEqual(rows, []int64{1, 2}) {
		t.Errorf("offending %d %v, want 4 rows listed as [1 2] (capped at 2)", count, rows)
	}
	if res.Offending.Rows[0].Line != 2 || res.Offending.Rows[0].Values["w"] != nil {
		t.Errorf("first row %+v, want line 2 and a null w", res.Offending.Rows[0])
	}
}

func TestNullsMerge(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"s", tString, []any{"a", nil, bad(""), nil, "e", nil, "g"}})
	b1, b2 := split(t, b, 3)
	release(t, b, b1, b2)
	c := compile(t, newRule(rules.NullsSpec{}, atMost(0.1), "s"), envOf(b, 2))
	sameResult(t, "nulls", runMerged(t, c, b1, b2), run(t, c, b), 0)
}

func TestNullsNoRows(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"w", tInt, []any{}})
	release(t, b)
	res := run(t, compile(t, newRule(rules.NullsSpec{}, atMost(0), "w"), envOf(b, 2)), b)
	if res.Measure.Value != 0 || res.Verdict != report.Pass || res.Offending != nil {
		t.Errorf("empty column: %+v, want measure 0, pass, nothing listed", res)
	}
}
