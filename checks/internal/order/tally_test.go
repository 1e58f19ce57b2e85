package order

import (
	"cmp"
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestTallyQuantiles compares the tally's quantiles, counted and spilled,
// merged from interleaved parts, with Quantile7 on the sorted values.
func TestTallyQuantiles(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	ps := []float64{0, 0.01, 0.25, 0.5, 0.75, 0.95, 0.999, 1}
	cases := []struct {
		name string
		gen  func(n int) []float64
		n    int
	}{
		{"one", func(int) []float64 { return []float64{2.5} }, 1},
		{"two", func(int) []float64 { return []float64{3, -1} }, 2},
		{"rounded normal", func(n int) []float64 {
			out := make([]float64, n)
			for i := range out {
				out[i] = math.Round((18+6*r.NormFloat64())*1000) / 1000
			}
			return out
		}, 200_000},
		{"all equal", func(n int) []float64 { return slices.Repeat([]float64{7}, n) }, 1000},
		{"signed zeros", func(n int) []float64 {
			out := make([]float64, n)
			for i := range out {
				out[i] = math.Copysign(0, float64(i%3-1))
				if i%5 == 0 {
					out[i] = 1
				}
			}
			return out
		}, 999},
		{"fine resolution spills", func(n int) []float64 {
			out := make([]float64, n)
			for i := range out {
				out[i] = r.ExpFloat64()
			}
			return out
		}, 3 * TallyLimit},
		{"infinities", func(n int) []float64 {
			out := []float64{math.Inf(-1), math.Inf(1), math.Inf(1)}
			for range n - 3 {
				out = append(out, float64(r.IntN(9)))
			}
			return out
		}, 500},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			xs := tc.gen(tc.n)
			want := make([]float64, len(ps))
			sorted := slices.Clone(xs)
			slices.Sort(sorted)
			for k, p := range ps {
				want[k] = Quantile7(sorted, p)
			}
			for _, lanes := range []int{1, 3} {
				parts := make([]Tally[float64], lanes)
				for i := 0; i < len(xs); i += 97 {
					parts[(i/97)%lanes].Add(xs[i:min(i+97, len(xs))])
				}
				for k := 1; k < lanes; k++ {
					parts[0].Merge(&parts[k])
				}
				got := parts[0].Quantiles7(ps...)
				if parts[0].Len() != int64(len(xs)) {
					t.Fatalf("%d lanes: %d values, want %d", lanes, parts[0].Len(), len(xs))
				}
				for k := range ps {
					if math.Float64bits(got[k]) != math.Float64bits(want[k]) && !(got[k] == 0 && want[k] == 0) {
						t.Errorf("%d lanes: p=%v: %v, want %v (spilled %v)", lanes, ps[k], got[k], want[k], parts[0].Spilled())
					}
				}
			}
		})
	}
}

// TestTallyInts checks integers beyond 2^53, which float64 cannot hold
// exactly, against Quantile7 on int64.
func TestTallyInts(t *testing.T) {
	base := int64(1) << 60
	xs := []int64{base + 3, base + 1, base + 1, base + 2, -base, base + 3}
	sorted := slices.Clone(xs)
	slices.Sort(sorted)
	var ta Tally[int64]
	ta.Add(xs)
	ps := []float64{0, 0.3, 0.5, 0.9, 1}
	got := ta.Quantiles7(ps...)
	for k, p := range ps {
		if want := Quantile7(sorted, p); got[k] != want {
			t.Errorf("p=%v: %v, want %v", p, got[k], want)
		}
	}
}

