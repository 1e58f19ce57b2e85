package dist

import (
	"errors"
	"math"
)

// trigamma returns ψ'(x), the derivative of the digamma function, for x > 0.
//
// The recurrence ψ'(x) = ψ'(x+1) + 1/x² moves x to at least 10, where the
// asymptotic series in the Bernoulli numbers B_2k (Abramowitz & Stegun
// 1964, 6.4.12, from memory; the coefficients are checked against SciPy in
// the tests)
//
//	ψ'(x) ≈ 1/x + 1/(2x²) + Σ_k B_2k / x^(2k+1)
//	      = 1/x + 1/(2x²) + 1/(6x³) − 1/(30x⁵) + 1/(42x⁷) − 1/(30x⁹) + 5/(66x¹¹) − 691/(2730x¹³)
//
// is accurate to about 1e-14 relative: the first omitted term, 7/(6x¹⁵),
// is 1.2e-14 of 1/x at x = 10. gonum's mathext has Digamma but no
// trigamma; here it serves as a Newton derivative, so its accuracy sets
// the speed of convergence, not the root.
func trigamma(x float64) float64 {
	var acc float64
	for x < 10 {
		acc += 1 / (x * x)
		x++
	}
	r := 1 / x
	r2 := r * r
	series := r + r2/2 + r*r2*(1.0/6+r2*(-1.0/30+r2*(1.0/42+r2*(-1.0/30+r2*(5.0/66-r2*691.0/2730)))))
	return acc + series
}

// errNoRoot reports that the search found no sign change.
var errNoRoot = errors.New("no sign change found")

// rootPositive finds t > 0 with f(t) = 0 for an increasing function f of a
// positive variable, starting from the guess t0 > 0. f returns the value
// and the derivative at t.
//
// It takes Newton steps from t0 and keeps the tightest bracket [lo, hi]
// its evaluations have shown (lo = 0 and hi = +Inf until a sign is seen on
// that side). A step that leaves the bracket, or a derivative that is not
// positive, is replaced by bisection in the geometric mean (t is a scale)
// once both ends are known, and by doubling or halving t before — the
// safeguarded Newton method of Press et al. (2007), Numerical Recipes 3rd
// ed., §9.4 (rtsafe), without its separate bracketing stage, so that a
// good start costs no extra evaluations. It stops when a step or the
// bracket is below 1e-14 relative; it fails when 400 steps do not find the
// root or t leaves the floating-point range.
func rootPositive(f func(t float64) (float64, float64), t0 float64) (float64, error) {
	if !(t0 > 0) || math.IsInf(t0, 1) {
		t0 = 1
	}
	lo, hi := 0.0, math.Inf(1)
	t := t0
	for range 400 {
		v, d := f(t)
		switch {
		case v == 0:
			return t, nil
		case v < 0:
			lo = t
		case v > 0:
			hi = t
		default:
			return 0, errNoRoot // NaN
		}
		next := t - v/d
		if !(d > 0) || !(next > lo && next < hi) {
			switch {
			case math.IsInf(hi, 1):
				next = 2 * t
			case lo == 0:
				next = t / 2
			default:
				next = math.Sqrt(lo * hi)
			}
		}
		if !(next > 0) || math.IsInf(next, 1) {
			return 0, errNoRoot
		}
		if math.Abs(next-t) <= 1e-14*t || (lo > 0 && !math.IsInf(hi, 1) && hi-lo <= 1e-14*hi) {
			return next, nil
		}
		t = next
	}
	return 0, errNoRoot
}
