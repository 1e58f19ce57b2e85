package gof

import (
	"math"
	"testing"

	"github.com/assay-project/assay/checks/internal/fsum"
	"gonum.org/v1/gonum/stat/distuv"
)

// perValueKS, perValueAD and perValueCvM evaluate the reference at every
// observation, as the definitions read; the package's statistics evaluate
// it once per run of equal values and must give the same bits.
func perValueKS(s Sorted, ref CDF) KSDistance {
	var k ksAcc
	for i, v := range s.x {
		k.add(i, len(s.x), ref.CDF(v))
	}
	return k.result()
}

func perValueAD(s Sorted, ref CDF) (float64, KSDistance) {
	n := len(s.x)
	var sum fsum.Neumaier
	var k ksAcc
	inf := false
	for i, v := range s.x {
		u := ref.CDF(v)
		k.add(i, n, u)
		term := float64(2*i+1)*math.Log(u) + float64(2*n-2*i-1)*math.Log(survival(ref, v))
		if math.IsInf(term, -1) {
			inf = true
			continue
		}
		sum.Add(term)
	}
	if inf {
		return math.Inf(1), k.result()
	}
	return -float64(n) - sum.Value()/float64(n), k.result()
}

func perValueCvM(s Sorted, ref CDF) (float64, KSDistance) {
	n := len(s.x)
	nf := float64(n)
	var sum fsum.Neumaier
	var k ksAcc
	for i, v := range s.x {
		u := ref.CDF(v)
		k.add(i, n, u)
		d := u - float64(2*i+1)/(2*nf)
		sum.Add(d * d)
	}
	return 1/(12*nf) + sum.Value(), k.result()
}

// signedZero tells -0 from +0, so that a statistic that confused them in
// a run would differ.
type signedZero struct{}

func (signedZero) CDF(x float64) float64 {
	if x == 0 && math.Signbit(x) {
		return 0.25
	}
	return distuv.UnitNormal.CDF(x)
}

// TestEDFRunsBitIdentical: KS, AD and CvM computed once per run of equal
// values equal, bit for bit, the per-observation definitions, on data with
// long runs (rounded), without runs, with runs at the ends, with -0 next
// to +0, and in the far tail where ln(1 - F) is -Inf.
func TestEDFRunsBitIdentical(t *testing.T) {
	rng := newRand(3)
	draw := func(n int, f func() float64) []float64 {
		x := make([]float64, n)
		for i := range x {
			x[i] = f()
		}
		return x
	}
	tests := []struct {
		name string
		x    []float64
		ref  CDF
	}{
		{"normal to 2 decimals", draw(20000, func() float64 { return math.Round(rng.NormFloat64()*100) / 100 }), distuv.UnitNormal},
		{"normal to 1 decimal, fitted", draw(5000, func() float64 { return math.Round(3+2*rng.NormFloat64()*10) / 10 }), normalRef{mu: 3.1, sigma: 2.05}},
		{"gamma to 3 decimals", draw(20000, func() float64 { return math.Round(3000*(rng.ExpFloat64()+rng.ExpFloat64())) / 1000 }),
			distuv.Gamma{Alpha: 2, Beta: 1.0 / 3}},
		{"exponential, whole numbers", draw(3000, func() float64 { return math.Round(5 * rng.ExpFloat64()) }), exponentialRef{rate: 0.2}},
		{"continuous, no ties", draw(5000, rng.NormFloat64), distuv.UnitNormal},
		{"all equal", []float64{2, 2, 2, 2, 2}, distuv.UnitNormal},
		{"one value", []float64{0.3}, distuv.UnitNormal},
		{"signed zeros", []float64{-1, math.Copysign(0, -1), math.Copysign(0, -1), 0, 0, 0, 1, 1}, signedZero{}},
		{"beyond the upper tail", []float64{-1, 0, 0, 1, 40, 40, 40}, distuv.UnitNormal},
		{"beyond the lower tail", []float64{-40, -40, 0, 1}, normalRef{mu: 0, sigma: 1}},
	}
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
	sameKS := func(a, b KSDistance) bool {
		return same(a.D, b.D) && same(a.DPlus, b.DPlus) && same(a.DMinus, b.DMinus)
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Sort(tc.x)
			if err != nil {
				t.Fatal(err)
			}
			if got, want := Distance(s, tc.ref), perValueKS(s, tc.ref); !sameKS(got, want) {
				t.Errorf("Distance = %+v, per value %+v", got, want)
			}
			a2, d := andersonDarling(s, tc.ref)
			wa2, wd := perValueAD(s, tc.ref)
			if !same(a2, wa2) || !sameKS(d, wd) {
				t.Errorf("A² = %v (%+v), per value %v (%+v)", a2, d, wa2, wd)
			}
			w2, d := cramerVonMises(s, tc.ref)
			ww2, wd := perValueCvM(s, tc.ref)
			if !same(w2, ww2) || !sameKS(d, wd) {
				t.Errorf("W² = %v (%+v), per value %v (%+v)", w2, d, ww2, wd)
			}
		})
	}
}

// perEdgeKSAtResolution is D_h with F evaluated at both boundaries of
// every observed cell, as KSAtResolution's definition reads.
func perEdgeKSAtResolution(s Sorted, ref CDF, res Resolution) float64 {
	nf := float64(len(s.x))
	var plus, minus float64
	edge := func(e float64, count int) {
		d := float64(count)/nf - ref.CDF(e)
		plus = max(plus, d)
		minus = max(minus, -d)
	}
	for i := 0; i < len(s.x); {
		c := math.Round((s.x[i] - res.Origin) / res.Step)
		j := i + 1
		for j < len(s.x) && math.Round((s.x[j]-res.Origin)/res.Step) == c {
			j++
		}
		edge(res.Origin+(c-0.5)*res.Step, i)
		edge(res.Origin+(c+0.5)*res.Step, j)
		i = j
	}
	return max(plus, minus)
}

// TestKSAtResolutionSharedEdges: D_h, which evaluates F once at a boundary
// two observed cells share, equals the per-edge definition bit for bit,
// with adjacent cells, gaps between cells and an origin off zero.
func TestKSAtResolutionSharedEdges(t *testing.T) {
	rng := newRand(4)
	tests := []struct {
		name string
		res  Resolution
		draw func() float64
	}{
		{"hundredths", Resolution{Step: 0.01}, func() float64 { return math.Round(rng.NormFloat64()*100) / 100 }},
		{"tenths, sparse", Resolution{Step: 0.1}, func() float64 { return math.Round(rng.NormFloat64()*30) / 10 }},
		{"quarters off zero", Resolution{Step: 0.25, Origin: 0.1}, func() float64 { return 0.1 + 0.25*math.Round(rng.NormFloat64()*8) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			x := make([]float64, 20000)
			for i := range x {
				x[i] = tc.draw()
			}
			s, err := Sort(x)
			if err != nil {
				t.Fatal(err)
			}
			got, err := KSAtResolution(s, distuv.UnitNormal, tc.res)
			if err != nil {
				t.Fatal(err)
			}
			if want := perEdgeKSAtResolution(s, distuv.UnitNormal, tc.res); math.Float64bits(got.Statistic.Value) != math.Float64bits(want) {
				t.Errorf("D_h = %v, per edge %v", got.Statistic.Value, want)
			}
		})
	}
}
