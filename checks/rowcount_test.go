package checks

import (
	"math"
	"testing"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestRowCount(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tInt, []any{1, nil, 3, 4, 5}})
	b1, b2 := split(t, b, 2)
	release(t, b, b1, b2)
	tests := []struct {
		tol  rules.Tolerance
		want report.Verdict
	}{
		{rules.Tolerance{Direction: rules.LowerIsWorse, Fail: rules.AtLeast(5)}, report.Pass},
		{rules.Tolerance{Direction: rules.LowerIsWorse, Fail: rules.AtLeast(6)}, report.Fail},
		{within(0, 5), report.Pass},
		{within(0, 4), report.Fail},
		{rules.Tolerance{Direction: rules.OutsideIsWorse, Warn: &rules.Limit{Lo: 10, Hi: math.Inf(1)}, Fail: rules.AtLeast(1)}, report.Warn},
	}
	for _, tc := range tests {
		c := compile(t, newRule(rules.RowCountSpec{}, tc.tol), envOf(b, 10))
		res := run(t, c, b)
		if res.Measure.Value != 5 || res.Verdict != tc.want {
			t.Errorf("rows with warn %v fail %v: %v %v, want 5 %v", tc.tol.Warn, tc.tol.Fail, res.Measure.Value, res.Verdict, tc.want)
		}
		if res.Message != "the data has 5 rows" {
			t.Errorf("message %q", res.Message)
		}
		sameResult(t, "merged", runMerged(t, c, b1, b2), res, 0)
	}
}
