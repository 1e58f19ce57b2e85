package checks

import (
	"reflect"
	"testing"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestType(t *testing.T) {
	mem := checkedMem(t)
	// 7 rows: 2 missing, 5 non-null cells of which 2 did not parse.
	b := newBatch(t, mem, 11, col{"n", tInt, []any{1, bad("1.5"), nil, 4, bad("four"), nil, 7}})
	release(t, b)
	env := envOf(b, 1)
	tests := []struct {
		name    string
		tol     rules.Tolerance
		verdict report.Verdict
	}{
		{"at the fail limit passes", atMost(0.4), report.Pass},
		{"above the fail limit fails", atMost(0.39), report.Fail},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			res := run(t, compile(t, newRule(rules.TypeSpec{Type: rules.TypeInteger}, tc.tol, "n"), env), b)
			if res.Measure.Value != 0.4 || res.Verdict != tc.verdict {
				t.Errorf("measure %v verdict %v, want 0.4 %v", res.Measure.Value, res.Verdict, tc.verdict)
			}
			count, rows, _ := listed(res)
			if count != 2 || !reflect.DeepEqual(rows, []int64{12}) {
				t.Errorf("offending %d %v, want 2 with [12] listed (cap 1)", count, rows)
			}
			if got := res.Offending.Rows[0]; got.Values["n"] != "1.5" || got.Line != 13 {
				t.Errorf("listed row %+v, want the text 1.5 on line 13", got)
			}
			if want := "2 of 5 non-null cells (40%) fail to parse as integers"; res.Message != want {
				t.Errorf("message %q, want %q", res.Message, want)
			}
		})
	}
}

func TestTypeMerge(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"d", tDate, []any{bad("2024-02-30"), 19000, nil, bad("x"), 19001}})
	b1, b2 := split(t, b, 2)
	release(t, b, b1, b2)
	c := compile(t, newRule(rules.TypeSpec{Type: rules.TypeDate}, atMost(0), "d"), envOf(b, 5))
	want := run(t, c, b)
	sameResult(t, "type", runMerged(t, c, b1, b2), want, 0)
	if s := c.NewAccumulator().(*TypeAccumulator); s.TypeState != (TypeState{}) {
		t.Errorf("fresh state %+v", s.TypeState)
	}
	if count, rows, _ := listed(want); count != 2 || !reflect.DeepEqual(rows, []int64{1, 4}) {
		t.Errorf("offending %d %v, want 2 [1 4]", count, rows)
	}
}
