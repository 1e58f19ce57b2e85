package dist

import "math"

// Interval is the set of values a family can produce, in a form a caller
// can test inline over millions of values: the finite x with Lo ≤ x ≤ Hi,
// and only whole numbers when Whole is set. An open end is held as the
// nearest float64 inside it (x > 0 as x ≥ 5e-324, the smallest positive
// subnormal), which for float64 values is the same test; the infinities
// are outside every interval (its ends are at most ±math.MaxFloat64), and
// so is NaN, for which both comparisons are false.
type Interval struct {
	Lo, Hi float64
	Whole  bool
}

// Finite is the interval of every finite number.
var Finite = Interval{Lo: -math.MaxFloat64, Hi: math.MaxFloat64}

// between returns the finite values from lo to hi, each end open or
// closed.
func between(lo, hi float64, loOpen, hiOpen bool) Interval {
	if loOpen {
		lo = math.Nextafter(lo, math.Inf(1))
	}
	if hiOpen {
		hi = math.Nextafter(hi, math.Inf(-1))
	}
	return Interval{Lo: max(lo, Finite.Lo), Hi: min(hi, Finite.Hi)}
}

// wholeBetween returns the whole numbers from lo to hi, both included.
func wholeBetween(lo, hi float64) Interval {
	iv := between(lo, hi, false, false)
	iv.Whole = true
	return iv
}

// Contains reports whether x is in the interval.
func (v Interval) Contains(x float64) bool {
	return x >= v.Lo && x <= v.Hi && (!v.Whole || x == math.Trunc(x))
}

// Intersect returns the values in both v and w.
func (v Interval) Intersect(w Interval) Interval {
	return Interval{Lo: max(v.Lo, w.Lo), Hi: min(v.Hi, w.Hi), Whole: v.Whole || w.Whole}
}
