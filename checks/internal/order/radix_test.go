package order

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSortUint64 compares SortUint64 with slices.Sort on random values and
// on shapes that exercise the skipped passes (one byte varying, the top
// bits shared), an odd number of passes (the result lands in scratch and
// is copied back), ties, and the extremes of the range, at lengths on
// either side of radixMin.
func TestSortUint64(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	fill := func(n int, f func(i int) uint64) []uint64 {
		a := make([]uint64, n)
		for i := range a {
			a[i] = f(i)
		}
		return a
	}
	shapes := []struct {
		name string
		gen  func(n int) []uint64
	}{
		{"random", func(n int) []uint64 { return fill(n, func(int) uint64 { return rng.Uint64() }) }},
		{"all equal", func(n int) []uint64 { return fill(n, func(int) uint64 { return 0xdeadbeef }) }},
		{"two values", func(n int) []uint64 { return fill(n, func(int) uint64 { return uint64(rng.IntN(2)) << 63 }) }},
		{"low byte only", func(n int) []uint64 { return fill(n, func(int) uint64 { return uint64(rng.IntN(256)) }) }},
		{"top byte only", func(n int) []uint64 { return fill(n, func(int) uint64 { return uint64(rng.IntN(256)) << 56 }) }},
		{"three bytes", func(n int) []uint64 {
			return fill(n, func(int) uint64 {
				return uint64(rng.IntN(256))<<8 | uint64(rng.IntN(256))<<24 | uint64(rng.IntN(256))<<40
			})
		}},
		{"top bits shared", func(n int) []uint64 { return fill(n, func(int) uint64 { return 0xabc<<52 | rng.Uint64()>>12 }) }},
		{"ties", func(n int) []uint64 {
			return fill(n, func(int) uint64 { return rng.Uint64() % 7 * 0x0101010101010101 })
		}},
		{"ascending", func(n int) []uint64 { return fill(n, func(i int) uint64 { return uint64(i) }) }},
		{"descending", func(n int) []uint64 { return fill(n, func(i int) uint64 { return uint64(n - i) }) }},
		{"extremes", func(n int) []uint64 {
			return fill(n, func(i int) uint64 { return []uint64{0, math.MaxUint64, 1, math.MaxUint64 - 1}[i%4] })
		}},
	}
	for _, s := range shapes {
		for _, n := range []int{0, 1, 2, radixMin - 1, radixMin, radixMin + 1, 1000, 1 << 14} {
			xs := s.gen(n)
			want := slices.Clone(xs)
			slices.Sort(want)
			// scratch longer than xs, holding garbage that must not leak in
			scratch := fill(n+5, func(int) uint64 { return 12345 })
			SortUint64(xs, scratch)
			if !slices.Equal(xs, want) {
				t.Errorf("%s n=%d: not the order slices.Sort gives", s.name, n)
			}
		}
	}
}

// BenchmarkSortUint64 sorts 2^14 random values, the size of one range of
// hashes in the duplicate rules, against slices.Sort.
func BenchmarkSortUint64(b *testing.B) {
	const n = 1 << 14
	rng := rand.New(rand.NewPCG(5, 6))
	orig := make([]uint64, n)
	for i := range orig {
		orig[i] = rng.Uint64()
	}
	xs, scratch := make([]uint64, n), make([]uint64, n)
	for _, tc := range []struct {
		name string
		sort func()
	}{
		{"radix", func() { SortUint64(xs, scratch) }},
		{"slices.Sort", func() { slices.Sort(xs) }},
	} {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(8 * n)
			for b.Loop() {
				copy(xs, orig)
				tc.sort()
			}
		})
	}
}

// TestSortFloat64 compares SortFloat64 with sorting in key order, bit for
// bit (-0 before +0), on the shapes of keyShapes, about radixMin and
// above.
func TestSortFloat64(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for name, gen := range keyShapes {
		for _, n := range []int{0, 1, 2, radixMin - 1, radixMin, radixMin + 1, 1000, 5000} {
			xs := gen(rng, n)
			want := keySorted(xs)
			SortFloat64(xs)
			if !slices.EqualFunc(xs, want, func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }) {
				t.Fatalf("%s n=%d: SortFloat64 gives another order than sorting", name, n)
			}
		}
	}
}

// BenchmarkSortFloat64 sorts 1e6 and 1e7 normal values (1e7 skipped with
// -short), against slices.Sort.
func BenchmarkSortFloat64(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		if n > 1_000_000 && testing.Short() {
			continue
		}
		rng := rand.New(rand.NewPCG(5, 6))
		orig := fill(n, func(int) float64 { return 50 + 10*rng.NormFloat64() })
		xs := make([]float64, n)
		for _, tc := range []struct {
			name string
			sort func()
		}{
			{"radix", func() { SortFloat64(xs) }},
			{"slices.Sort", func() { slices.Sort(xs) }},
		} {
			b.Run(fmt.Sprintf("%s/%.0e", tc.name, float64(n)), func(b *testing.B) {
				b.ReportAllocs()
				b.SetBytes(int64(8 * n))
				for b.Loop() {
					copy(xs, orig)
					tc.sort()
				}
			})
		}
	}
}
