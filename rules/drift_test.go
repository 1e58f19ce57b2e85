package rules

import (
	"reflect"
	"strings"
	"testing"
)

// TestDriftRules: the forms of a drift mapping, the rules each makes, and
// their tolerances.
func TestDriftRules(t *testing.T) {
	psi := Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.1), Fail: AtMost(0.25)}
	type rule struct {
		id  string
		s   DriftSpec
		tol Tolerance
	}
	cases := []struct {
		name, drift string
		want        []rule
	}{
		{"one measure, default", "{baseline: b.json, measure: psi}",
			[]rule{{"columns.a.drift.psi", DriftSpec{Baseline: "b.json", Measure: DriftPSI}, psi}}},
		{"one measure, tolerance", "{reference: ok.csv, measure: ks, tolerance: {warn: 2%, fail: 0.2}}",
			[]rule{{"columns.a.drift.ks", DriftSpec{Reference: "ok.csv", Measure: DriftKS},
				Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.02), Fail: AtMost(0.2)}}}},
		{"a list", "{baseline: b.json, measures: [location, null-share]}", []rule{
			{"columns.a.drift.location", DriftSpec{Baseline: "b.json", Measure: DriftLocation}, psi},
			{"columns.a.drift.null-share", DriftSpec{Baseline: "b.json", Measure: DriftNullShare},
				Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.01), Fail: AtMost(0.05)}}}},
		{"a mapping", "{baseline: b.json, measures: {chi-square: {fail: 0.001}, new-categories: null}}", []rule{
			{"columns.a.drift.chi-square", DriftSpec{Baseline: "b.json", Measure: DriftChiSquare},
				Tolerance{Direction: LowerIsWorse, Fail: AtLeast(0.001)}},
			{"columns.a.drift.new-categories", DriftSpec{Baseline: "b.json", Measure: DriftNewCategories},
				Tolerance{Direction: HigherIsWorse, Fail: AtMost(0)}}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p, err := Parse("p.yaml", []byte("policy: p\ncolumns:\n  a:\n    drift: "+c.drift+"\n"))
			if err != nil {
				t.Fatal(err)
			}
			var got []rule
			for _, r := range p.Rules {
				if s, ok := r.Spec.(DriftSpec); ok {
					tol := r.Tolerance
					tol.Pos = Pos{}
					got = append(got, rule{r.ID, s, tol})
				}
			}
			if !reflect.DeepEqual(got, c.want) {
				t.Errorf("got  %+v\nwant %+v", got, c.want)
			}
		})
	}
}

func TestDriftErrors(t *testing.T) {
	cases := []struct{ drift, want string }{
		{"{measure: psi}", `p.yaml:4:12: columns.a.drift: missing key "baseline" or "reference"`},
		{"{baseline: b, reference: r, measure: psi}", "p.yaml:4:37: columns.a.drift.reference: a drift rule compares with a baseline or a reference, not both"},
		{"{baseline: b}", `p.yaml:4:12: columns.a.drift: missing key "measure"`},
		{"{baseline: b, measure: pis}", `p.yaml:4:35: columns.a.drift.measure: unknown drift measure "pis"`},
		{"{baseline: b, measures: [psi], tolerance: 0.1}", "p.yaml:4:54: columns.a.drift.tolerance: with several measures give each its tolerance"},
		{"{baseline: b, measure: psi, tolerance: {warn: 0.3, fail: 0.2}}", "columns.a.drift.psi.tolerance: warn 30% is above fail 20%"},
		{"{baseline: b, psi: 1}", `columns.a.drift: unknown key "psi"`},
	}
	for _, c := range cases {
		_, err := Parse("p.yaml", []byte("policy: p\ncolumns:\n  a:\n    drift: "+c.drift+"\n"))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("drift: %s\ngot  %v\nwant %s", c.drift, err, c.want)
		}
	}
}
