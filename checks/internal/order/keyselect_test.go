package order

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestKeyOrder checks that the keys order values as < does (with -0
// before +0) and map back to the same bits.
func TestKeyOrder(t *testing.T) {
	fs := []float64{math.Inf(-1), -math.MaxFloat64, -1e300, -1, -math.SmallestNonzeroFloat64, math.Copysign(0, -1), 0,
		math.SmallestNonzeroFloat64, 0.5, 1, 1e300, math.MaxFloat64, math.Inf(1)}
	for i, x := range fs {
		if got := FloatOfKey(FloatKey(x)); math.Float64bits(got) != math.Float64bits(x) {
			t.Errorf("FloatOfKey(FloatKey(%v)) = %v", x, got)
		}
		if i > 0 && FloatKey(fs[i-1]) >= FloatKey(x) {
			t.Errorf("FloatKey(%v) = %#x is not below FloatKey(%v) = %#x", fs[i-1], FloatKey(fs[i-1]), x, FloatKey(x))
		}
	}
	if nan := math.NaN(); math.Float64bits(FloatOfKey(FloatKey(nan))) != math.Float64bits(nan) {
		t.Errorf("FloatOfKey(FloatKey(NaN)) changed the bits")
	}
	is := []int64{math.MinInt64, -1 << 53, -2, -1, 0, 1, 1<<53 + 1, math.MaxInt64}
	for i, x := range is {
		if got := IntOfKey(IntKey(x)); got != x {
			t.Errorf("IntOfKey(IntKey(%d)) = %d", x, got)
		}
		if i > 0 && IntKey(is[i-1]) >= IntKey(x) {
			t.Errorf("IntKey(%d) is not below IntKey(%d)", is[i-1], x)
		}
	}
}

// keyShapes are value sets that test radix selection: spread, tied,
// all equal, zeros of both signs, infinities, and ranges so narrow that
// every value shares its top 16 or 32 bits.
var keyShapes = map[string]func(rng *rand.Rand, n int) []float64{
	"normal": func(rng *rand.Rand, n int) []float64 { return fill(n, func(int) float64 { return rng.NormFloat64() }) },
	"ties": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 { return float64(rng.IntN(3)) })
	},
	"equal": func(rng *rand.Rand, n int) []float64 { return fill(n, func(int) float64 { return 4.25 }) },
	"zeros": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 { return []float64{math.Copysign(0, -1), 0, 0, -1, 1}[rng.IntN(5)] })
	},
	"infinite": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 {
			if rng.IntN(4) == 0 {
				return math.Inf(1 - 2*rng.IntN(2))
			}
			return rng.NormFloat64()
		})
	},
	"narrow": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 { return 1000 + rng.Float64()*1e-9 })
	},
	// keys in three 16-bit prefixes that end in the same second digit,
	// so that the nodes of the third level share their last digit
	"shared digit": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 {
			return FloatOfKey(uint64(0xc001+rng.IntN(3))<<48 | 5<<32 | uint64(rng.Uint32()%64))
		})
	},
	"narrower": func(rng *rand.Rand, n int) []float64 {
		return fill(n, func(int) float64 { return math.Float64frombits(math.Float64bits(-7) + uint64(rng.IntN(50))) })
	},
}

func fill(n int, f func(int) float64) []float64 {
	a := make([]float64, n)
	for i := range a {
		a[i] = f(i)
	}
	return a
}

// chunked splits a into parts of 1 to maxPart values, kept apart (as
// Merge keeps the parts of many small batches).
func chunked[T int64 | float64](rng *rand.Rand, a []T, maxPart int) *Chunks[T] {
	c := &Chunks[T]{n: len(a)}
	for len(a) > 0 {
		m := min(len(a), 1+rng.IntN(maxPart))
		c.parts = append(c.parts, slices.Clone(a[:m]))
		a = a[m:]
	}
	return c
}

var keyPs = []float64{0, 0.25, 0.5, 0.75, 0.95, 1, 0.1234, 1e-9, math.NaN(), 1.5, -0.1}

// sameBits says whether a and b are the same float64, NaNs alike.
func sameBits(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
}

