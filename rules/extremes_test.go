package rules

import (
	"reflect"
	"testing"
)

// TestExtremesDefaults: what an extremes rule is when only some of its
// keys are written, and which tolerance it then takes.
func TestExtremesDefaults(t *testing.T) {
	cutoff := Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.01), Fail: AtMost(0.05)}
	test := Tolerance{Direction: HigherIsWorse, Fail: AtMost(0)}
	normal := DistributionSpec{Families: []string{"normal"}, Test: TestKS, Measure: MeasureDistance, AutoResolution: true,
		Sample: DefaultSample, Seed: DefaultSeed}
	cases := []struct {
		name, column string // the column's keys besides type
		want         ExtremesSpec
		tol          Tolerance
		explain      string
	}{
		{"short form", "extremes: tukey", ExtremesSpec{Method: ExtremesTukey, K: 1.5}, cutoff, "tukey k=1.5"},
		{"empty mapping is tukey", "extremes: {}", ExtremesSpec{Method: ExtremesTukey, K: 1.5}, cutoff, "tukey k=1.5"},
		{"tukey far out", "extremes: {rule: tukey, k: 3}", ExtremesSpec{Method: ExtremesTukey, K: 3}, cutoff, "tukey k=3"},
		{"zscore", "extremes: zscore", ExtremesSpec{Method: ExtremesZScore, K: 3}, cutoff, "zscore k=3"},
		{"robust-z", "extremes: {rule: robust-z}", ExtremesSpec{Method: ExtremesRobustZ, K: 3.5}, cutoff, "robust-z k=3.5"},
		{"esd", "extremes: esd", ExtremesSpec{Method: ExtremesESD, Alpha: 0.05, MaxOutliers: 10}, test,
			"esd alpha=0.05 max_outliers=10"},
		{"esd settings", "extremes: {rule: esd, alpha: 0.01, max_outliers: 3}", ExtremesSpec{Method: ExtremesESD, Alpha: 0.01, MaxOutliers: 3},
			test, "esd alpha=0.01 max_outliers=3"},
		{"grubbs", "extremes: grubbs", ExtremesSpec{Method: ExtremesGrubbs, Alpha: 0.05}, test, "grubbs alpha=0.05"},
		{"tail takes the distribution written after it", "extremes: tail\n    distribution: normal",
			ExtremesSpec{Method: ExtremesTail, Alpha: 0.05, Distribution: normal}, test, "tail alpha=0.05 on normal"},
		{"tolerance written", "extremes: {rule: grubbs, tolerance: 1%}", ExtremesSpec{Method: ExtremesGrubbs, Alpha: 0.05},
			Tolerance{Direction: HigherIsWorse, Fail: AtMost(0.01)}, "grubbs alpha=0.05"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			// The column's own tolerance is for share rules on single
			// values: it must not reach the extremes rule.
			src := "policy: p\ncolumns:\n  a:\n    type: number\n    tolerance: 3%\n    " + c.column + "\n"
			r := rule(t, src, "columns.a.extremes")
			if got, ok := r.Spec.(ExtremesSpec); !ok || !reflect.DeepEqual(got, c.want) {
				t.Errorf("spec:\ngot  %+v\nwant %+v", r.Spec, c.want)
			}
			if r.Measure != (Measure{Name: "extreme share", Unit: UnitShare}) {
				t.Errorf("measure %+v", r.Measure)
			}
			tol := r.Tolerance
			if tol.Direction != c.tol.Direction || !sameLimit(tol.Warn, c.tol.Warn) || !sameLimit(tol.Fail, c.tol.Fail) {
				t.Errorf("tolerance warn %s fail %s, want warn %s fail %s", dumpLimit(tol.Warn), dumpLimit(tol.Fail),
					dumpLimit(c.tol.Warn), dumpLimit(c.tol.Fail))
			}
			if got := explainSpec(r); got != c.explain {
				t.Errorf("explain %q, want %q", got, c.explain)
			}
		})
	}
}

// TestJointDefaults: a joint rule's id, columns and settings, written and
// defaulted.
func TestJointDefaults(t *testing.T) {
	cases := []struct {
		name, item, id string
		cols           []string
		want           JointSpec
		explain        string
	}{
		{"columns only", "{columns: [x, y]}", "joint.x+y", []string{"x", "y"},
			JointSpec{Method: JointMahalanobis, Robust: true, Quantile: 0.999, Sample: DefaultJointSample, Seed: 1},
			"mahalanobis robust (FAST-MCD) · quantile 0.999"},
		{"named", "{name: Climate Triple!, columns: [z, x, y]}", "joint.climate-triple", []string{"z", "x", "y"},
			JointSpec{Name: "Climate Triple!", Method: JointMahalanobis, Robust: true, Quantile: 0.999, Sample: DefaultJointSample, Seed: 1},
			"mahalanobis robust (FAST-MCD) · quantile 0.999"},
		{"classical", "{columns: [x, y], method: mahalanobis, robust: false, quantile: 0.975, seed: 0}", "joint.x+y", []string{"x", "y"},
			JointSpec{Method: JointMahalanobis, Quantile: 0.975, Sample: DefaultJointSample, Seed: 0},
			"mahalanobis classical · quantile 0.975 · seed 0"},
		{"sampled", "{columns: [x, y], sample: 5000}", "joint.x+y", []string{"x", "y"},
			JointSpec{Method: JointMahalanobis, Robust: true, Quantile: 0.999, Sample: 5000, Seed: 1},
			"mahalanobis robust (FAST-MCD) · quantile 0.999 · sample 5000"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := "policy: p\ncolumns: {x: {type: number}, y: {type: integer}}\njoint:\n  - " + c.item + "\n"
			r := rule(t, src, c.id)
			if got, ok := r.Spec.(JointSpec); !ok || !reflect.DeepEqual(got, c.want) {
				t.Errorf("spec:\ngot  %+v\nwant %+v", r.Spec, c.want)
			}
			if !reflect.DeepEqual(r.Columns, c.cols) || r.Measure.Name != "outlying row share" || r.Measure.Unit != UnitShare {
				t.Errorf("columns %q measure %+v", r.Columns, r.Measure)
			}
			if !sameLimit(r.Tolerance.Warn, AtMost(0.01)) || !sameLimit(r.Tolerance.Fail, AtMost(0.05)) {
				t.Errorf("tolerance warn %s fail %s, want the default 1%% and 5%%", dumpLimit(r.Tolerance.Warn), dumpLimit(r.Tolerance.Fail))
			}
			if got := explainSpec(r); got != c.explain {
				t.Errorf("explain %q, want %q", got, c.explain)
			}
		})
	}
}

// TestJointClosed: a closed policy's joint rule may read declared columns
// only, like the table key.
func TestJointClosed(t *testing.T) {
	src := "policy: p\ncolumns: {x: {type: number}}\njoint:\n  - columns: [x, y]\ntable: {closed: true}\n"
	l := problems(t, writeTemp(t, src))
	if len(l) != 1 || l[0].Code != CodeUndeclared || l[0].Pos.Line != 4 || l[0].Pos.Col != 18 || l[0].Path != "joint.x+y" {
		t.Errorf("got %v, want one undeclared column at 4:18", l)
	}
}

// writeTemp writes src to a policy file in a temporary folder.
func writeTemp(t *testing.T, src string) string {
	t.Helper()
	path := t.TempDir() + "/p.yaml"
	writeFile(t, path, src)
	return path
}
