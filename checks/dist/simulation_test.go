package dist

import (
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// simSize is the size of the seeded samples below; smaller with -short.
func simSize() int {
	if testing.Short() {
		return 5000
	}
	return 20000
}

// TestFitRecoversParameters draws a seeded sample from each family with
// known parameters and fits it. Each estimate must lie within 5 standard
// errors of the truth, the standard errors taken from the inverse of the
// observed Fisher information (the negative Hessian of the log-likelihood
// at the fit, by central differences), as in the usual asymptotic theory
// of maximum likelihood (Cox & Hinkley 1974, Theoretical Statistics, §9.2).
func TestFitRecoversParameters(t *testing.T) {
	type P = map[string]float64
	cases := []struct {
		family string
		given  P
		truth  P
	}{
		{"normal", nil, P{"mean": 10, "sd": 2}},
		{"lognormal", nil, P{"meanlog": 1, "sdlog": 0.5}},
		{"exponential", nil, P{"rate": 0.25}},
		{"gamma", nil, P{"shape": 2.5, "scale": 3}},
		{"gamma", nil, P{"shape": 0.4, "scale": 10}},
		{"weibull", nil, P{"shape": 1.7, "scale": 40}},
		{"uniform", nil, P{"min": -3, "max": 7}},
		{"beta", nil, P{"alpha": 2, "beta": 5}},
		{"logistic", nil, P{"location": 5, "scale": 1.5}},
		{"student-t", nil, P{"location": 0.5, "scale": 2, "df": 4}},
		{"student-t", P{"df": 4}, P{"location": 0.5, "scale": 2, "df": 4}},
		{"cauchy", nil, P{"location": -1, "scale": 0.7}},
		{"poisson", nil, P{"lambda": 3.2}},
		{"binomial", P{"n": 12}, P{"n": 12, "p": 0.3}},
		{"negative-binomial", nil, P{"size": 2.5, "p": 0.4}},
		{"negative-binomial", P{"size": 2.5}, P{"size": 2.5, "p": 0.4}},
		{"geometric", nil, P{"p": 0.2}},
	}
	n := simSize()
	for i, c := range cases {
		f := mustLookup(t, c.family)
		truth, err := f.New(c.truth)
		if err != nil {
			t.Fatal(err)
		}
		r := rand.New(rand.NewPCG(uint64(i), 2024))
		x := make([]float64, n)
		for j := range x {
			x[j] = truth.Rand(r)
		}
		if c.given != nil {
			if f, err = f.Fix(c.given); err != nil {
				t.Fatal(err)
			}
		}
		fit, err := f.Fit(x)
		if err != nil {
			t.Errorf("%s: %v", f, err)
			continue
		}
		var ses map[string]float64
		if c.family != "uniform" {
			ses = standardErrors(t, fit, x)
		}
		for name, want := range c.truth {
			got := fit.Dist.Param(name)
			if _, given := c.given[name]; given {
				if got != want {
					t.Errorf("%s: given %s changed to %v", f, name, got)
				}
				continue
			}
			se := ses[name]
			if c.family == "uniform" {
				// The extremes converge at rate 1/n, not 1/√n, and the
				// likelihood has no curvature: the error of the minimum is
				// about (max−min)/n.
				se = (c.truth["max"] - c.truth["min"]) / float64(n)
			}
			if math.Abs(got-want) > 5*se {
				t.Errorf("%s: %s = %.6g, truth %.6g, standard error %.3g", f, name, got, want, se)
			}
		}
	}
}

// standardErrors returns √((H⁻¹)_ii) for each estimated parameter, H the
// negative Hessian of the log-likelihood at the fit by central differences
// with steps of 1e-4 of each parameter.
func standardErrors(t *testing.T, fit Fit, x []float64) map[string]float64 {
	t.Helper()
	var names []string
	given := fit.Family.Given()
	for _, p := range fit.Family.Params() {
		if _, ok := given[p.Name]; !ok {
			names = append(names, p.Name)
		}
	}
	base := fit.Dist.Params()
	step := make([]float64, len(names))
	for i, n := range names {
		step[i] = 1e-4 * math.Max(math.Abs(base[n]), 1e-3)
	}
	ll := func(di, dj int, si, sj float64) float64 {
		p := maps.Clone(base)
		p[names[di]] += si * step[di]
		p[names[dj]] += sj * step[dj]
		d, err := Family{spec: fit.Dist.spec}.New(p)
		if err != nil {
			t.Fatal(err)
		}
		return d.LogLik(x)
	}
	k := len(names)
	h := mat.NewSymDense(k, nil)
	for i := range k {
		for j := i; j < k; j++ {
			var v float64
			if i == j {
				v = (ll(i, i, 0.5, 0.5) - 2*ll(i, i, 0, 0) + ll(i, i, -0.5, -0.5)) / (step[i] * step[i])
			} else {
				v = (ll(i, j, 1, 1) - ll(i, j, 1, -1) - ll(i, j, -1, 1) + ll(i, j, -1, -1)) / (4 * step[i] * step[j])
			}
			h.SetSym(i, j, -v)
		}
	}
	var inv mat.Dense
	if err := inv.Inverse(h); err != nil {
		t.Fatalf("%v: information matrix not invertible: %v", fit.Dist, err)
	}
	out := map[string]float64{}
	for i, n := range names {
		out[n] = math.Sqrt(inv.At(i, i))
	}
	return out
}

// TestRandFollowsCDF checks each sampler against its own CDF on a seeded
// sample: for a continuous family the Kolmogorov distance must be below
// 1.63/√n, the asymptotic 1% critical value (Massey 1951, Table 1, as in
// VALUES.md §2.1); for a discrete one every value with an expected count
// of at least 5 must be within 5 binomial standard deviations of it.
func TestRandFollowsCDF(t *testing.T) {
	n := simSize()
	for i, d := range testDists(t) {
		r := rand.New(rand.NewPCG(uint64(i), 99))
		x := make([]float64, n)
		for j := range x {
			x[j] = d.Rand(r)
		}
		if d.spec.kind == Discrete {
			seen := map[float64]float64{}
			for _, v := range x {
				seen[v]++
			}
			lo, hi := d.Support()
			top := math.Min(hi, d.Quantile(1-1e-9))
			for k := lo; k <= top; k++ {
				e := float64(n) * d.Prob(k)
				if e < 5 {
					continue
				}
				if sd := math.Sqrt(e * (1 - d.Prob(k))); math.Abs(seen[k]-e) > 5*sd {
					t.Errorf("%v: %v drawn %v times, expected %.1f ± %.1f", d, k, seen[k], e, sd)
				}
			}
			continue
		}
		if D := ksDistance(x, d.CDF); D > 1.63/math.Sqrt(float64(n)) {
			t.Errorf("%v: Kolmogorov distance %.4f of its own sample above %.4f", d, D, 1.63/math.Sqrt(float64(n)))
		}
	}
}

// ksDistance returns sup |F_n − F| for a continuous F: the larger of
// i/n − F(x_(i)) and F(x_(i)) − (i−1)/n over the order statistics.
func ksDistance(x []float64, cdf func(float64) float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	var D float64
	for i, v := range s {
		c := cdf(v)
		D = math.Max(D, math.Max(float64(i+1)/n-c, c-float64(i)/n))
	}
	return D
}
