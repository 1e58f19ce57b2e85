package gof

import (
	"encoding/binary"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Benchmarks of whole tests on unsorted data, sorting included:
//
//	go test -run '^$' -bench . -benchtime 1x ./checks/gof
//
// (1x because one pass over 1e7 values takes about a second.)
func BenchmarkTests(b *testing.B) {
	ref := distuv.Normal{Mu: 0, Sigma: 1}
	for _, n := range []int{1e4, 1e6, 1e7} {
		x := make([]float64, n)
		normalRef{mu: 0, sigma: 1}.Draw(newRand(1), x)
		rounded := make([]float64, n)
		for i, v := range x {
			rounded[i] = math.Round(v*100) / 100
		}
		for _, c := range []struct {
			name string
			data []float64
			run  func(Sorted) (Result, error)
		}{
			{"KS", x, func(s Sorted) (Result, error) { return Specified(KS, s, ref) }},
			{"AD", x, func(s Sorted) (Result, error) { return Specified(AD, s, ref) }},
			{"AD-normal-fitted", x, func(s Sorted) (Result, error) { return Normal(AD, s, Resampling{}) }},
			{"KS-at-resolution", rounded, func(s Sorted) (Result, error) { return KSAtResolution(s, ref, Resolution{Step: 0.01}) }},
		} {
			b.Run(fmt.Sprintf("%s/n=%d", c.name, n), func(b *testing.B) {
				for b.Loop() {
					s, err := Sort(c.data)
					if err != nil {
						b.Fatal(err)
					}
					if _, err := c.run(s); err != nil {
						b.Fatal(err)
					}
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/value")
			})
		}
	}
}

// FuzzTests feeds arbitrary numbers to every test: none may panic, and each
// either fails with an error or returns a p-value in [0, 1] and a
// statistic that is not negative.
func FuzzTests(f *testing.F) {
	f.Add([]byte{})
	f.Add(floatBytes(1, 2, 3, 4, 5, 6, 7, 8, 9))
	f.Add(floatBytes(0.5, 0.5, 0.5, 0.25))
	f.Add(floatBytes(1e300, -1e300, 0, 5e-324, 3))
	f.Add(floatBytes(12.34, 12.35, 12.34, 11.99, 12.01, 12.5, 13))
	f.Fuzz(func(t *testing.T, data []byte) {
		var x []float64
		for len(data) >= 8 && len(x) < 64 {
			x = append(x, math.Float64frombits(binary.LittleEndian.Uint64(data)))
			data = data[8:]
		}
		s, err := Sort(x)
		if err != nil {
			return
		}
		check := func(name string, r Result, err error) {
			if err == nil && (!(r.PValue >= 0 && r.PValue <= 1) || r.Statistic.Value < 0) {
				t.Errorf("%s on %v: p = %v, statistic = %v", name, x, r.PValue, r.Statistic.Value)
			}
		}
		boot := Resampling{B: 9}
		for _, tst := range []Test{KS, AD, CvM} {
			r, err := Specified(tst, s, distuv.Normal{Mu: 0, Sigma: 1})
			check("specified "+tst.String(), r, err)
			r, err = Normal(tst, s, boot)
			check("normal "+tst.String(), r, err)
			r, err = Exponential(tst, s, boot)
			check("exponential "+tst.String(), r, err)
		}
		r, err := ShapiroWilk(s)
		check("shapiro-wilk", r, err)
		if res, ok := DetectResolution(s); ok {
			r, err := KSAtResolution(s, distuv.Normal{Mu: 0, Sigma: 1}, res)
			check("ks at resolution", r, err)
		}
		if obs, probs, _, err := IntegerCells(s, distuv.Poisson{Lambda: 2}); err == nil {
			c, err := ChiSquare(obs, probs, ChiSquareOptions{})
			check("chi-square", c.Result, err)
		}
	})
}

func floatBytes(v ...float64) []byte {
	var b []byte
	for _, x := range v {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(x))
	}
	return b
}
