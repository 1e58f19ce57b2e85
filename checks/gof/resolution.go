package gof

import (
	"errors"
	"fmt"
	"math"
)

// Resolution is the grid on which values were recorded: Origin + k Step for
// integers k (a temperature logged to 0.01 has Step 0.01, Origin 0).
type Resolution struct {
	Step, Origin float64
}

// maxDecimals is the finest decimal scale DetectResolution tries: values
// with more decimals than this are taken as continuous.
const maxDecimals = 12

// DetectResolution finds the grid the sample was recorded on, if any: the
// smallest number of decimals e <= 12 at which every value is a whole
// number of 10^-e, then the greatest common divisor g of the differences
// between consecutive distinct values in those units. The step is
// g 10^-e (0.01, but also 0.25 or 5), the origin the first value modulo the
// step. It reports false for fewer than two distinct values and for values
// with more than 12 decimals (continuous data).
//
// A detected step matters when it is not small against the spread of the
// data relative to 1/sqrt(n): a step h makes every value carry the
// probability of its cell, about h f(x), so the continuous KS and AD tests
// see ties that grow in weight with n; KSAtResolution removes that effect.
func DetectResolution(s Sorted) (Resolution, bool) {
	x := s.x
	if len(x) < 2 || x[0] == x[len(x)-1] {
		return Resolution{}, false
	}
	scale, ok := decimalScale(x)
	if !ok {
		return Resolution{}, false
	}
	var g int64
	prev := int64(math.Round(x[0] * scale))
	for _, v := range x[1:] {
		q := int64(math.Round(v * scale))
		if q != prev {
			g = gcd(g, q-prev)
			prev = q
		}
	}
	if g == 0 {
		// Distinct values that round to the same multiple of 10^-12.
		return Resolution{}, false
	}
	first := int64(math.Round(x[0] * scale))
	origin := ((first % g) + g) % g
	return Resolution{Step: float64(g) / scale, Origin: float64(origin) / scale}, true
}

// decimalScale returns 10^e for the smallest e in 0..maxDecimals at which
// every value times 10^e is a whole number within rounding (and exactly
// representable, below 2^53).
func decimalScale(x []float64) (float64, bool) {
	for e := 0; e <= maxDecimals; e++ {
		scale := math.Pow10(e)
		if onIntegers(x, scale) {
			return scale, true
		}
	}
	return 0, false
}

func onIntegers(x []float64, scale float64) bool {
	prev := math.NaN()
	for _, v := range x {
		if v == prev {
			continue
		}
		prev = v
		q := v * scale
		if math.Abs(q) >= 1<<53 {
			return false
		}
		if math.Abs(q-math.Round(q)) > 1e-6+1e-12*math.Abs(q) {
			return false
		}
	}
	return true
}

func gcd(a, b int64) int64 {
	if a < 0 {
		a = -a
	}
	if b < 0 {
		b = -b
	}
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// KSAtResolution is the Kolmogorov-Smirnov test of a sample recorded on the
// grid res against a continuous, fully specified reference, comparing the
// empirical CDF with the reference only at the cell boundaries
// Origin + (k ± 1/2) Step:
//
//	D_h = max over boundaries e of |F_n(e) - F(e)|
//
// A value recorded as Origin + k Step stands for a true value somewhere in
// its cell, so rounding moves no value across a boundary: F_n at a boundary
// is the same for the recorded and for the true values. Between the
// boundaries the recorded sample carries no information about F, and the
// ties the grid creates play no part in D_h. Every boundary between two
// observed cells is covered by checking the two boundaries of each observed
// cell, since F_n is flat across empty cells while F rises.
//
// The p-value is that of the continuous KS test (Specified) at D_h. It is
// conservative (Method.Conservative): under the null D_h is the supremum
// over a subset of the points of the unrounded sample's D, so
// P(D_h >= d) <= P(D >= d), and the test rejects at most at its level. As
// the cells narrow it approaches the continuous test; a coarse grid with few
// cells costs power, which the chi-square test over the same cells
// (BinCells at the boundaries) recovers.
//
// Values off the grid are an error: the test is for recorded values.
func KSAtResolution(s Sorted, ref CDF, res Resolution) (Result, error) {
	if !(res.Step > 0) || math.IsInf(res.Step, 0) || math.IsNaN(res.Origin) || math.IsInf(res.Origin, 0) {
		return Result{}, fmt.Errorf("resolution step must be a positive number, got %v (origin %v)", res.Step, res.Origin)
	}
	n := len(s.x)
	if n == 0 {
		return Result{}, errors.New("kolmogorov-smirnov needs at least one value")
	}
	nf := float64(n)
	var plus, minus float64
	// The upper boundary of a cell is the lower one of the next cell up,
	// bit for bit (Origin + (c ± 1/2) Step with c a whole number), so F
	// is kept from one to the next.
	var lastE, lastF float64
	have := false
	edge := func(e float64, count int) {
		if !have || math.Float64bits(e) != math.Float64bits(lastE) {
			lastE, lastF, have = e, ref.CDF(e), true
		}
		d := float64(count)/nf - lastF
		plus = max(plus, d)
		minus = max(minus, -d)
	}
	cell := func(v float64) (float64, error) {
		k := (v - res.Origin) / res.Step
		c := math.Round(k)
		if math.Abs(k-c) > 1e-6 {
			return 0, fmt.Errorf("value %v is not on the grid %v + k*%v; kolmogorov-smirnov at a resolution needs values as recorded on it", v, res.Origin, res.Step)
		}
		return c, nil
	}
	for i := 0; i < n; {
		c, err := cell(s.x[i])
		if err != nil {
			return Result{}, err
		}
		// Values in one cell may differ by rounding error; take them all.
		j := i + 1
		for ; j < n; j++ {
			cj, err := cell(s.x[j])
			if err != nil {
				return Result{}, err
			}
			if cj != c {
				break
			}
		}
		edge(res.Origin+(c-0.5)*res.Step, i)
		edge(res.Origin+(c+0.5)*res.Step, j)
		i = j
	}
	d := max(plus, minus)
	p, m := ksPValue(n, d)
	m.Conservative = true
	m.Source += fmt.Sprintf(", at cell boundaries of step %v", res.Step)
	return Result{
		Test:      KS,
		Statistic: Statistic{Name: "D", Value: d},
		PValue:    p,
		N:         n,
		Method:    m,
		Effect:    Statistic{Name: "D", Value: d},
	}, nil
}