// TestTallySpillsAtLimit checks the switch from counts to values: one
// more distinct value than TallyLimit spills, and merging a counted tally
// into a spilled one keeps every value.
func TestTallySpillsAtLimit(t *testing.T) {
	var a, b Tally[float64]
	xs := make([]float64, TallyLimit)
	for i := range xs {
		xs[i] = float64(i)
	}
	a.Add(xs)
	a.Add(xs[:10])
	if a.Spilled() {
		t.Fatal("spilled at TallyLimit distinct values")
	}
	a.Add([]float64{-1})
	if !a.Spilled() || a.Len() != TallyLimit+11 {
		t.Fatalf("spilled %v with %d values, want spilled with %d", a.Spilled(), a.Len(), TallyLimit+11)
	}
	b.Add([]float64{5, 5})
	b.Merge(&a)
	if !b.Spilled() || b.Len() != TallyLimit+13 || a.Len() != 0 {
		t.Fatalf("merged: spilled %v, %d values (other %d)", b.Spilled(), b.Len(), a.Len())
	}
	if got := b.Quantiles7(0, 1); got[0] != -1 || got[1] != TallyLimit-1 {
		t.Errorf("min, max %v, want -1, %d", got, TallyLimit-1)
	}
}

func BenchmarkTallyAdd(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, 1<<16)
	for i := range xs {
		xs[i] = math.Round((18+6*r.NormFloat64())*1000) / 1000
	}
	b.SetBytes(int64(16 * 8 * len(xs)))
	for b.Loop() {
		var t Tally[float64]
		for range 16 {
			t.Add(xs)
		}
	}
}

// TestTallyDeviations compares the MAD from a tally, counted and spilled,
// with the one radix selection finds over the same values kept as Chunks.
func TestTallyDeviations(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for _, distinct := range []int{40, 3 * TallyLimit} {
		var (
			ta Tally[float64]
			ch Chunks[float64]
		)
		for range 8 {
			part := make([]float64, 20_000)
			for i := range part {
				part[i] = float64(r.IntN(distinct)) / 7
			}
			ta.Add(part)
			ch.Add(part)
		}
		med := ta.Quantiles7(0.5)[0]
		got := DeviationQuantiles7Tally(&ta, med, 0.25, 0.5, 0.9)
		want := DeviationQuantiles7(&ch, med, 0.25, 0.5, 0.9)
		if !slices.Equal(got, want) {
			t.Errorf("%d distinct (spilled %v): %v, want %v", distinct, ta.Spilled(), got, want)
		}
		var n int64
		for _, c := range ta.All() {
			n += c
		}
		if n != ta.Len() {
			t.Errorf("%d distinct: All counts %d values, want %d", distinct, n, ta.Len())
		}
	}
}

// measured returns n values like a measured column: normal, mean 18 and
// sd 6, to 3 decimals (about 37,000 distinct values in a million).
func measured(r *rand.Rand, n int) []float64 {
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = math.Round((18+6*r.NormFloat64())*1000) / 1000
	}
	return xs
}

// BenchmarkTallyAddMeasured counts a million values of 3 decimals, new
// ones in each batch of 65,536, as one lane of one column does.
func BenchmarkTallyAddMeasured(b *testing.B) {
	xs := measured(rand.New(rand.NewPCG(1, 2)), 1<<20)
	b.SetBytes(int64(8 * len(xs)))
	b.ReportAllocs()
	for b.Loop() {
		var t Tally[float64]
		for i := 0; i < len(xs); i += 1 << 16 {
			t.Add(xs[i : i+1<<16])
		}
	}
}

// BenchmarkTallyAddLanes counts a million values of 3 decimals in each of
// 20 tallies (5 columns in 4 lanes, as bench/policy.yaml has), a batch
// to each in turn, so the tables (2 MiB each) do not all stay in cache.
func BenchmarkTallyAddLanes(b *testing.B) {
	const tallies = 20
	xs := measured(rand.New(rand.NewPCG(1, 2)), 1<<20)
	b.SetBytes(int64(8 * len(xs) * tallies))
	b.ReportAllocs()
	for b.Loop() {
		var ts [tallies]Tally[float64]
		for i := 0; i < len(xs); i += 1 << 16 {
			for k := range ts {
				j := (i + k<<16) % len(xs)
				ts[k].Add(xs[j : j+1<<16])
			}
		}
	}
}

