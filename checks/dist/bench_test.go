package dist

import (
	"fmt"
	"math/rand/v2"
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
		f, err := Lookup(c.family)
		if err != nil {
			b.Fatal(err)
		}
		d, err := f.New(c.truth)
		if err != nil {
			b.Fatal(err)
		}
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
