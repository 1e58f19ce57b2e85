package order

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSelect compares Select with sorting, on shapes that trouble
// quickselect: ties, sorted and reversed input, organ pipes.
func TestSelect(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	shapes := map[string]func(n int) []float64{
		"random": func(n int) []float64 {
			a := make([]float64, n)
			for i := range a {
				a[i] = rng.NormFloat64()
			}
			return a
		},
		"ties": func(n int) []float64 {
			a := make([]float64, n)
			for i := range a {
				a[i] = float64(rng.IntN(3))
			}
			return a
		},
		"ascending": func(n int) []float64 {
			a := make([]float64, n)
			for i := range a {
				a[i] = float64(i)
			}
			return a
		},
		"descending": func(n int) []float64 {
			a := make([]float64, n)
			for i := range a {
				a[i] = float64(n - i)
			}
			return a
		},
		"organ pipe": func(n int) []float64 {
			a := make([]float64, n)
			for i := range a {
				a[i] = float64(min(i, n-1-i))
			}
			return a
		},
	}
	for name, gen := range shapes {
		for _, n := range []int{1, 2, 3, 10, 101, 1000} {
			for _, k := range []int{0, n / 3, n / 2, n - 1} {
				a := gen(n)
				want := slices.Clone(a)
				slices.Sort(want)
				if got := Select(a, k); got != want[k] {
					t.Fatalf("%s n=%d: Select(k=%d) = %v, want %v", name, n, k, got, want[k])
				}
				for i := range k {
					if a[i] > a[k] {
						t.Fatalf("%s n=%d k=%d: a[%d] = %v > a[k] = %v", name, n, k, i, a[i], a[k])
					}
				}
				for i := k + 1; i < n; i++ {
					if a[i] < a[k] {
						t.Fatalf("%s n=%d k=%d: a[%d] = %v < a[k] = %v", name, n, k, i, a[i], a[k])
					}
				}
				slices.Sort(a)
				if !slices.Equal(a, want) {
					t.Fatalf("%s n=%d k=%d: values changed", name, n, k)
				}
			}
		}
	}
}

// shapes are inputs of n values that trouble selection: random, heavy
// ties, all equal, sorted, reversed.
var shapes = []struct {
	name string
	gen  func(rng *rand.Rand, n int) []float64
}{
	{"random", func(rng *rand.Rand, n int) []float64 {
		a := make([]float64, n)
		for i := range a {
			a[i] = rng.NormFloat64() * 1e3
		}
		return a
	}},
	{"ties", func(rng *rand.Rand, n int) []float64 {
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(rng.IntN(4))
		}
		return a
	}},
	{"all equal", func(_ *rand.Rand, n int) []float64 {
		a := make([]float64, n)
		for i := range a {
			a[i] = -2.5
		}
		return a
	}},
	{"ascending", func(_ *rand.Rand, n int) []float64 {
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(i) / 3
		}
		return a
	}},
	{"descending", func(_ *rand.Rand, n int) []float64 {
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(n-i) / 7
		}
		return a
	}},
}

// TestQuantiles7 compares the quantiles found by selection with
// Quantile7 of the sorted values, bit for bit, on floats and on int64
// values beyond 2^53 (read exactly), for one quantile and for several at
// once (the box plot's).
func TestQuantiles7(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	sets := [][]float64{
		{0.5}, {0}, {1}, {0.95}, {0.999},
		{0.25, 0.5, 0.75},
		{0, 0.01, 0.25, 0.5, 0.5, 0.75, 0.99, 1},
		{0.75, 0.25},   // not ascending
		{-0.5, 0.5, 2}, // outside [0, 1]: NaN
	}
	for _, sh := range shapes {
		for _, n := range []int{1, 2, 3, 4, 5, 9, 10, 100, 1001, 4096} {
			for _, ps := range sets {
				xs := sh.gen(rng, n)
				sorted := slices.Clone(xs)
				slices.Sort(sorted)
				got := Quantiles7(slices.Clone(xs), ps...)
				ints := make([]int64, n)
				for i, x := range xs {
					ints[i] = int64(x*1e3) + 1<<60
				}
				sortedInts := slices.Clone(ints)
				slices.Sort(sortedInts)
				gotInts := Quantiles7(ints, ps...)
				for i, p := range ps {
					if want := Quantile7(sorted, p); !same(got[i], want) {
						t.Errorf("%s n=%d ps=%v: float quantile %v = %v, want %v", sh.name, n, ps, p, got[i], want)
					}
					if want := Quantile7(sortedInts, p); !same(gotInts[i], want) {
						t.Errorf("%s n=%d ps=%v: int quantile %v = %v, want %v", sh.name, n, ps, p, gotInts[i], want)
					}
				}
				slices.Sort(ints)
				if !slices.Equal(ints, sortedInts) {
					t.Fatalf("%s n=%d: the int values changed", sh.name, n)
				}
			}
		}
	}
	if got := Quantiles7([]float64{}, 0.5, 1); len(got) != 2 || !math.IsNaN(got[0]) || !math.IsNaN(got[1]) {
		t.Errorf("no values: %v, want two NaNs", got)
	}
}

// same reports whether two quantiles are the same float64, NaN included.
func same(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b)
}

// TestSelectRanks checks the invariant SelectRanks promises: each rank
// holds its sorted value, nothing larger before it and nothing smaller
// after it, and the values are only reordered.
func TestSelectRanks(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, sh := range shapes {
		for _, n := range []int{1, 2, 3, 7, 64, 1000} {
			for _, ranks := range [][]int{{0}, {n - 1}, {0, n - 1}, {0, 0, 1}, {n / 4, n / 4, n/4 + 1, n / 2, 3 * n / 4, n - 1}} {
				if slices.Max(ranks) >= n {
					continue
				}
				a := sh.gen(rng, n)
				want := slices.Clone(a)
				slices.Sort(want)
				SelectRanks(a, ranks)
				for _, r := range ranks {
					if a[r] != want[r] {
						t.Fatalf("%s n=%d ranks %v: a[%d] = %v, want %v", sh.name, n, ranks, r, a[r], want[r])
					}
					if slices.Max(a[:r+1]) > a[r] || slices.Min(a[r:]) < a[r] {
						t.Fatalf("%s n=%d ranks %v: a[%d] is not a partition point", sh.name, n, ranks, r)
					}
				}
				slices.Sort(a)
				if !slices.Equal(a, want) {
					t.Fatalf("%s n=%d ranks %v: values changed", sh.name, n, ranks)
				}
			}
		}
	}
}

// BenchmarkQuantiles7 compares quantiles found by selection with sorting
// then reading them, on 1e6 normal values: the median alone, and the
// three quartiles a box plot needs.
func BenchmarkQuantiles7(b *testing.B) {
	const n = 1_000_000
	rng := rand.New(rand.NewPCG(7, 8))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = rng.NormFloat64()
	}
	work := make([]float64, n)
	for _, ps := range [][]float64{{0.5}, {0.25, 0.5, 0.75}} {
		b.Run(fmt.Sprintf("sort/%d", len(ps)), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(8 * n)
			for b.Loop() {
				copy(work, xs)
				slices.Sort(work)
				for _, p := range ps {
					Quantile7(work, p)
				}
			}
		})
		b.Run(fmt.Sprintf("select/%d", len(ps)), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(8 * n)
			for b.Loop() {
				copy(work, xs)
				Quantiles7(work, ps...)
			}
		})
	}
}
