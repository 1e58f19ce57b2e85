package relate

import (
	"math/bits"
	"slices"
)

// selectK reorders a so that a[k] holds the value of rank k (0-based) in
// ascending order, with no larger value before it and no smaller one after
// it, and returns a[k]. Quickselect (Hoare 1961, "Algorithm 65: find") with
// a median-of-three pivot, in expected O(n); after 3 log2(n) rounds it
// sorts what is left, so the worst case stays O(n log n).
func selectK(a []float64, k int) float64 {
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

// medianInPlace returns the median of a (the mean of the two middle values
// for even length), reordering a. a must not be empty.
func medianInPlace(a []float64) float64 {
	h := len(a) / 2
	upper := selectK(a, h)
	if len(a)%2 == 1 {
		return upper
	}
	lower := slices.Max(a[:h])
	return (lower + upper) / 2
}
