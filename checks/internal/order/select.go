// Package order holds order-statistic routines shared by the statistical
// packages of checks.
package order

import (
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
