// Package order holds order-statistic routines shared by the statistical
// packages of checks: selection, the type-7 quantile (from sorted values,
// or by selection from unsorted ones), and the chunked store the rules
// that keep a column's values put them in.
package order

import (
	"math"
	"math/bits"
	"slices"
)

// Select reorders a so that a[k] holds the value of rank k (0-based) in
// ascending order, with no larger value before it and no smaller one after
// it, and returns a[k]. Quickselect (Hoare 1961, "Algorithm 65: find") with
// a median-of-three pivot, in expected O(n); after 3 log2(n) rounds it
// sorts what is left, so the worst case stays O(n log n). The values must
// not be NaN.
func Select[T int64 | float64 | uint64](a []T, k int) T {
	lo, hi := 0, len(a)-1
	budget := 3 * bits.Len(uint(len(a)))
	for hi > lo {
		if budget == 0 {
			slices.Sort(a[lo : hi+1])
			return a[k]
		}
		budget--
		mid := lo + (hi-lo)/2
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		pivot := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < pivot {
				i++
			}
			for a[j] > pivot {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		// a[lo..j] <= pivot, a[j+1..i-1] == pivot, a[i..hi] >= pivot.
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	return a[k]
}

// Quantile7 returns the p-quantile, 0 <= p <= 1, of values sorted in
// ascending order by definition 7 of Hyndman & Fan (1996), the default of R
// and NumPy: with h = 1 + (n−1)p, j = floor(h) and g = h − j,
//
//	Q(p) = (1−g) x_(j) + g x_(j+1)    (1-based order statistics)
//
// and x_(j) alone when g = 0 or x_(j) = x_(j+1). The arithmetic is the one
// R's quantile.default does, so the two agree to the last bit; integers are
// read exactly, whatever their size. It returns NaN for no values or p
// outside [0, 1]; for unsorted input the result is meaningless.
func Quantile7[T int64 | float64](sorted []T, p float64) float64 {
	n := len(sorted)
	if n == 0 || !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	h := 1 + float64(n-1)*p
	j := math.Floor(h)
	g := h - j
	if g == 0 {
		return float64(sorted[int(j)-1])
	}
	return interpolate7(sorted[int(j)-1], sorted[int(j)], g)
}

// interpolate7 is (1−g) lo + g hi, the type-7 quantile between the order
// statistics lo = x_(j) and hi = x_(j+1) with weight g in (0, 1), or lo
// when the two are equal, in R's arithmetic (see Quantile7).
func interpolate7[T int64 | float64](lo, hi T, g float64) float64 {
	if hi == lo {
		return float64(lo)
	}
	return (1-g)*float64(lo) + g*float64(hi)
}

// SelectRanks reorders a so that a[r] holds the value of rank r (0-based,
// ascending) for every r in ranks, which must be ascending (repeats
// allowed) and within [0, len(a)). The ranks are selected in increasing
// order, each in the part of a above the previous one: after rank r is in
// place, a[r+1:] holds exactly the values of ranks r+1 and up, so the next
// rank is found there, by a scan for the least value when it is r+1 and by
// Select otherwise. The values must not be NaN.
func SelectRanks[T int64 | float64 | uint64](a []T, ranks []int) {
	lo := 0 // a[:lo] is in place: no value of a[lo:] is smaller
	for _, r := range ranks {
		switch {
		case r < lo: // a repeat
			continue
		case r == lo:
			least := lo
			for i := lo + 1; i < len(a); i++ {
				if a[i] < a[least] {
					least = i
				}
			}
			a[lo], a[least] = a[least], a[lo]
		default:
			Select(a[lo:], r-lo)
		}
		lo = r + 1
	}
}

// Quantiles7 returns the p-quantiles of a, each p in [0, 1] (NaN for
// another p), by definition 7 of Hyndman & Fan (1996) (see
// Quantile7), without sorting: the order statistics x_(j) and x_(j+1) each
// quantile reads are put in place by SelectRanks, in expected O(n) for a
// few quantiles, and Quantile7 reads them where sorting would have put
// them, so the results are those of sorting to the last bit. It reorders
// a, which must hold no NaN, and returns NaNs for no values.
func Quantiles7[T int64 | float64](a []T, ps ...float64) []float64 {
	out := make([]float64, len(ps))
	n := len(a)
	if n == 0 {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	ranks := ranks7(n, ps)
	SelectRanks(a, ranks)
	for i, p := range ps {
		out[i] = Quantile7(a, p)
	}
	return out
}