// TestTallyMergeOverLimit merges counted tallies whose values together
// have more distinct values than TallyLimit, though each has fewer: the
// result spills and holds every value once.
func TestTallyMergeOverLimit(t *testing.T) {
	for _, tc := range []struct{ a, b, overlap int }{
		{40_000, 40_000, 10_000},
		{TallyLimit, 1, 0},
		{TallyLimit, TallyLimit, TallyLimit - 1},
		{50_000, 50_000, 50_000}, // the same values: fits
	} {
		xs := make([]float64, tc.a)
		for i := range xs {
			xs[i] = float64(i)
		}
		ys := make([]float64, tc.b)
		for i := range ys {
			ys[i] = float64(tc.a - tc.overlap + i)
		}
		var a, b Tally[float64]
		a.Add(xs)
		a.Add(xs[:7])
		b.Add(ys)
		a.Merge(&b)
		all := slices.Concat(xs, xs[:7], ys)
		var n int64
		for _, c := range a.All() {
			n += c
		}
		distinct := tc.a + tc.b - tc.overlap
		if a.Len() != int64(len(all)) || n != a.Len() || a.Spilled() != (distinct > TallyLimit) || b.Len() != 0 {
			t.Errorf("%+v: Len %d, All counts %d, spilled %v; want %d values, spilled %v", tc, a.Len(), n, a.Spilled(),
				len(all), distinct > TallyLimit)
		}
		slices.Sort(all)
		ps := []float64{0, 0.3, 0.5, 0.99, 1}
		got := a.Quantiles7(ps...)
		for k, p := range ps {
			if want := Quantile7(all, p); got[k] != want {
				t.Errorf("%+v: p=%v: %v, want %v", tc, p, got[k], want)
			}
		}
	}
}