// keySorted is a sorted in key order, where -0 comes before +0.
func keySorted(a []float64) []float64 {
	s := slices.Clone(a)
	slices.SortFunc(s, func(x, y float64) int { return cmp.Compare(FloatKey(x), FloatKey(y)) })
	return s
}

// TestChunksQuantiles7 compares radix selection over chunks with
// Quantile7 of the values sorted, bit for bit, and with Quantiles7 by
// value (which may give either zero where -0 and +0 meet), for several
// chunk layouts and gathering budgets (1 forces every level of counting).
func TestChunksQuantiles7(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for name, gen := range keyShapes {
		for _, n := range []int{1, 2, 3, 10, 1000, 5000} {
			for _, maxPart := range []int{1, 7, 1 << 20} {
				for _, budget := range []int{0, 1, 3, 100} {
					a := gen(rng, n)
					c := chunked(rng, a, maxPart)
					got := quantilesOfKeys(n, keyPs, budget, keyScan{floats: c.parts}.each, FloatOfKey)
					sorted := keySorted(a)
					bySelect := Quantiles7(slices.Clone(a), keyPs...)
					for i, p := range keyPs {
						if want := Quantile7(sorted, p); !sameBits(got[i], want) {
							t.Fatalf("%s n=%d parts<=%d budget %d p=%v: got %v, sorting gives %v", name, n, maxPart, budget, p, got[i], want)
						}
						if got[i] != bySelect[i] && !sameBits(got[i], bySelect[i]) {
							t.Fatalf("%s n=%d p=%v: got %v, Quantiles7 gives %v", name, n, p, got[i], bySelect[i])
						}
					}
					if budget == 0 {
						if m := c.Quantiles7(keyPs...); !slices.EqualFunc(m, got, sameBits) {
							t.Fatalf("%s n=%d: Chunks.Quantiles7 = %v, want %v", name, n, m, got)
						}
						if c.Len() != n || !slices.Equal(c.Copy(), a) {
							t.Fatalf("%s n=%d: the values changed", name, n)
						}
					}
				}
			}
		}
	}
}

// TestChunksQuantiles7Ints compares the int64 case with sorting, for
// integers beyond 2^53 (where float64 rounds them) and at both ends.
func TestChunksQuantiles7Ints(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	shapes := map[string]func() int64{
		"small":   func() int64 { return int64(rng.IntN(100)) - 50 },
		"big":     func() int64 { return 1<<60 + int64(rng.IntN(1000)) },
		"mixed":   func() int64 { return int64(rng.Uint64()) },
		"ends":    func() int64 { return []int64{math.MinInt64, math.MaxInt64, 0, -1}[rng.IntN(4)] },
		"equal":   func() int64 { return -(1<<53 + 1) },
		"above53": func() int64 { return 1<<53 + int64(rng.IntN(3)) },
	}
	for name, gen := range shapes {
		for _, n := range []int{1, 2, 3, 10, 1000, 5000} {
			for _, budget := range []int{0, 1, 3, 100} {
				a := make([]int64, n)
				for i := range a {
					a[i] = gen()
				}
				c := chunked(rng, a, 5)
				got := quantilesOfKeys(n, keyPs, budget, keyScan{ints: c.parts}.each, IntOfKey)
				sorted := slices.Clone(a)
				slices.Sort(sorted)
				for i, p := range keyPs {
					if want := Quantile7(sorted, p); !sameBits(got[i], want) {
						t.Fatalf("%s n=%d budget %d p=%v: got %v, sorting gives %v", name, n, budget, p, got[i], want)
					}
				}
				if budget == 0 {
					if m := c.Quantiles7(keyPs...); !slices.EqualFunc(m, got, sameBits) {
						t.Fatalf("%s n=%d: Chunks.Quantiles7 = %v, want %v", name, n, m, got)
					}
				}
			}
		}
	}
}

