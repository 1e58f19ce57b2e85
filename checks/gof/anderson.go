package gof

import (
	"math"

	"github.com/assay-project/assay/checks/internal/fsum"
)

// andersonDarling returns A² of a sorted sample against ref, and the
// Kolmogorov distance found on the way:
//
//	A² = -n - (1/n) sum_{i=1..n} (2i-1) [ln F(x_(i)) + ln(1 - F(x_(n+1-i)))]
//
// (Anderson & Darling 1954; D'Agostino & Stephens 1986, eq. 4.2). Regrouping
// the sum by observation, each x_(i) contributes
// (2i-1) ln F(x_(i)) + (2n+1-2i) ln(1 - F(x_(i))), so one pass suffices;
// 1 - F comes from the reference's Survival method when it has one. The sum
// is compensated (Neumaier) because A² is the small difference of two
// numbers of size n. A value where the reference gives F = 0 or 1 - F = 0
// (beyond the floating-point tail of F) makes A² infinite and its p-value 0.
// ln F and ln(1 - F) are computed once per run of equal values (runEnd);
// every observation still adds its own term, in order.
func andersonDarling(s Sorted, ref CDF) (float64, KSDistance) {
	n := len(s.x)
	var sum fsum.Neumaier
	var k ksAcc
	inf := false
	for i := 0; i < n; {
		v := s.x[i]
		u := ref.CDF(v)
		lu, ls := math.Log(u), math.Log(survival(ref, v))
		j := runEnd(s.x, i)
		k.addRun(i, j, n, u)
		for ; i < j; i++ {
			term := float64(2*i+1)*lu + float64(2*n-2*i-1)*ls
			if math.IsInf(term, -1) {
				inf = true
				continue
			}
			sum.Add(term)
		}
	}
	if inf {
		return math.Inf(1), k.result()
	}
	return -float64(n) - sum.Value()/float64(n), k.result()
}

// adSpecifiedP returns P(A²_n >= z) for a fully specified continuous
// reference by Marsaglia, G. & Marsaglia, J. (2004), "Evaluating the
// Anderson-Darling distribution", Journal of Statistical Software 9(2):
// the limit distribution adinf(z) by their two-piece fit (|error| < 2e-6
// for z < 2, < 8e-7 above), then their correction errfix(n, adinf(z)),
// which they state is good to the 4th-5th digit for n >= 7 (3 digits
// below). The constants are theirs.
func adSpecifiedP(n int, z float64) float64 {
	if math.IsInf(z, 1) {
		return 0
	}
	if z <= 0 {
		return 1
	}
	x := adLimitCDF(z)
	nf := float64(n)
	var fix float64
	switch c := 0.01265 + 0.1757/nf; {
	case x > 0.8:
		fix = (-130.2137 + (745.2337-(1705.091-(1950.646-(1116.360-255.7844*x)*x)*x)*x)*x) / nf
	case x < c:
		t := x / c
		t = math.Sqrt(t) * (1 - t) * (49*t - 102)
		fix = t * (0.0037/(nf*nf) + 0.00078/nf + 0.00006) / nf
	default:
		t := (x - c) / (0.8 - c)
		t = -0.00022633 + (6.54034-(14.6538-(14.458-(8.259-1.91864*t)*t)*t)*t)*t
		fix = t * (0.04213 + 0.01365/nf) / nf
	}
	return clamp01(1 - (x + fix))
}

// adLimitCDF is Marsaglia & Marsaglia's (2004) adinf: P(A² < z) as n -> infinity.
func adLimitCDF(z float64) float64 {
	if z < 2 {
		return math.Exp(-1.2337141/z) / math.Sqrt(z) *
			(2.00012 + (0.247105-(0.0649821-(0.0347962-(0.011672-0.00168691*z)*z)*z)*z)*z)
	}
	return math.Exp(-math.Exp(1.0776 - (2.30695-(0.43424-(0.082433-(0.008056-0.0003146*z)*z)*z)*z)*z))
}