// TestTallyGrid: values counted in the grid, in the table beside it, or
// both, merged across tallies whose grids differ, give each distinct
// value (by its bits) once, with its count, and the quantiles of the
// values.
func TestTallyGrid(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 8))
	decimals := func(n, d int, mean, sd float64) []float64 {
		xs := make([]float64, n)
		p := math.Pow10(d)
		for i := range xs {
			xs[i] = math.Round((mean+sd*r.NormFloat64())*p) / p
		}
		return xs
	}
	ascending := make([]float64, 60_000)
	for i := range ascending {
		ascending[i] = float64(i) / 100
	}
	mixed := decimals(30_000, 3, 18, 6)
	for i := range mixed {
		switch i % 40 {
		case 1:
			mixed[i] = r.NormFloat64() // no decimal resolution: in the table
		case 2:
			mixed[i] = math.Copysign(0, -1)
		case 3:
			mixed[i] = 0
		case 4:
			mixed[i] = 1e6 + float64(i) // far outside the grid
		}
	}
	cases := []struct {
		name  string
		parts [][]float64 // added in turn, each to its own tally, then merged
		grid  float64     // the scale of the merged tally's grid; 0 for none
	}{
		{"3 decimals", [][]float64{decimals(50_000, 3, 18, 6)}, 1000},
		{"integers first, then 3 decimals", [][]float64{decimals(2000, 0, 50, 10), decimals(50_000, 3, 50, 10)}, 1},
		{"drifting beyond the grid", [][]float64{ascending}, 100},
		{"grid, table, zeros and far values", [][]float64{mixed}, 1000},
		{"merged grids of other scales", [][]float64{decimals(20_000, 2, 5, 1), decimals(20_000, 4, 500, 100), mixed}, 100},
		{"far apart clusters", [][]float64{slices.Concat(decimals(700, 3, 5, 1), decimals(30_000, 3, 1e5, 1))}, 1000},
		{"no resolution", [][]float64{decimals(20_000, 17, 0, 1)}, 0},
		{"over the limit in the grid", [][]float64{decimals(200_000, 3, 0, 100)}, 0},
	}
	ps := []float64{0, 0.001, 0.25, 0.5, 0.75, 0.99, 1}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var all []float64
			ts := make([]Tally[float64], len(tc.parts))
			for k, xs := range tc.parts {
				for i := 0; i < len(xs); i += 1000 {
					ts[k].Add(xs[i:min(i+1000, len(xs))])
				}
				all = append(all, xs...)
			}
			for k := 1; k < len(ts); k++ {
				ts[0].Merge(&ts[k])
			}
			ta := &ts[0]
			counts := map[uint64]int64{}
			for _, x := range all {
				counts[math.Float64bits(x)]++
			}
			if scale := ta.grid.scale * float64(min(1, len(ta.grid.counts))); scale != tc.grid {
				t.Errorf("grid of scale %v, want %v", scale, tc.grid)
			}
			var gridded int64
			for _, c := range ta.grid.counts {
				gridded += int64(c)
			}
			if tc.grid != 0 && gridded < int64(len(all)/100) {
				t.Errorf("the grid counts %d of %d values", gridded, len(all))
			}
			if ta.Spilled() != (len(counts) > TallyLimit) || ta.Len() != int64(len(all)) {
				t.Fatalf("spilled %v with %d values; want spilled %v, %d values", ta.Spilled(), ta.Len(), len(counts) > TallyLimit, len(all))
			}
			if !ta.Spilled() {
				seen := map[uint64]int64{}
				for x, c := range ta.All() {
					if _, twice := seen[math.Float64bits(x)]; twice {
						t.Errorf("%v is counted twice", x)
					}
					seen[math.Float64bits(x)] = c
				}
				if !maps.Equal(seen, counts) {
					t.Errorf("All gives %d distinct values, want %d", len(seen), len(counts))
				}
			}
			sorted := slices.Clone(all)
			slices.Sort(sorted)
			got := ta.Quantiles7(ps...)
			for k, p := range ps {
				if want := Quantile7(sorted, p); got[k] != want {
					t.Errorf("p=%v: %v, want %v", p, got[k], want)
				}
			}
		})
	}
}