// TestDeviationQuantiles7 compares the quantiles of |x − center| read on
// the fly with those of the deviations written out and sorted.
func TestDeviationQuantiles7(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	for name, gen := range keyShapes {
		if name == "infinite" { // the rules that ask for a MAD keep finite values
			continue
		}
		for _, n := range []int{1, 2, 3, 1000, 5000} {
			a := gen(rng, n)
			c := chunked(rng, a, 9)
			center := Quantiles7(slices.Clone(a), 0.5)[0]
			dev := make([]float64, n)
			for i, x := range a {
				dev[i] = math.Abs(x - center)
			}
			sorted := keySorted(dev)
			got := DeviationQuantiles7(c, center, keyPs...)
			for i, p := range keyPs {
				if want := Quantile7(sorted, p); !sameBits(got[i], want) {
					t.Fatalf("%s n=%d p=%v: got %v, sorting gives %v", name, n, p, got[i], want)
				}
			}
		}
	}
	empty := DeviationQuantiles7(&Chunks[float64]{}, 0, 0.5)
	if !math.IsNaN(empty[0]) {
		t.Errorf("no values: got %v, want NaN", empty[0])
	}
}

// BenchmarkChunksQuantiles7 compares radix selection over chunks of 64k
// values with Quantiles7 of a flattened copy, for the median and the
// three quartiles, at 1e6 and 1e7 values (1e7 skipped with -short):
// normal values 50 + 10 z, and "narrow" ones 1024 + 10 z, whose
// quartiles lie in two 16-bit digits of about half the values each (the
// selection then counts a second level).
func BenchmarkChunksQuantiles7(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		if n > 1_000_000 && testing.Short() {
			continue
		}
		for _, shape := range []struct {
			name       string
			center, sd float64
		}{{"normal", 50, 10}, {"narrow", 1024, 10}} {
			rng := rand.New(rand.NewPCG(7, 8))
			var c Chunks[float64]
			for lo := 0; lo < n; lo += 1 << 16 {
				c.Add(fill(min(1<<16, n-lo), func(int) float64 { return shape.center + shape.sd*rng.NormFloat64() }))
			}
			for _, ps := range [][]float64{{0.5}, {0.25, 0.5, 0.75}} {
				b.Run(fmt.Sprintf("copy+select/%s/%.0e/%d", shape.name, float64(n), len(ps)), func(b *testing.B) {
					b.ReportAllocs()
					b.SetBytes(int64(8 * n))
					for b.Loop() {
						Quantiles7(c.Copy(), ps...)
					}
				})
				b.Run(fmt.Sprintf("radix/%s/%.0e/%d", shape.name, float64(n), len(ps)), func(b *testing.B) {
					b.ReportAllocs()
					b.SetBytes(int64(8 * n))
					for b.Loop() {
						c.Quantiles7(ps...)
					}
				})
			}
			b.Run(fmt.Sprintf("radix mad/%s/%.0e", shape.name, float64(n)), func(b *testing.B) {
				b.ReportAllocs()
				b.SetBytes(int64(8 * n))
				for b.Loop() {
					DeviationQuantiles7(&c, shape.center, 0.5)
				}
			})
		}
	}
}

// TestKeysOfRanks: the keys of given ranks, found from blocks of keys,
// are those of the sorted keys, for spread, tied and narrow keys, below
// and above the count that is gathered whole.
func TestKeysOfRanks(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	tests := []struct {
		name  string
		n     int
		key   func() uint64
		ranks []int
	}{
		{"few spread", 1000, rng.Uint64, []int{0, 499, 500, 999}},
		{"many spread", 300_000, rng.Uint64, []int{99_999, 100_000}},
		{"many below a threshold", 300_000, func() uint64 { return rng.Uint64() >> 40 }, []int{0, 250_000, 299_999}},
		{"many tied", 200_000, func() uint64 { return uint64(rng.IntN(5)) << 60 }, []int{70_000, 70_001}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			keys := make([]uint64, tc.n)
			for i := range keys {
				keys[i] = tc.key()
			}
			scan := func(fn func([]uint64)) {
				for k := 0; k < len(keys); k += 777 {
					fn(keys[k:min(k+777, len(keys))])
				}
			}
			got := KeysOfRanks(tc.n, tc.ranks, scan)
			sorted := slices.Clone(keys)
			slices.Sort(sorted)
			for i, r := range tc.ranks {
				if got[i] != sorted[r] {
					t.Errorf("rank %d: %#x, want %#x", r, got[i], sorted[r])
				}
			}
		})
	}
}
