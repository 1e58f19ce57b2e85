package gof

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// ShapiroWilk tests normality (mean and variance unknown) by the W
// statistic of Shapiro, S. S. & Wilk, M. B. (1965), "An analysis of
// variance test for normality (complete samples)", Biometrika 52:591-611,
// with the coefficients and p-value of Royston, P. (1992), "Approximating
// the Shapiro-Wilk W-test for non-normality", Statistics and Computing
// 2:117-119, as revised in Royston (1995), "Remark AS R94", Applied
// Statistics 44:547-551. It needs 3 <= n <= 5000, the range of Royston's
// approximation.
//
// W is the squared correlation between the sorted sample and the
// coefficients a (antisymmetric, sum a² = 1):
//
//	m_i = Phi^-1((i - 3/8)/(n + 1/4)),  c = m / sqrt(m'm),  u = 1/sqrt(n)
//	a_n     = c_n     + 0.221157 u - 0.147981 u² - 2.071190 u³ + 4.434685 u⁴ - 2.706056 u⁵
//	a_(n-1) = c_(n-1) + 0.042981 u - 0.293762 u² - 1.752461 u³ + 5.682633 u⁴ - 3.582633 u⁵
//	a_i     = m_i / sqrt(phi) otherwise, phi = (m'm - 2 m_n² - 2 m_(n-1)²)/(1 - 2 a_n² - 2 a_(n-1)²)
//
// (for n <= 5 only a_n is adjusted, and for n = 3 a = (-sqrt(1/2), 0, sqrt(1/2))).
// The p-value is the upper tail of a normal approximation to a
// transformation of W:
//
//	n = 3:       p = (6/pi) (asin(sqrt W) - asin(sqrt(3/4))), exact
//	4 <= n <= 11: g = -2.273 + 0.459 n, z = (-ln(g - ln(1-W)) - mu)/sigma,
//	             mu = 0.5440 - 0.39978 n + 0.025054 n² - 0.0006714 n³,
//	             sigma = exp(1.3822 - 0.77857 n + 0.062767 n² - 0.0020322 n³)
//	n >= 12:     z = (ln(1-W) - mu)/sigma, v = ln n,
//	             mu = -1.5861 - 0.31082 v - 0.083751 v² + 0.0038915 v³,
//	             sigma = exp(-0.4803 - 0.082676 v + 0.0030302 v²)
//
// and p = 1 - Phi(z). The constants are Royston's (1992, 1995).
func ShapiroWilk(s Sorted) (Result, error) {
	n := len(s.x)
	if n < 3 || n > 5000 {
		return Result{}, fmt.Errorf("shapiro-wilk needs between 3 and 5000 values, got %d", n)
	}
	x := s.x
	if x[n-1]-x[0] < 1e-19*math.Max(math.Abs(x[0]), 1) {
		return Result{}, errors.New("shapiro-wilk needs values that are not all equal")
	}
	a := swCoefficients(n)
	// W as the squared correlation between x and the full antisymmetric
	// coefficient vector, centred as AS R94 does; values are scaled by the
	// range first so that large offsets do not cost precision.
	mean, scale := 0.0, x[n-1]-x[0]
	for _, v := range x {
		mean += v / scale
	}
	mean /= float64(n)
	var sax, ssx, ssa float64
	for i, v := range x {
		ai := swA(a, i, n)
		d := v/scale - mean
		sax += ai * d
		ssx += d * d
		ssa += ai * ai
	}
	// 1 - W is computed directly: the p-value works with ln(1 - W).
	r := sax / math.Sqrt(ssa*ssx)
	oneMinusW := (1 - r) * (1 + r)
	if oneMinusW < 0 {
		oneMinusW = 0
	}
	w := 1 - oneMinusW
	mu, sd := meanSD(x)
	res := Result{
		Test:      SW,
		Statistic: Statistic{Name: "W", Value: w},
		PValue:    swPValue(n, w, oneMinusW),
		N:         n,
		Method:    Method{Kind: Approximation, Source: "Royston (1992, 1995), AS R94"},
		Effect:    Statistic{Name: "D", Value: Distance(s, normalRef{mu: mu, sigma: sd}).D},
		Estimates: map[string]float64{"mean": mu, "sd": sd},
	}
	return res, nil
}

// swCoefficients returns a_1 .. a_(n/2) for the upper half, a_i being the
// weight of x_(n+1-i) (and -a_i that of x_(i)), i from 1.
func swCoefficients(n int) []float64 {
	half := n / 2
	a := make([]float64, half)
	if n == 3 {
		a[0] = math.Sqrt(0.5)
		return a
	}
	nf := float64(n)
	m := make([]float64, half)
	var summ2 float64
	for i := range half {
		// m for the upper half, largest first: -Phi^-1((i+1-3/8)/(n+1/4)).
		m[i] = -distuv.UnitNormal.Quantile((float64(i+1) - 0.375) / (nf + 0.25))
		summ2 += m[i] * m[i]
	}
	summ2 *= 2
	ssumm2 := math.Sqrt(summ2)
	u := 1 / math.Sqrt(nf)
	a1 := m[0]/ssumm2 + poly(u, 0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056)
	var fac float64
	first := 1
	if n > 5 {
		a2 := m[1]/ssumm2 + poly(u, 0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633)
		fac = math.Sqrt((summ2 - 2*m[0]*m[0] - 2*m[1]*m[1]) / (1 - 2*a1*a1 - 2*a2*a2))
		a[1] = a2
		first = 2
	} else {
		fac = math.Sqrt((summ2 - 2*m[0]*m[0]) / (1 - 2*a1*a1))
	}
	a[0] = a1
	for i := first; i < half; i++ {
		a[i] = m[i] / fac
	}
	return a
}

// swA is the coefficient of x_(i+1) (i from 0) in the full antisymmetric
// vector: negative in the lower half, 0 at the middle of an odd n.
func swA(a []float64, i, n int) float64 {
	j := n - 1 - i
	switch {
	case i < j:
		return -a[i]
	case i > j:
		return a[j]
	}
	return 0
}

// swPValue is Royston's (1992, 1995) approximation of P(W' <= W).
func swPValue(n int, w, oneMinusW float64) float64 {
	if n == 3 {
		return clamp01(6 / math.Pi * (math.Asin(math.Sqrt(w)) - math.Asin(math.Sqrt(0.75))))
	}
	nf := float64(n)
	y := math.Log(oneMinusW)
	var mu, sigma float64
	if n <= 11 {
		g := poly(nf, -2.273, 0.459)
		if y >= g {
			return 0 // W below the support of the approximation
		}
		y = -math.Log(g - y)
		mu = poly(nf, 0.5440, -0.39978, 0.025054, -6.714e-4)
		sigma = math.Exp(poly(nf, 1.3822, -0.77857, 0.062767, -0.0020322))
	} else {
		v := math.Log(nf)
		mu = poly(v, -1.5861, -0.31082, -0.083751, 0.0038915)
		sigma = math.Exp(poly(v, -0.4803, -0.082676, 0.0030302))
	}
	return clamp01(distuv.UnitNormal.Survival((y - mu) / sigma))
}

// poly evaluates c[0] + c[1] x + c[2] x² + ... by Horner's rule.
func poly(x float64, c ...float64) float64 {
	var r float64
	for i := len(c) - 1; i >= 0; i-- {
		r = r*x + c[i]
	}
	return r
}
