package dist

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestFitErrors lists samples a family cannot come from, and the error each
// gives. Messages are compared whole: they are what a user reads.
func TestFitErrors(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	cases := []struct {
		family string
		given  map[string]float64
		x      []float64
		want   string
		count  int // SupportError.Count, 0 when the error is of another kind
	}{
		{"lognormal", nil, []float64{1, -2, 3, 0, 5, -0.5},
			"lognormal needs values above 0, but 3 of 6 values are not: -2, 0, -0.5", 3},
		{"gamma", nil, []float64{-1, -2, -3, -4, -5, -6, -7, 1},
			"gamma needs values above 0, but 7 of 8 values are not, for example -1, -2, -3, -4, -5", 7},
		{"weibull", nil, []float64{0, 1, 2},
			"weibull needs values above 0, but 1 of 3 values are not: 0", 1},
		{"exponential", nil, []float64{0, 1, -1e-9},
			"exponential needs values of 0 or more, but 1 of 3 values are not: -1e-09", 1},
		{"poisson", nil, []float64{0, 1.5, 2, 2.25, -1},
			"poisson needs whole numbers 0, 1, 2, ..., but 3 of 5 values are not: 1.5, 2.25, -1", 3},
		{"geometric", nil, []float64{0, 0.5},
			"geometric needs whole numbers 0, 1, 2, ..., but 1 of 2 values are not: 0.5", 1},
		{"negative-binomial", nil, []float64{3, -3},
			"negative-binomial needs whole numbers 0, 1, 2, ..., but 1 of 2 values are not: -3", 1},
		{"beta", nil, []float64{0.2, 0, 1, 0.5, 1.5},
			"beta needs values strictly between 0 and 1, but 3 of 5 values are not: 0, 1, 1.5", 3},
		{"binomial", map[string]float64{"n": 10}, []float64{0, 10, 11, 3.5},
			"binomial(n=10) needs whole numbers from 0 to 10, but 2 of 4 values are not: 11, 3.5", 2},
		{"benford", nil, []float64{12, 0, -3, 7},
			"benford needs values above 0, but 2 of 4 values are not: 0, -3", 2},
		{"uniform", map[string]float64{"min": 0, "max": 1}, []float64{0, 1, 1.5},
			"uniform(min=0, max=1) needs values from 0 to 1, but 1 of 3 values are not: 1.5", 1},
		{"normal", nil, []float64{1, nan, 2, inf},
			"normal needs finite numbers, but 2 of 4 values are not: NaN, +Inf", 2},
		{"normal", nil, []float64{1},
			"normal needs at least 2 values, got 1", 0},
		{"student-t", nil, []float64{1, 2, 3},
			"student-t needs at least 4 values, got 3", 0},
		{"exponential", nil, nil,
			"exponential needs at least 1 value, got 0", 0},
		{"normal", nil, []float64{2.5, 2.5, 2.5},
			"normal: cannot estimate mean, sd: all 3 values are equal (2.5), so there is no spread to estimate", 0},
		{"cauchy", nil, []float64{4, 4, 4},
			"cauchy: cannot estimate location, scale: all 3 values are equal (4), so there is no spread to estimate", 0},
		{"poisson", nil, []float64{0, 0},
			"poisson: cannot estimate lambda: all 2 values are 0, so lambda would be 0 (no variation)", 0},
		{"binomial", map[string]float64{"n": 3}, []float64{3, 3},
			"binomial(n=3): cannot estimate p: all 2 values are n = 3, so p would be 1 (no variation)", 0},
		{"negative-binomial", nil, []float64{1, 2, 3, 2},
			"negative-binomial: cannot estimate size, p: the variance 0.5 does not exceed the mean 2, so no finite size maximises the likelihood (the data are no more spread than a Poisson sample; try poisson)", 0},
		{"binomial", nil, []float64{1, 2},
			"binomial: n must be given (number of trials; must be given, it is not estimated)", 0},
		{"categorical", nil, []float64{1, 2},
			"categorical: fit category counts with FitShares, not numbers", 0},
	}
	for _, c := range cases {
		f := mustLookup(t, c.family)
		if c.given != nil {
			var err error
			if f, err = f.Fix(c.given); err != nil {
				t.Fatal(err)
			}
		}
		_, err := f.Fit(c.x)
		if err == nil {
			t.Errorf("%s %v: no error, want %q", f, c.x, c.want)
			continue
		}
		if err.Error() != c.want {
			t.Errorf("%s %v:\n got %q\nwant %q", f, c.x, err, c.want)
		}
		var se *SupportError
		if errors.As(err, &se) != (c.count > 0) {
			t.Errorf("%s %v: SupportError %v, want %v", f, c.x, se != nil, c.count > 0)
		} else if se != nil && (se.Count != c.count || len(se.Index) != len(se.Values)) {
			t.Errorf("%s %v: count %d, %d positions for %d values", f, c.x, se.Count, len(se.Index), len(se.Values))
		}
	}
}

// TestSupportErrorPositions checks that the positions point at the values.
func TestSupportErrorPositions(t *testing.T) {
	x := []float64{1, 2, -1, 4, 0, 6}
	_, err := mustLookup(t, "lognormal").Fit(x)
	var se *SupportError
	if !errors.As(err, &se) {
		t.Fatalf("got %v, want a SupportError", err)
	}
	if len(se.Index) != 2 || se.Index[0] != 2 || se.Index[1] != 4 {
		t.Fatalf("positions %v, want [2 4]", se.Index)
	}
	for i, j := range se.Index {
		if x[j] != se.Values[i] {
			t.Errorf("position %d holds %v, error shows %v", j, x[j], se.Values[i])
		}
	}
}

