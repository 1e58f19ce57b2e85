package order

import (
	"cmp"
	"slices"
	"unsafe"
)

// radixMin is the length below which SortUint64 hands over to slices.Sort:
// under it, clearing and summing the 8 x 256 counts costs more than
// comparing.
const radixMin = 256

// SortUint64 sorts xs in increasing order by least-significant-digit radix
// sort (Knuth 1998, The Art of Computer Programming vol. 3, 2nd ed.,
// §5.2.5, "Sorting by distribution"): eight stable counting passes, one per
// byte from the lowest, each moving the values between xs and scratch. The
// counts of all eight bytes are taken in one reading before the first pass;
// a pass whose byte is the same in every value moves nothing and is
// skipped, so values sharing their top bits (a range of hashes) or their
// low bits cost fewer passes. Time O(8n), no allocation.
//
// scratch must hold at least len(xs) values; what it holds is overwritten.
// Slices shorter than radixMin are sorted by slices.Sort.
func SortUint64(xs, scratch []uint64) {
	n := len(xs)
	if n < radixMin {
		slices.Sort(xs)
		return
	}
	scratch = scratch[:n]
	var counts [8][256]int
	for _, x := range xs {
		counts[0][byte(x)]++
		counts[1][byte(x>>8)]++
		counts[2][byte(x>>16)]++
		counts[3][byte(x>>24)]++
		counts[4][byte(x>>32)]++
		counts[5][byte(x>>40)]++
		counts[6][byte(x>>48)]++
		counts[7][byte(x>>56)]++
	}
	src, dst := xs, scratch
	for d := range counts {
		shift := uint(8 * d)
		c := &counts[d]
		if c[byte(src[0]>>shift)] == n {
			continue
		}
		next := 0
		for k, m := range c {
			c[k] = next
			next += m
		}
		for _, x := range src {
			k := byte(x >> shift)
			dst[c[k]] = x
			c[k]++
		}
		src, dst = dst, src
	}
	if &src[0] != &xs[0] {
		copy(xs, src)
	}
}

// SortFloat64 sorts xs in increasing order by SortUint64 on their FloatKey
// bits: the values are turned into their keys in place (a float64 and a
// uint64 have the same size and alignment, so xs is read as a []uint64),
// sorted, and turned back, with one scratch array of len(xs). The order is
// < with -0 before +0 (slices.Sort leaves them in any order); NaNs, which
// the callers exclude, would go to either end by their sign bit. Slices
// shorter than radixMin are sorted by comparing their keys.
func SortFloat64(xs []float64) {
	if len(xs) < radixMin {
		slices.SortFunc(xs, func(a, b float64) int { return cmp.Compare(FloatKey(a), FloatKey(b)) })
		return
	}
	keys := unsafe.Slice((*uint64)(unsafe.Pointer(&xs[0])), len(xs))
	for i, x := range xs {
		keys[i] = FloatKey(x)
	}
	SortUint64(keys, make([]uint64, len(keys)))
	for i, k := range keys {
		xs[i] = FloatOfKey(k)
	}
}
