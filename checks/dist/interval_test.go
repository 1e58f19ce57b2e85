package dist

import (
	"math"
	"testing"
)

// TestWithin: the interval of each family holds exactly the values its
// support in words allows, at the edges where an open end held as the
// next float64 could go wrong (0 and −0, the smallest subnormals, the
// largest finite numbers, the infinities, NaN, whole numbers and their
// neighbours).
func TestWithin(t *testing.T) {
	tiny := math.SmallestNonzeroFloat64
	big := math.MaxFloat64
	values := []float64{math.Inf(-1), -big, -2, -1, -tiny, math.Copysign(0, -1), 0, tiny, 0.5,
		math.Nextafter(1, 0), 1, math.Nextafter(1, 2), 2, 2.5, 10, math.Nextafter(10, 11), 11, big,
		math.Inf(1), math.NaN()}
	finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
	whole := func(x float64) bool { return finite(x) && x == math.Trunc(x) }
	cases := []struct {
		family string
		given  map[string]float64
		want   func(x float64) bool
	}{
		{"normal", nil, finite},
		{"student-t", map[string]float64{"df": 3}, finite},
		{"lognormal", nil, func(x float64) bool { return finite(x) && x > 0 }},
		{"gamma", nil, func(x float64) bool { return finite(x) && x > 0 }},
		{"weibull", map[string]float64{"shape": 2, "scale": 1}, func(x float64) bool { return finite(x) && x > 0 }},
		{"benford2", nil, func(x float64) bool { return finite(x) && x > 0 }},
		{"exponential", nil, func(x float64) bool { return finite(x) && x >= 0 }},
		{"beta", nil, func(x float64) bool { return x > 0 && x < 1 }},
		{"uniform", map[string]float64{"min": -1, "max": 1}, func(x float64) bool { return x >= -1 && x <= 1 }},
		{"uniform", nil, finite},
		{"poisson", nil, func(x float64) bool { return whole(x) && x >= 0 }},
		{"geometric", nil, func(x float64) bool { return whole(x) && x >= 0 }},
		{"binomial", map[string]float64{"n": 10}, func(x float64) bool { return whole(x) && x >= 0 && x <= 10 }},
	}
	for _, c := range cases {
		f := mustLookup(t, c.family)
		f, err := f.Fix(c.given)
		if err != nil {
			t.Fatal(err)
		}
		in, need, numeric := f.Within()
		ok, okNeed := f.InSupport()
		if !numeric || need != okNeed {
			t.Errorf("%s: Within() = %v, %q, %v, want a numeric family needing %q", f, in, need, numeric, okNeed)
		}
		for _, x := range values {
			if got, want := in.Contains(x), c.want(x); got != want || ok(x) != want {
				t.Errorf("%s: Contains(%v) = %v, InSupport = %v, want %v", f, x, got, ok(x), want)
			}
		}
	}
	if _, need, numeric := mustLookup(t, "categorical").Within(); numeric || need != "" {
		t.Errorf("categorical: Within() is numeric (%q)", need)
	}
}

// TestIntersect: a value is in the intersection of two intervals when it
// is in both.
func TestIntersect(t *testing.T) {
	ivs := []Interval{Finite, between(0, inf, true, true), between(0, inf, false, true), between(0, 1, true, true),
		wholeBetween(0, 10), between(-1, 1, false, false)}
	values := []float64{-2, -1, -0.5, 0, 0.5, 1, 1.5, 2, 10, 11, math.Inf(1), math.NaN()}
	for _, v := range ivs {
		for _, w := range ivs {
			both := v.Intersect(w)
			for _, x := range values {
				if got, want := both.Contains(x), v.Contains(x) && w.Contains(x); got != want {
					t.Errorf("%v ∩ %v = %v: Contains(%v) = %v, want %v", v, w, both, x, got, want)
				}
			}
		}
	}
}