// adNormalP returns the p-value of A² for normality with mean and standard
// deviation (n-1 denominator) estimated from the sample, from Stephens'
// modified statistic A* = A² (1 + 0.75/n + 2.25/n²) and the piecewise
// formula of D'Agostino & Stephens (1986), "Goodness-of-Fit Techniques",
// Table 4.9:
//
//	A* < 0.2:          1 - exp(-13.436 + 101.14 A* - 223.73 A*²)
//	0.2 <= A* < 0.34:  1 - exp(-8.318 + 42.796 A* - 59.938 A*²)
//	0.34 <= A* < 0.6:  exp(0.9177 - 4.279 A* - 1.38 A*²)
//	A* >= 0.6:         exp(1.2937 - 5.709 A* + 0.0186 A*²)
//
// The last piece turns upward beyond A* = 153; the p-value there (below
// 1e-300) is reported as 0.
func adNormalP(n int, a2 float64) float64 {
	nf := float64(n)
	return piecewiseP(a2*(1+0.75/nf+2.25/(nf*nf)), adNormalPieces)
}

var adNormalPieces = []expQuadratic{
	{upTo: 0.2, a: -13.436, b: 101.14, c: -223.73, complement: true},
	{upTo: 0.34, a: -8.318, b: 42.796, c: -59.938, complement: true},
	{upTo: 0.6, a: 0.9177, b: -4.279, c: -1.38},
	{upTo: 153, a: 1.2937, b: -5.709, c: 0.0186},
}

// expQuadratic is one piece of the p-value formulas of D'Agostino &
// Stephens (1986): for t below upTo, p = exp(a + b t + c t²), or one minus
// that when complement is set.
type expQuadratic struct {
	upTo, a, b, c float64
	complement    bool
}

// piecewiseP evaluates the first piece whose upTo exceeds t, and gives 0
// beyond the last.
func piecewiseP(t float64, pieces []expQuadratic) float64 {
	for _, q := range pieces {
		if t < q.upTo {
			e := math.Exp(q.a + q.b*t + q.c*t*t)
			if q.complement {
				return clamp01(1 - e)
			}
			return clamp01(e)
		}
	}
	return 0
}

// adExponentialP returns the p-value of A² for an exponential with origin 0
// and scale estimated by the mean, from Stephens' modified statistic
// t = A² (1 + 0.6/n) (Stephens 1974, JASA 69:730-737; D'Agostino & Stephens
// 1986, section 4.9) and the piecewise formula
//
//	t < 0.26:         1 - exp(-12.2204 + 67.459 t - 110.3 t²)
//	0.26 <= t < 0.51: 1 - exp(-6.1327 + 20.218 t - 18.663 t²)
//	0.51 <= t < 0.95: exp(0.9209 - 3.353 t + 0.300 t²)
//	t >= 0.95:        exp(0.731 - 3.009 t + 0.15 t²)
//
// [coefficients read in a secondary transcription, see
// shared/reference/VALUES.md 4.2; the tests check that they reproduce
// Stephens' critical points 0.916, 1.062, 1.321, 1.591, 1.959 at 0.15 ...
// 0.01 and the test's size by simulation]. The last piece turns upward
// beyond t = 10; p there (below 6e-7) is reported as 0.
func adExponentialP(n int, a2 float64) float64 {
	return piecewiseP(a2*(1+0.6/float64(n)), adExponentialPieces)
}

var adExponentialPieces = []expQuadratic{
	{upTo: 0.26, a: -12.2204, b: 67.459, c: -110.3, complement: true},
	{upTo: 0.51, a: -6.1327, b: 20.218, c: -18.663, complement: true},
	{upTo: 0.95, a: 0.9209, b: -3.353, c: 0.300},
	{upTo: 10, a: 0.731, b: -3.009, c: 0.15},
}