// TestTallyWraps: counts of the grid past 2^16 − 1, by adding and by
// merging, keep every value, and a value seen again after its count
// wrapped is not counted as a new one.
func TestTallyWraps(t *testing.T) {
	const wrap = 1 << 16
	negZero := math.Copysign(0, -1)
	// start returns a tally of 7.5 twice, 0.25 n times, and -0 (in the
	// table) once, 0.25 added in parts of 10,000.
	start := func(n int) *Tally[float64] {
		var ta Tally[float64]
		ta.Add([]float64{0.25, 7.5, 7.5}) // the first part makes the grid
		ta.Add([]float64{negZero})
		quarters := slices.Repeat([]float64{0.25}, n-1)
		for i := 0; i < len(quarters); i += 10_000 {
			ta.Add(quarters[i:min(len(quarters), i+10_000)])
		}
		return &ta
	}
	cases := []struct {
		name  string
		tally func() *Tally[float64]
		want  map[float64]int64 // by value; -0 is counted once apart
	}{
		{"one short of a wrap", func() *Tally[float64] { return start(wrap - 1) }, map[float64]int64{0.25: wrap - 1, 7.5: 2}},
		{"a wrap", func() *Tally[float64] { return start(wrap) }, map[float64]int64{0.25: wrap, 7.5: 2}},
		{"after a wrap", func() *Tally[float64] {
			ta := start(wrap)
			ta.Add([]float64{0.25, 1.5})
			return ta
		}, map[float64]int64{0.25: wrap + 1, 7.5: 2, 1.5: 1}},
		{"wraps within a part", func() *Tally[float64] {
			ta := start(10)
			ta.Add(slices.Repeat([]float64{0.25, 7.5}, 3*wrap))
			return ta
		}, map[float64]int64{0.25: 3*wrap + 10, 7.5: 3*wrap + 2}},
		{"merged past a wrap", func() *Tally[float64] {
			ta, o := start(wrap-3), start(wrap+5)
			o.Add([]float64{1.5})
			ta.Merge(o)
			return ta
		}, map[float64]int64{0.25: 2*wrap + 2, 7.5: 4, 1.5: 1}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			ta := tc.tally()
			got := map[float64]int64{}
			var negZeros, n int64
			for x, c := range ta.All() {
				if x == 0 && math.Signbit(x) {
					negZeros += c
				} else {
					got[x] += c
				}
				n += c
			}
			want := sum(tc.want) + negZeros
			if !maps.Equal(got, tc.want) || negZeros == 0 || n != ta.Len() || n != want {
				t.Errorf("counts %v and -0 %d times, %d values in all; want %v, -0 and %d values", got, negZeros, ta.Len(), tc.want,
					want)
			}
			if ta.distinct != len(tc.want)+1 {
				t.Errorf("%d distinct values, want %d", ta.distinct, len(tc.want)+1)
			}
			ps := []float64{0, 0.5, 1}
			sorted := []float64{negZero}
			for _, x := range slices.Sorted(maps.Keys(tc.want)) {
				sorted = append(sorted, slices.Repeat([]float64{x}, int(tc.want[x]))...)
			}
			if negZeros > 1 {
				sorted = append(slices.Repeat([]float64{negZero}, int(negZeros-1)), sorted...)
			}
			for k, q := range ta.Quantiles7(ps...) {
				if w := Quantile7(sorted, ps[k]); math.Float64bits(q) != math.Float64bits(w) {
					t.Errorf("p=%v: %v, want %v", ps[k], q, w)
				}
			}
		})
	}
}

// sum is the sum of the counts of m.
func sum(m map[float64]int64) int64 {
	var n int64
	for _, c := range m {
		n += c
	}
	return n
}

// TestMerged: two sorted runs merge into one, the first run's element
// first where they tie.
func TestMerged(t *testing.T) {
	type e struct{ k, from int }
	byKey := func(a, b e) int { return cmp.Compare(a.k, b.k) }
	for _, tc := range []struct {
		name string
		a, b []int
	}{
		{"both empty", nil, nil},
		{"first empty", nil, []int{1, 2}},
		{"second empty", []int{1, 2}, nil},
		{"interleaved", []int{1, 4, 6, 9}, []int{0, 2, 3, 7, 10, 11}},
		{"ties", []int{1, 1, 5}, []int{1, 5, 5}},
	} {
		var a, b []e
		for _, k := range tc.a {
			a = append(a, e{k, 0})
		}
		for _, k := range tc.b {
			b = append(b, e{k, 1})
		}
		want := slices.Concat(a, b)
		slices.SortStableFunc(want, byKey)
		if got := merged(a, b, byKey); !slices.Equal(got, want) {
			t.Errorf("%s: %v, want %v", tc.name, got, want)
		}
	}
}

// BenchmarkTallyQuantiles7 reads the quartiles of a tally of a million
// values of 3 decimals, one in a hundred off the grid (in the table).
func BenchmarkTallyQuantiles7(b *testing.B) {
	r := rand.New(rand.NewPCG(3, 4))
	xs := measured(r, 1<<20)
	for i := 0; i < len(xs); i += 100 {
		xs[i] = 18 + 6*r.NormFloat64()
	}
	var t Tally[float64]
	for i := 0; i < len(xs); i += 1 << 16 {
		t.Add(xs[i : i+1<<16])
	}
	b.ReportAllocs()
	for b.Loop() {
		t.Quantiles7(0.25, 0.5, 0.75)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*t.distinct), "ns/distinct")
}