// TestFix lists given parameters and what Fix says of them.
func TestFix(t *testing.T) {
	cases := []struct {
		family string
		given  map[string]float64
		want   string // "" for no error
	}{
		{"normal", map[string]float64{"mean": 0, "sd": 1}, ""},
		{"normal", map[string]float64{"mu": 0}, `normal: unknown parameter "mu" (parameters: mean, sd)`},
		{"normal", map[string]float64{"mean": 0, "sd": 0}, "normal: sd must be above 0, got 0"},
		{"normal", map[string]float64{"mean": math.Inf(1), "sd": 1}, "normal: mean must be a finite number, got +Inf"},
		{"normal", map[string]float64{"sd": 2}, "normal: give all of mean, sd or none of them; sd cannot be given while the others are estimated"},
		{"student-t", map[string]float64{"df": 3}, ""},
		{"student-t", map[string]float64{"df": 3, "scale": 1}, "student-t: give all of location, scale, df or none of them; scale cannot be given while the others are estimated"},
		{"negative-binomial", map[string]float64{"size": 2.5}, ""},
		{"binomial", map[string]float64{"n": 10}, ""},
		{"binomial", map[string]float64{"n": 2.5}, "binomial: n must be a whole number at least 1, got 2.5"},
		{"binomial", map[string]float64{"n": 10, "p": 1}, "binomial: p must be in (0, 1), got 1"},
		{"geometric", map[string]float64{"p": 0}, "geometric: p must be in (0, 1), got 0"},
		{"uniform", map[string]float64{"min": 2, "max": 1}, "uniform: min must be below max"},
		{"benford", map[string]float64{"digits": 2}, `benford: unknown parameter "digits" (the family has no parameters)`},
		{"categorical", map[string]float64{"a": 1}, "categorical: shares are given as categories and weights, not parameters"},
	}
	for _, c := range cases {
		_, err := mustLookup(t, c.family).Fix(c.given)
		got := ""
		if err != nil {
			got = err.Error()
		}
		if got != c.want {
			t.Errorf("%s %v:\n got %q\nwant %q", c.family, c.given, got, c.want)
		}
	}
}

func TestNewNeedsAllParameters(t *testing.T) {
	_, err := mustLookup(t, "gamma").New(map[string]float64{})
	if err == nil || err.Error() != "gamma: missing parameter shape, scale" {
		t.Errorf("got %v", err)
	}
	d, err := mustLookup(t, "gamma").New(map[string]float64{"shape": 2, "scale": 3})
	if err != nil {
		t.Fatal(err)
	}
	if got := d.String(); got != "gamma(shape=2, scale=3)" {
		t.Errorf("String() = %q", got)
	}
}

func TestLookup(t *testing.T) {
	for _, f := range Families() {
		g, err := Lookup(f.Name())
		if err != nil || g != f {
			t.Errorf("Lookup(%q) = %v, %v", f.Name(), g, err)
		}
		if f.Kind() != Categorical && f.Method() == "" {
			t.Errorf("%s: no method description", f.Name())
		}
	}
	_, err := Lookup("lognormla")
	if err == nil || !strings.HasPrefix(err.Error(), `unknown distribution family "lognormla" (known: normal, lognormal,`) {
		t.Errorf("got %v", err)
	}
	if got := len(Names()); got != 17 {
		t.Errorf("%d families, want 17", got)
	}
}

// TestFitGiven checks a fully given family: nothing is estimated, K is 0,
// and the log-likelihood is that of the given parameters.
func TestFitGiven(t *testing.T) {
	f, err := mustLookup(t, "normal").Fix(map[string]float64{"mean": 0, "sd": 1})
	if err != nil {
		t.Fatal(err)
	}
	fit, err := f.Fit([]float64{0})
	if err != nil {
		t.Fatal(err)
	}
	want := -0.5 * math.Log(2*math.Pi)
	if fit.K != 0 || !closeRel(fit.LogLik, want, 1e-15, 0) || fit.AIC != -2*fit.LogLik || fit.BIC != -2*fit.LogLik {
		t.Errorf("got K %d, log-lik %v, AIC %v, BIC %v; want 0, %v", fit.K, fit.LogLik, fit.AIC, fit.BIC, want)
	}
	// df given: location and scale estimated, K = 2.
	tf, err := mustLookup(t, "student-t").Fix(map[string]float64{"df": 3})
	if err != nil {
		t.Fatal(err)
	}
	fit, err = tf.Fit([]float64{-2, -1, 0, 0.5, 1, 3, 8})
	if err != nil {
		t.Fatal(err)
	}
	if fit.K != 2 || fit.Dist.Param("df") != 3 {
		t.Errorf("K %d, df %v; want 2, 3", fit.K, fit.Dist.Param("df"))
	}
}

func TestRankSkipsIncomparable(t *testing.T) {
	x := []float64{1, 2, 2, 3, 5, 8, 13}
	ranked := Rank(x, []Family{mustLookup(t, "poisson"), mustLookup(t, "normal"), mustLookup(t, "benford"), mustLookup(t, "geometric")})
	if ranked[0].Err != nil || ranked[1].Err != nil {
		t.Fatalf("poisson and geometric should fit: %v, %v", ranked[0].Err, ranked[1].Err)
	}
	for _, f := range ranked[2:] {
		if f.Err == nil || !strings.Contains(f.Err.Error(), "is not comparable with poisson") {
			t.Errorf("%s: %v", f.Family, f.Err)
		}
	}
	if ranked[0].AIC > ranked[1].AIC {
		t.Errorf("not sorted by AIC: %v > %v", ranked[0].AIC, ranked[1].AIC)
	}
}
