package dist

import (
	"errors"
	"math"
	"testing"
)

// TestInSupportAgreesWithCheck: the per-value test says of every value what
// Check says of the sample, and names the same need.
func TestInSupportAgreesWithCheck(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	values := []float64{-2, -0.5, 0, 0.5, 1, 2, 3.5, 10, 11, nan, inf, -inf}
	cases := []struct {
		family string
		given  map[string]float64
		need   string
		in     []bool // per value of values
	}{
		{"normal", nil, "finite numbers", []bool{true, true, true, true, true, true, true, true, true, false, false, false}},
		{"lognormal", nil, "values above 0", []bool{false, false, false, true, true, true, true, true, true, false, false, false}},
		{"exponential", nil, "values of 0 or more", []bool{false, false, true, true, true, true, true, true, true, false, false, false}},
		{"beta", nil, "values strictly between 0 and 1", []bool{false, false, false, true, false, false, false, false, false, false, false, false}},
		{"poisson", nil, "whole numbers 0, 1, 2, ...", []bool{false, false, true, false, true, true, false, true, true, false, false, false}},
		{"binomial", map[string]float64{"n": 10}, "whole numbers from 0 to 10", []bool{false, false, true, false, true, true, false, true, false, false, false, false}},
		{"uniform", map[string]float64{"min": 0, "max": 2}, "values from 0 to 2", []bool{false, false, true, true, true, true, false, false, false, false, false, false}},
		{"uniform", nil, "finite numbers", []bool{true, true, true, true, true, true, true, true, true, false, false, false}},
		{"benford", nil, "values above 0", []bool{false, false, false, true, true, true, true, true, true, false, false, false}},
	}
	for _, c := range cases {
		f, err := Lookup(c.family)
		if err != nil {
			t.Fatal(err)
		}
		if f, err = f.Fix(c.given); err != nil {
			t.Fatal(err)
		}
		ok, need := f.InSupport()
		if need != c.need {
			t.Errorf("%s: need %q, want %q", f, need, c.need)
		}
		for i, x := range values {
			if got := ok(x); got != c.in[i] {
				t.Errorf("%s: InSupport(%v) = %v, want %v", f, x, got, c.in[i])
			}
			// Check on a sample of x repeated to any size agrees.
			err := f.Check([]float64{x, x, x, x, x})
			var se *SupportError
			if outside := errors.As(err, &se); outside == c.in[i] {
				t.Errorf("%s: Check(%v) = %v, but InSupport says %v", f, x, err, c.in[i])
			}
		}
	}
	cat, _ := Lookup("categorical")
	if ok, need := cat.InSupport(); ok != nil || need != "" {
		t.Errorf("categorical: InSupport gives a test (%q)", need)
	}
}

// TestNormalUpperTail: the normal survival keeps its digits far in the
// upper tail, where 1 − CDF is 0. The reference is R 4.2.2,
// pnorm(9, lower.tail = FALSE) = 1.1285884059538408e-19.
func TestNormalUpperTail(t *testing.T) {
	d, err := mustLookup(t, "normal").New(map[string]float64{"mean": 2, "sd": 3})
	if err != nil {
		t.Fatal(err)
	}
	const want = 1.1285884059538408e-19
	if got := d.Survival(2 + 9*3); math.Abs(got-want) > 1e-12*want {
		t.Errorf("Survival(mean + 9 sd) = %v, want %v", got, want)
	}
	if got := d.CDF(2 - 9*3); math.Abs(got-want) > 1e-12*want {
		t.Errorf("CDF(mean − 9 sd) = %v, want %v", got, want)
	}
}
