package baseline

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// rankError returns the largest |sketch rank - true rank| / n over the
// 1/100 quantiles of the sorted values.
func rankError(t *testing.T, s *Sketch, sorted []float64) float64 {
	t.Helper()
	w := s.Weighted()
	if got := w.Total(); got != float64(len(sorted)) {
		t.Fatalf("weights sum to %g, want %d", got, len(sorted))
	}
	n := float64(len(sorted))
	worst := 0.0
	for q := 1; q < 100; q++ {
		x := sorted[int(float64(q)/100*n)]
		truth, _ := slices.BinarySearch(sorted, math.Nextafter(x, math.Inf(1)))
		worst = max(worst, math.Abs(w.Rank(x)-float64(truth))/n)
	}
	return worst
}

// The measured bound of the sketch's doc comment: at k = 200 the rank
// error stays under 1% of n for inputs in random, ascending and
// descending order, and for a sketch merged from shards.
func TestSketchRankError(t *testing.T) {
	n := 1_000_000
	if testing.Short() {
		n = 200_000
	}
	rng := rand.New(rand.NewPCG(1, 2))
	vals := make([]float64, n)
	for i := range vals {
		vals[i] = rng.NormFloat64()
	}
	sorted := slices.Sorted(slices.Values(vals))
	orders := map[string][]float64{"random": vals, "ascending": sorted, "descending": slices.Clone(sorted)}
	slices.Reverse(orders["descending"])
	for name, in := range orders {
		s, _ := NewSketch(SketchK)
		for _, v := range in {
			s.Add(v)
		}
		if e := rankError(t, s, sorted); e >= 0.01 {
			t.Errorf("%s: rank error %.4f of n, want < 0.01", name, e)
		}
		if s.size() > 3*SketchK+2*len(s.Levels) {
			t.Errorf("%s: sketch holds %d values, want about 3k", name, s.size())
		}
	}
	// four shards merged
	var merged *Sketch
	for part := range 4 {
		s, _ := NewSketch(SketchK)
		for _, v := range vals[part*n/4 : (part+1)*n/4] {
			s.Add(v)
		}
		if merged == nil {
			merged = s
		} else if err := merged.Merge(s); err != nil {
			t.Fatal(err)
		}
	}
	if e := rankError(t, merged, sorted); e >= 0.01 {
		t.Errorf("merged: rank error %.4f of n, want < 0.01", e)
	}
}

func TestSketchExactWhenSmall(t *testing.T) {
	s, _ := NewSketch(SketchK)
	for i := range 50 {
		s.Add(float64(49 - i))
	}
	w := s.Weighted()
	for i, x := range w.X {
		if x != float64(i) || w.W[i] != 1 {
			t.Fatalf("small sketch not exact: %v %v", w.X, w.W)
		}
	}
	if q := w.Quantile(0.5); q != 24 {
		t.Errorf("median of 0..49 = %g, want 24 (the 25th value)", q)
	}
}

// A baseline of ten million values stays under 64 KiB, and the same
// values give the same bytes.
func TestBaselineSizeAndDeterminism(t *testing.T) {
	n := 10_000_000
	if testing.Short() {
		n = 1_000_000
	}
	build := func(n int) []byte {
		t.Helper()
		a := &Accumulator{Name: "x", Type: "number", lo: math.Inf(1), hi: math.Inf(-1)}
		a.sketch, _ = NewSketch(SketchK)
		rng := rand.New(rand.NewPCG(7, 7))
		for range n {
			a.Rows++
			a.AddNumber(20 + 5*rng.NormFloat64())
		}
		f := &File{Format: Format, Version: Version, Tool: "test", Rows: int64(n), Columns: []Column{a.Column()}}
		b, err := f.Marshal()
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	b1 := build(n)
	if len(b1) >= 64<<10 {
		t.Errorf("baseline of %d values is %d bytes, want < 64 KiB", n, len(b1))
	}
	if a, b := build(100_000), build(100_000); string(a) != string(b) {
		t.Error("the same values gave different bytes")
	}
	f, err := Parse("size", b1)
	if err != nil {
		t.Fatal(err)
	}
	num := f.Columns[0].Numbers
	if math.Abs(num.Mean-20) > 0.01 || math.Abs(num.Std-5) > 0.01 || len(num.Bins) != Bins {
		t.Errorf("mean %g std %g bins %d, want about 20, 5 and %d", num.Mean, num.Std, len(num.Bins), Bins)
	}
	for _, b := range num.Bins {
		if math.Abs(b.Share-1.0/Bins) > 0.01 {
			t.Errorf("bin share %g, want %g within the sketch's 1%%", b.Share, 1.0/Bins)
		}
	}
	t.Logf("%d values: %d bytes", n, len(b1))
}

func TestCategories(t *testing.T) {
	c := NewCategories(4)
	// a: 10, b: 6, then 8 distinct singletons
	for range 10 {
		c.Add("a")
	}
	for range 6 {
		c.Add("b")
	}
	for _, s := range []string{"c", "d", "e", "f", "g", "h", "i", "j"} {
		c.Add(s)
	}
	if c.Exact() {
		t.Error("more values than counters, yet exact")
	}
	// Misra-Gries: each count is low by at most (N - sum)/(cap+1)
	var sum int64
	for _, n := range c.Counts {
		sum += n
	}
	bound := float64(c.N-sum) / 5
	for v, truth := range map[string]int64{"a": 10, "b": 6} {
		if got := c.Counts[v]; got > truth || float64(truth-got) > bound {
			t.Errorf("%s counted %d, true %d, bound %g", v, got, truth, bound)
		}
	}
	top := c.Top(1)
	if len(top) != 1 || top[0].Value != "a" {
		t.Errorf("top = %v", top)
	}
	// merging two exact summaries within capacity stays exact
	x, y := NewCategories(4), NewCategories(4)
	x.Add("a")
	x.Add("b")
	y.Add("a")
	y.Add("c")
	x.Merge(y)
	if !x.Exact() || x.Counts["a"] != 2 || x.N != 4 {
		t.Errorf("merged = %v (n %d)", x.Counts, x.N)
	}
}
