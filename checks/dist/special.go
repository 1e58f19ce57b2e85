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

// errNoRoot reports that a bracketing search found no sign change.
var errNoRoot = errors.New("no sign change found")

// rootPositive finds t with f(t) = 0 for an increasing function f of a
// positive variable t, starting from the guess t0 > 0. f returns the value
// and the derivative at t.
//
// The root is first bracketed by doubling or halving t0 (at most 200 times),
// then refined by Newton steps that fall back to bisection (in the geometric
// mean, as t is a scale) whenever a step leaves the bracket — the
// safeguarded Newton method of Press et al. (2007), Numerical Recipes 3rd
// ed., §9.4 (rtsafe). It stops when the bracket or the step is below 1e-14
// relative, or after 200 iterations.
func rootPositive(f func(t float64) (float64, float64), t0 float64) (float64, error) {
	if !(t0 > 0) || math.IsInf(t0, 1) {
		t0 = 1
	}
	lo, hi := t0, t0
	flo, _ := f(lo)
	fhi := flo
	for i := 0; flo > 0; i++ {
		if i == 200 || lo < 1e-300 {
			return 0, errNoRoot
		}
		hi, fhi = lo, flo
		lo /= 2
		flo, _ = f(lo)
	}
	for i := 0; fhi < 0; i++ {
		if i == 200 || hi > 1e300 {
			return 0, errNoRoot
		}
		lo, flo = hi, fhi
		hi *= 2
		fhi, _ = f(hi)
	}
	if flo == 0 {
		return lo, nil
	}
	if fhi == 0 {
		return hi, nil
	}
	t := math.Sqrt(lo * hi)
	for range 200 {
		v, d := f(t)
		if v == 0 {
			return t, nil
		}
		if v < 0 {
			lo = t
		} else {
			hi = t
		}
		next := t - v/d
		if !(d > 0) || !(next > lo && next < hi) {
			next = math.Sqrt(lo * hi)
		}
		if math.Abs(next-t) <= 1e-14*t || (hi-lo) <= 1e-14*t {
			return next, nil
		}
		t = next
	}
	return t, nil
}
