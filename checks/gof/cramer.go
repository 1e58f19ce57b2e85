package gof

import (
	"math"

	"github.com/assay-project/assay/checks/internal/fsum"
)

// cramerVonMises returns W² of a sorted sample against ref, and the
// Kolmogorov distance found on the way:
//
//	W² = 1/(12n) + sum_{i=1..n} (F(x_(i)) - (2i-1)/(2n))²
//
// (D'Agostino & Stephens 1986, eq. 4.2). F is computed once per run of
// equal values (runEnd); every observation still adds its own term, in
// order.
func cramerVonMises(s Sorted, ref CDF) (float64, KSDistance) {
	n := len(s.x)
	nf := float64(n)
	var sum fsum.Neumaier
	var k ksAcc
	for i := 0; i < n; {
		u := ref.CDF(s.x[i])
		j := runEnd(s.x, i)
		k.addRun(i, j, n, u)
		for ; i < j; i++ {
			d := u - float64(2*i+1)/(2*nf)
			sum.Add(d * d)
		}
	}
	return 1/(12*nf) + sum.Value(), k.result()
}

// cvmSpecifiedP returns P(W²_n >= w) for a fully specified continuous
// reference by the first-order finite-n approximation of Csörgő, S. &
// Faraway, J. J. (1996), "The exact and asymptotic distributions of
// Cramér-von Mises statistics", JRSS B 58(1):221-234, eq. (1.8):
//
//	P(W²_n < x) ≈ V(x) + psi1(x)/n
//
// with V the limit distribution (cvmLimitCDF) and psi1 as in cvmPsi1. W²_n
// lies in [1/(12n), n/3], where the distribution is 0 and 1.
func cvmSpecifiedP(n int, w float64) float64 {
	nf := float64(n)
	switch {
	case w <= 1/(12*nf):
		return 1
	case w >= nf/3:
		return 0
	}
	return clamp01(1 - (cvmLimitCDF(w) + cvmPsi1(w)/nf))
}

// cvmLimitCDF is the limit distribution of W² (Anderson & Darling 1952,
// eq. 4.35, in the Bessel-function form of Csörgő & Faraway 1996, eq. 1.6):
//
//	V(x) = 1/(pi sqrt x) sum_{k>=0} Γ(k+1/2)/(Γ(1/2) k!) sqrt(4k+1)
//	       exp(-q_k) K_{1/4}(q_k),  q_k = (4k+1)²/(16x)
//
// with K the modified Bessel function of the second kind.
func cvmLimitCDF(x float64) float64 {
	if x <= 0 {
		return 0
	}
	var tot float64
	for k := range 60 {
		kf := float64(k)
		q := (4*kf + 1) * (4*kf + 1) / (16 * x)
		term := halfRatio(k) * math.Sqrt(4*kf+1) * expBesselK(0.25, q)
		tot += term
		if term < 1e-17*tot {
			break
		}
	}
	return tot / (math.Pi * math.Sqrt(x))
}

// halfRatio returns Γ(k+1/2) / (Γ(1/2) k!) = (1/2)(3/2)...((2k-1)/2) / k!.
func halfRatio(k int) float64 {
	r := 1.0
	for j := 1; j <= k; j++ {
		r *= (float64(j) - 0.5) / float64(j)
	}
	return r
}

