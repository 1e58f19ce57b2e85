package checks

import (
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestClosedAndRequired(t *testing.T) {
	// The plan reads only x; the data has x, y and z.
	env := &Env{
		Schema:      arrow.NewSchema([]arrow.Field{{Name: "x", Type: tInt}}, nil),
		DataColumns: []string{"x", "y", "z"},
	}
	count := rules.Tolerance{Direction: rules.HigherIsWorse, Fail: rules.AtMost(0)}
	tests := []struct {
		name    string
		rule    *rules.Rule
		want    float64
		verdict report.Verdict
		msg     string
	}{
		{"closed, two undeclared", newRule(rules.ClosedSpec{Allowed: []string{"x", "w"}}, count), 2, report.Fail,
			`2 columns of the data are not declared in the policy: "y", "z"`},
		{"closed, one undeclared", newRule(rules.ClosedSpec{Allowed: []string{"x", "z"}}, count), 1, report.Fail,
			`1 column of the data is not declared in the policy: "y"`},
		{"closed, all declared", newRule(rules.ClosedSpec{Allowed: []string{"z", "y", "x", "v"}}, count), 0, report.Pass,
			"every column of the data is declared in the policy"},
		{"required, one absent", newRule(rules.RequiredSpec{}, count, "z", "v", "x"), 1, report.Fail,
			`1 required column is absent from the data: "v"`},
		{"required, all present", newRule(rules.RequiredSpec{}, count, "y", "z"), 0, report.Pass,
			"every required column is in the data"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, tc.rule, env)
			a := c.NewAccumulator()
			if err := a.Merge(c.NewAccumulator()); err != nil {
				t.Fatal(err)
			}
			res := a.Finish()
			if float64(res.Measure.Value) != tc.want || res.Verdict != tc.verdict || res.Message != tc.msg {
				t.Errorf("%v %v %q, want %v %v %q", res.Measure.Value, res.Verdict, res.Message, tc.want, tc.verdict, tc.msg)
			}
		})
	}
}

// TestMergeOtherCheck: accumulators of different checks do not merge.
func TestMergeOtherCheck(t *testing.T) {
	env := &Env{Schema: arrow.NewSchema([]arrow.Field{{Name: "x", Type: tInt}}, nil), DataColumns: []string{"x"}}
	kinds := []rules.Spec{rules.NullsSpec{}, rules.TypeSpec{Type: rules.TypeInteger}, rules.UniqueSpec{},
		rules.BoundSpec{Bound: rules.KindMinimum}, rules.SummarySpec{Stat: rules.StatMean}, rules.RowCountSpec{},
		rules.RequiredSpec{}}
	for _, spec := range kinds {
		a := compile(t, newRule(spec, atMost(0), "x"), env).NewAccumulator()
		b := compile(t, newRule(spec, atMost(0), "x"), env).NewAccumulator()
		if err := a.Merge(b); err == nil {
			t.Errorf("%s: merging another check's accumulator: no error", spec.Kind())
		}
	}
}
