package fsum

import (
	"math/big"
	"math/rand/v2"
	"testing"
)

// exact sums xs in arbitrary precision and rounds once: the reference.
func exact(xs []float64) float64 {
	s := new(big.Float).SetPrec(2048)
	for _, x := range xs {
		s.Add(s, new(big.Float).SetPrec(2048).SetFloat64(x))
	}
	f, _ := s.Float64()
	return f
}

// TestNeumaier compares the compensated sum with an exact big.Float sum on
// inputs where a naive sum loses everything, whole and merged in pieces.
func TestNeumaier(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	cases := map[string][]float64{
		"cancellation":    {1e100, 1, -1e100},
		"large and small": {1, 1e100, 1, -1e100},
	}
	var mixed []float64
	for range 10000 {
		e := float64(rng.IntN(40) - 20)
		x := rng.NormFloat64() * pow10(e)
		mixed = append(mixed, x, -x*0.999999)
	}
	cases["mixed magnitudes"] = mixed
	for name, xs := range cases {
		want := exact(xs)
		var whole Neumaier
		for _, x := range xs {
			whole.Add(x)
		}
		var a, b Neumaier
		for i, x := range xs {
			if i < len(xs)/2 {
				a.Add(x)
			} else {
				b.Add(x)
			}
		}
		a.Merge(b)
		for how, got := range map[string]float64{"whole": whole.Value(), "merged": a.Value()} {
			if d := got - want; d > 1e-12*abs(want) || -d > 1e-12*abs(want) {
				t.Errorf("%s (%s): got %v, want %v", name, how, got, want)
			}
		}
	}
}

func pow10(e float64) float64 {
	p := 1.0
	for ; e > 0; e-- {
		p *= 10
	}
	for ; e < 0; e++ {
		p /= 10
	}
	return p
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