// cvmPsi1 is the 1/n term of Csörgő & Faraway (1996), eq. (1.8):
//
//	psi1(x) = V(x)/12 - sum_{k>=0} A_k(x) / (pi k!)
//	A_k(x) = (2k+1) Γ(k+1/2) E2((4k+3)/(2 sqrt x)) / (9 x^(3/4))
//	       + Γ(k+1/2) E3((4k+1)/(2 sqrt x)) / (72 x^(5/4))
//	       + 2 (2k+3) Γ(k+3/2) E3((4k+5)/(2 sqrt x)) / (12 x^(5/4))
//	       + 7 (2k+1) Γ(k+1/2) E2((4k+1)/(2 sqrt x)) / (144 x^(3/4))
//	       + 7 (2k+1) Γ(k+1/2) E2((4k+5)/(2 sqrt x)) / (144 x^(3/4))
//
// where, with z = y²/4, E2(y) = e^(-z) sqrt(y³/(8 pi)) (K_{1/4}(z) + K_{3/4}(z))
// and E3(y) = e^(-z) sqrt(y⁵/(32 pi)) (2 K_{1/4}(z) + 3 K_{3/4}(z) - K_{5/4}(z))
// are parabolic-cylinder terms written with Bessel functions.
func cvmPsi1(x float64) float64 {
	x34 := math.Pow(x, 0.75)
	x54 := math.Pow(x, 1.25)
	r := 2 * math.Sqrt(x)
	var tot float64
	for k := range 60 {
		kf := float64(k)
		g := math.Gamma(kf + 0.5)
		g3 := math.Gamma(kf + 1.5)
		a := (2*kf+1)*g*cvmE2((4*kf+3)/r)/(9*x34) +
			g*cvmE3((4*kf+1)/r)/(72*x54) +
			2*(2*kf+3)*g3*cvmE3((4*kf+5)/r)/(12*x54) +
			7*(2*kf+1)*g*cvmE2((4*kf+1)/r)/(144*x34) +
			7*(2*kf+1)*g*cvmE2((4*kf+5)/r)/(144*x34)
		term := a / (math.Pi * math.Gamma(kf+1))
		tot -= term
		if math.Abs(term) < 1e-17 {
			break
		}
	}
	return tot + cvmLimitCDF(x)/12
}

func cvmE2(y float64) float64 {
	z := y * y / 4
	return math.Sqrt(y*y*y/(8*math.Pi)) * (expBesselK(0.25, z) + expBesselK(0.75, z))
}

func cvmE3(y float64) float64 {
	z := y * y / 4
	return math.Sqrt(y*y*y*y*y/(32*math.Pi)) *
		(2*expBesselK(0.25, z) + 3*expBesselK(0.75, z) - expBesselK(1.25, z))
}

// expBesselK returns exp(-z) K_nu(z) for z > 0, with K_nu the modified
// Bessel function of the second kind, from the integral
//
//	K_nu(z) = int_0^inf exp(-z cosh t) cosh(nu t) dt
//
// (Abramowitz & Stegun 1964, 9.6.24) by the trapezoidal rule. The
// integrand is analytic and falls off double-exponentially, so the rule
// converges geometrically in the step: a step of 1/16, and at most half the
// width 1/sqrt(z) of the peak at t = 0, leaves an error far below double
// precision (the tests compare with tabulated values). The factor
// exp(-z) is folded into the exponent, so that large z underflows to 0
// instead of overflowing.
func expBesselK(nu, z float64) float64 {
	if z <= 0 {
		return math.Inf(1)
	}
	h := min(1.0/16, 0.5/math.Sqrt(z))
	var sum float64
	for j := 0; ; j++ {
		t := float64(j) * h
		// exp(-z (cosh t - 1)) is below 1e-18 of its start past 42.
		e := z * (math.Cosh(t) - 1)
		if e > 42 {
			break
		}
		f := math.Exp(-e-2*z) * math.Cosh(nu*t)
		if j == 0 {
			f /= 2
		}
		sum += f
	}
	return sum * h
}

// cvmNormalP returns the p-value of W² for normality with mean and
// standard deviation (n-1 denominator) estimated from the sample, from
// Stephens' modified statistic W* = W² (1 + 0.5/n) and the piecewise
// formula of D'Agostino & Stephens (1986), Table 4.9:
//
//	W* < 0.0275:          1 - exp(-13.953 + 775.5 W* - 12542.61 W*²)
//	0.0275 <= W* < 0.051: 1 - exp(-5.903 + 179.546 W* - 1515.29 W*²)
//	0.051 <= W* < 0.092:  exp(0.886 - 31.62 W* + 10.897 W*²)
//	W* >= 0.092:          exp(1.111 - 34.242 W* + 12.832 W*²)
//
// The last piece turns upward beyond W* = 1.33; from W* = 1.1 on (p below
// 7.4e-10) the p-value is reported as 0.
func cvmNormalP(n int, w2 float64) float64 {
	return piecewiseP(w2*(1+0.5/float64(n)), cvmNormalPieces)
}

var cvmNormalPieces = []expQuadratic{
	{upTo: 0.0275, a: -13.953, b: 775.5, c: -12542.61, complement: true},
	{upTo: 0.051, a: -5.903, b: 179.546, c: -1515.29, complement: true},
	{upTo: 0.092, a: 0.886, b: -31.62, c: 10.897},
	{upTo: 1.1, a: 1.111, b: -34.242, c: 12.832},
}
