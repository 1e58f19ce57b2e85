// Package order holds order-statistic routines shared by the statistical
// packages of checks: selection and the type-7 quantile.
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
// sorts what is left, so the worst case stays O(n log n).
func Select(a []float64, k int) float64 {
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
	lo := sorted[int(j)-1]
	g := h - j
	if g == 0 || sorted[int(j)] == lo {
		return float64(lo)
	}
	return (1-g)*float64(lo) + g*float64(sorted[int(j)])
}
