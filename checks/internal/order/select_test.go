package order

import (
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
