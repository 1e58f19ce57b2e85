package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// BenchmarkFit times Fit (support check, estimate, log-likelihood) on
// seeded samples of 1e4 and 1e6 values.
func BenchmarkFit(b *testing.B) {
	type P = map[string]float64
	for _, c := range []struct {
		family string
		truth  P
	}{
		{"normal", P{"mean": 10, "sd": 2}},
		{"gamma", P{"shape": 2.5, "scale": 3}},
		{"weibull", P{"shape": 1.7, "scale": 40}},
	} {
		f, d := benchDist(b, c.family, c.truth)
		for _, n := range []int{1e4, 1e6} {
			r := rand.New(rand.NewPCG(1, uint64(n)))
			x := make([]float64, n)
			for i := range x {
				x[i] = d.Rand(r)
			}
			b.Run(fmt.Sprintf("%s/n=%.0e", c.family, float64(n)), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := f.Fit(x); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkFitRecorded times Fit on 1e6 sorted values recorded to 3
// decimals, as a distribution rule fits its sample: long runs of equal
// values, which the estimators evaluate once per run.
func BenchmarkFitRecorded(b *testing.B) {
	type P = map[string]float64
	for _, c := range []struct {
		family string
		truth  P
	}{
		{"gamma", P{"shape": 2, "scale": 3}},
		{"weibull", P{"shape": 1.7, "scale": 40}},
		{"logistic", P{"location": 58, "scale": 4.7}},
		{"cauchy", P{"location": 5, "scale": 2}},
		{"student-t", P{"location": 18, "scale": 6, "df": 5}},
	} {
		f, d := benchDist(b, c.family, c.truth)
		r := rand.New(rand.NewPCG(2, 3))
		x := make([]float64, 1e6)
		for i := range x {
			x[i] = math.Round(d.Rand(r)*1e3) / 1e3
		}
		slices.Sort(x)
		b.Run(c.family, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := f.Fit(x); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// benchDist looks up a family and sets its parameters.
func benchDist(b *testing.B, family string, params map[string]float64) (Family, Dist) {
	b.Helper()
	f, err := Lookup(family)
	if err != nil {
		b.Fatal(err)
	}
	d, err := f.New(params)
	if err != nil {
		b.Fatal(err)
	}
	return f, d
}
