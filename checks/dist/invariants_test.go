package dist

import (
	"math"
	"math/rand/v2"
	"testing"
)

// testDists returns every numeric family at parameters from ordinary to
// awkward (heavy tails, tiny and huge shapes, rare successes).
func testDists(t *testing.T) []Dist {
	t.Helper()
	type P = map[string]float64
	cases := []struct {
		family string
		params P
	}{
		{"normal", P{"mean": -3, "sd": 0.5}},
		{"normal", P{"mean": 1e6, "sd": 1e3}},
		{"lognormal", P{"meanlog": 0, "sdlog": 1}},
		{"lognormal", P{"meanlog": 5, "sdlog": 0.1}},
		{"exponential", P{"rate": 0.01}},
		{"exponential", P{"rate": 50}},
		{"gamma", P{"shape": 0.3, "scale": 2}},
		{"gamma", P{"shape": 50, "scale": 0.1}},
		{"weibull", P{"shape": 0.5, "scale": 3}},
		{"weibull", P{"shape": 8, "scale": 100}},
		{"uniform", P{"min": -1, "max": 2}},
		{"beta", P{"alpha": 0.5, "beta": 0.5}},
		{"beta", P{"alpha": 20, "beta": 3}},
		{"logistic", P{"location": 2, "scale": 0.3}},
		{"student-t", P{"location": 1, "scale": 2, "df": 1.5}},
		{"student-t", P{"location": 0, "scale": 1, "df": 60}},
		{"cauchy", P{"location": 0, "scale": 1}},
		{"cauchy", P{"location": -50, "scale": 0.01}},
		{"poisson", P{"lambda": 0.2}},
		{"poisson", P{"lambda": 1000}},
		{"binomial", P{"n": 1, "p": 0.5}},
		{"binomial", P{"n": 200, "p": 0.01}},
		{"negative-binomial", P{"size": 0.5, "p": 0.1}},
		{"negative-binomial", P{"size": 30, "p": 0.9}},
		{"geometric", P{"p": 0.9}},
		{"geometric", P{"p": 0.01}},
		{"benford", nil},
		{"benford2", nil},
	}
	out := make([]Dist, len(cases))
	for i, c := range cases {
		d, err := mustLookup(t, c.family).New(c.params)
		if err != nil {
			t.Fatal(err)
		}
		out[i] = d
	}
	return out
}

var probGrid = []float64{1e-9, 1e-6, 0.001, 0.01, 0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95, 0.99, 0.999, 1 - 1e-6, 1 - 1e-9}

// TestQuantileInvertsCDF: for a continuous family F(Q(p)) = p (checked on
// the smaller tail, to 1e-10 relative); for a discrete one Q(p) is the
// smallest whole number k with F(k) ≥ p. Quantiles rise with p, and the
// ends of [0, 1] map to the ends of the support.
func TestQuantileInvertsCDF(t *testing.T) {
	for _, d := range testDists(t) {
		lo, hi := d.Support()
		if d.Quantile(0) != lo || d.Quantile(1) != hi {
			t.Errorf("%v: Quantile(0), Quantile(1) = %v, %v; want the support %v, %v", d, d.Quantile(0), d.Quantile(1), lo, hi)
		}
		if !math.IsNaN(d.Quantile(-0.1)) || !math.IsNaN(d.Quantile(1.1)) || !math.IsNaN(d.Quantile(math.NaN())) {
			t.Errorf("%v: Quantile outside [0, 1] is not NaN", d)
		}
		prev := math.Inf(-1)
		for _, p := range probGrid {
			q := d.Quantile(p)
			if q < prev {
				t.Errorf("%v: Quantile(%v) = %v below the previous %v", d, p, q, prev)
			}
			prev = q
			if d.spec.kind == Discrete {
				if d.CDF(q) < p || (q > lo && d.CDF(q-1) >= p) {
					t.Errorf("%v: Quantile(%v) = %v but CDF there %v and one below %v", d, p, q, d.CDF(q), d.CDF(q-1))
				}
				continue
			}
			got, want := d.CDF(q), p
			if p > 0.5 {
				got, want = d.Survival(q), 1-p
			}
			// q is a double: an error of 4 units in its last place moves
			// the tail by up to 4ε|q|f(q) however good the quantile is
			// (a beta(½, ½) quantile near 1, a uniform one near -1).
			cond := 8 * 0x1p-52 * math.Abs(q) * d.Prob(q)
			if math.Abs(got-want) > 1e-10*want+cond {
				t.Errorf("%v: tail probability at Quantile(%v) = %v is %v, want %v", d, p, q, got, want)
			}
		}
	}
}

