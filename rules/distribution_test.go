package rules

import (
	"fmt"
	"reflect"
	"testing"

	"github.com/assay-project/assay/checks/dist"
)

// TestDistributionDefaults: what a distribution rule is when only its
// family is written, and which written keys change what.
func TestDistributionDefaults(t *testing.T) {
	distance := Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.05), Fail: AtMost(0.10)}
	pvalue := Tolerance{Direction: LowerIsWorse, Warn: AtLeast(0.05), Fail: AtLeast(0.01)}
	cases := []struct {
		name, dist string
		typ        string // the column's type, "" for none
		want       DistributionSpec
		measure    string
		tol        Tolerance
	}{
		{"continuous", "normal", "number",
			DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"KS distance", distance},
		{"short list", "[lognormal, gamma]", "",
			DistributionSpec{Families: []string{"lognormal", "gamma"}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"KS distance", distance},
		{"long form", "{family: [lognormal, gamma]}", "",
			DistributionSpec{Families: []string{"lognormal", "gamma"}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"KS distance", distance},
		{"discrete", "poisson", "integer",
			DistributionSpec{Families: []string{"poisson"}, Test: TestChiSquare, Measure: MeasureDistance, Sample: DefaultSample, Seed: DefaultSeed},
			"TV distance", distance},
		{"benford", "benford2", "number",
			DistributionSpec{Families: []string{"benford2"}, Test: TestChiSquare, Measure: MeasureDistance, Sample: DefaultSample, Seed: DefaultSeed},
			"TV distance", distance},
		{"categorical", "{family: categorical, shares: {x: 1, y: 3}}", "string",
			DistributionSpec{Families: []string{"categorical"}, Categories: []string{"x", "y"}, Weights: []float64{1, 3}, Test: TestChiSquare, Measure: MeasureDistance, Sample: DefaultSample, Seed: DefaultSeed},
			"TV distance", distance},
		{"p-value", "{family: normal, measure: p-value}", "",
			DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasurePValue, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"p-value", pvalue},
		{"p-value scalar tolerance", "{family: normal, measure: p-value, tolerance: 0.001}", "",
			DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasurePValue, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"p-value", Tolerance{Direction: LowerIsWorse, Fail: AtLeast(0.001)}},
		{"anderson-darling has no resolution", "{family: normal, test: anderson-darling}", "",
			DistributionSpec{Families: []string{"normal"}, Test: TestAD, Measure: MeasureDistance, Sample: DefaultSample, Seed: DefaultSeed},
			"KS distance", distance},
		{"chi-square on a continuous family", "{family: gamma, test: chi-square, resolution: 0.5}", "",
			DistributionSpec{Families: []string{"gamma"}, Test: TestChiSquare, Measure: MeasureDistance, Resolution: 0.5, Sample: DefaultSample, Seed: DefaultSeed},
			"TV distance", distance},
		{"sample as a float", "{family: normal, sample: 2e6}", "",
			DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true, Sample: 2_000_000, Seed: DefaultSeed},
			"KS distance", distance},
		{"resolution none", "{family: normal, resolution: none, sample: 5000, seed: 0}", "",
			DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasureDistance, Sample: 5000, Seed: 0},
			"KS distance", distance},
		{"parameters", "{family: binomial, parameters: {n: 12}}", "integer",
			DistributionSpec{Families: []string{"binomial"}, Parameters: map[string]float64{"n": 12}, Test: TestChiSquare, Measure: MeasureDistance, Sample: DefaultSample, Seed: DefaultSeed},
			"TV distance", distance},
		{"a parameter given alone", "{family: student-t, parameters: {df: 3}}", "",
			DistributionSpec{Families: []string{"student-t"}, Parameters: map[string]float64{"df": 3}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true, Sample: DefaultSample, Seed: DefaultSeed},
			"KS distance", distance},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			typ := ""
			if c.typ != "" {
				typ = "type: " + c.typ + ", "
			}
			// The column's own tolerance is for share rules: it must not
			// reach the distribution rule.
			src := fmt.Sprintf("policy: p\ncolumns:\n  a: {%stolerance: 3%%, distribution: %s}\n", typ, c.dist)
			r := rule(t, src, "columns.a.distribution")
			got, ok := r.Spec.(DistributionSpec)
			if !ok || !reflect.DeepEqual(got, c.want) {
				t.Errorf("spec:\ngot  %+v\nwant %+v", r.Spec, c.want)
			}
			if r.Measure.Name != c.measure || r.Measure.Unit != UnitValue {
				t.Errorf("measure %q unit %d, want %q unit %d", r.Measure.Name, r.Measure.Unit, c.measure, UnitValue)
			}
			tol := r.Tolerance
			if tol.Direction != c.tol.Direction || !sameLimit(tol.Warn, c.tol.Warn) || !sameLimit(tol.Fail, c.tol.Fail) {
				t.Errorf("tolerance %s warn %s fail %s, want %s warn %s fail %s", tol.Direction, dumpLimit(tol.Warn),
					dumpLimit(tol.Fail), c.tol.Direction, dumpLimit(c.tol.Warn), dumpLimit(c.tol.Fail))
			}
		})
	}
}

// TestEveryFamilyResolves: each family of checks/dist can be named in a
// policy, with what it needs, and resolves to a rule whose default test
// applies to it.
func TestEveryFamilyResolves(t *testing.T) {
	for _, f := range dist.Families() {
		body := f.Name()
		switch {
		case f.Kind() == dist.Categorical:
			body = "{family: categorical, shares: {a: 1, b: 1}}"
		case f.Name() == "binomial":
			body = "{family: binomial, parameters: {n: 5}}"
		}
		src := "policy: p\ncolumns:\n  a: {distribution: " + body + "}\n"
		r := rule(t, src, "columns.a.distribution")
		s := r.Spec.(DistributionSpec)
		wantTest := TestChiSquare
		if f.Kind() == dist.Continuous {
			wantTest = TestKS
		}
		if s.Test != wantTest || s.Families[0] != f.Name() {
			t.Errorf("%s: test %s family %v, want %s", f.Name(), s.Test, s.Families, wantTest)
		}
	}
}