// TestCDFShape walks a grid across the bulk and tails of each family: the
// CDF stays in [0, 1], never falls, and CDF + Survival = 1; for a discrete
// family the CDF is the running sum of the masses and Quantile(CDF(k)) =
// k; for a continuous one the density is the slope of the CDF and
// Quantile(CDF(x)) = x.
func TestCDFShape(t *testing.T) {
	for _, d := range testDists(t) {
		a, b := d.Quantile(1e-7), d.Quantile(1-1e-7)
		iqr := d.Quantile(0.75) - d.Quantile(0.25)
		if d.spec.kind == Discrete {
			lo, _ := d.Support()
			var sum float64
			prev := 0.0
			for k := lo; k <= b+1; k++ {
				sum += d.Prob(k)
				c := d.CDF(k)
				if c < prev || c > 1 || math.Abs(c-sum) > 1e-12 || math.Abs(c+d.Survival(k)-1) > 1e-12 {
					t.Errorf("%v: at %v CDF %v, running sum %v, survival %v, previous CDF %v", d, k, c, sum, d.Survival(k), prev)
					break
				}
				if d.Prob(k) > 1e-12 && d.Quantile(c) != k {
					t.Errorf("%v: Quantile(CDF(%v)) = %v", d, k, d.Quantile(c))
				}
				if d.CDF(k+0.5) != c || d.Prob(k+0.5) != 0 {
					t.Errorf("%v: between %v and %v the CDF moves or the mass is not 0", d, k, k+1)
				}
				prev = c
			}
			continue
		}
		prev := 0.0
		const steps = 400
		for i := 0; i <= steps; i++ {
			x := a + (b-a)*float64(i)/steps
			c := d.CDF(x)
			if c < prev || c < 0 || c > 1 || math.Abs(c+d.Survival(x)-1) > 1e-12 {
				t.Errorf("%v: at %v CDF %v, survival %v, previous CDF %v", d, x, c, d.Survival(x), prev)
				break
			}
			prev = c
			if c > 1e-6 && c < 1-1e-6 {
				if q := d.Quantile(c); math.Abs(q-x) > 1e-8*math.Max(iqr, math.Abs(x)) {
					t.Errorf("%v: Quantile(CDF(%v)) = %v", d, x, q)
				}
				// Central difference of the CDF, step 1e-5 of the IQR: error
				// O(h²·f″), far below the 1e-5 tolerance at this step.
				h := 1e-5 * iqr
				slope := (d.CDF(x+h) - d.CDF(x-h)) / (2 * h)
				if f := d.Prob(x); math.Abs(slope-f) > 1e-5*math.Max(f, 1e-3/iqr) {
					t.Errorf("%v: density %v at %v, CDF slope %v", d, f, x, slope)
				}
			}
		}
	}
}

// TestCellsSumToOne: the rounding cells of width h tile the line, so their
// probabilities sum to 1, and each equals the difference of the CDF.
func TestCellsSumToOne(t *testing.T) {
	for _, d := range testDists(t) {
		a, b := d.Quantile(1e-12), d.Quantile(1-1e-12)
		h := (d.Quantile(0.75) - d.Quantile(0.25)) / 20
		if d.spec.kind == Discrete {
			h = 1
		}
		if math.IsInf(a, 0) || math.IsInf(b, 0) || (b-a)/h > 1e6 {
			continue // the Cauchy's 1e-12 quantiles lie beyond a sane grid
		}
		var sum float64
		for k := math.Floor(a/h) - 1; k*h <= b+h; k++ {
			c := d.Cell(k*h, h)
			if c < 0 {
				t.Fatalf("%v: negative cell %v at %v", d, c, k*h)
			}
			if want := d.CDF(k*h+h/2) - d.CDF(k*h-h/2); d.spec.kind == Continuous && math.Abs(c-want) > 1e-13 {
				t.Errorf("%v: Cell(%v) = %v, CDF difference %v", d, k*h, c, want)
			}
			sum += c
		}
		if math.Abs(sum-1) > 1e-9 {
			t.Errorf("%v: cells of width %v sum to %v", d, h, sum)
		}
	}
	if !math.IsNaN(testDists(t)[0].Cell(0, 0)) {
		t.Error("Cell with h = 0 is not NaN")
	}
}

// What goodness-of-fit tests and a parametric bootstrap ask of a reference
// distribution; Dist and Rounded must keep satisfying it.
var (
	_ interface {
		CDF(float64) float64
		Quantile(float64) float64
		Survival(float64) float64
		Draw(*rand.Rand, []float64)
	} = Dist{}
	_ interface {
		CDF(float64) float64
		Quantile(float64) float64
	} = Rounded{}
)

// TestRandRepeatsAndStaysInSupport draws twice from the same seed, once
// by Rand and once by Draw.
func TestRandRepeatsAndStaysInSupport(t *testing.T) {
	for _, d := range testDists(t) {
		r1 := rand.New(rand.NewPCG(7, 11))
		r2 := rand.New(rand.NewPCG(7, 11))
		drawn := make([]float64, 500)
		d.Draw(r2, drawn)
		lo, hi := d.Support()
		for i, b := range drawn {
			a := d.Rand(r1)
			if a != b {
				t.Fatalf("%v: draw %d differs between equal seeds: %v, %v", d, i, a, b)
			}
			if a < lo || a > hi || math.IsInf(d.LogProb(a), -1) {
				t.Fatalf("%v: draw %v outside the support", d, a)
			}
		}
	}
}
