package gof

import (
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func seq(from, to int) []float64 {
	var x []float64
	for i := from; i < to; i++ {
		x = append(x, float64(i))
	}
	return x
}

func TestReservoirKeepsAllUntilFull(t *testing.T) {
	r, err := NewReservoir(10, 1)
	if err != nil {
		t.Fatal(err)
	}
	r.AddAll(seq(0, 7))
	got := r.Values()
	slices.Sort(got)
	if !slices.Equal(got, seq(0, 7)) || !r.Complete() || r.Seen() != 7 {
		t.Errorf("after 7 values: %v complete %v seen %d", got, r.Complete(), r.Seen())
	}
	r.AddAll(seq(7, 100))
	if len(r.Values()) != 10 || r.Complete() || r.Seen() != 100 {
		t.Errorf("after 100 values: %d kept, complete %v, seen %d", len(r.Values()), r.Complete(), r.Seen())
	}
	if _, err := NewReservoir(0, 1); err == nil {
		t.Error("a reservoir of size 0 was accepted")
	}
}

// The same seed and input give the same sample, however the input is cut
// into batches (random numbers are drawn only at entries).
func TestReservoirDeterministic(t *testing.T) {
	a, _ := NewReservoir(50, 42)
	b, _ := NewReservoir(50, 42)
	c, _ := NewReservoir(50, 43)
	x := seq(0, 100000)
	a.AddAll(x)
	for i := 0; i < len(x); i += 777 {
		b.AddAll(x[i:min(i+777, len(x))])
	}
	for _, v := range x {
		c.Add(v)
	}
	if !slices.Equal(a.Values(), b.Values()) {
		t.Error("same seed, different batching: different samples")
	}
	if slices.Equal(a.Values(), c.Values()) {
		t.Error("different seeds gave the same sample")
	}
}

// inclusionCounts runs trials reservoirs (made by fill) over the values
// 0..n-1 and counts how often each value ends up in the sample.
func inclusionCounts(t *testing.T, trials, n int, fill func(seed uint64) *Reservoir) []int64 {
	t.Helper()
	counts := make([]int64, n)
	for i := range trials {
		for _, v := range fill(uint64(i)).Values() {
			counts[int(v)]++
		}
	}
	return counts
}

// uniformInclusion checks that every value was kept with the same
// probability, by Pearson's statistic over the inclusion counts. Each trial
// keeps k distinct values, which makes the counts less variable than
// multinomial ones by the factor (n-k)/(n-1); the statistic is rescaled by
// its inverse before the chi-square(n-1) reference is used, and a 1e-3
// level keeps the seeded check from resting on chance.
func uniformInclusion(t *testing.T, name string, counts []int64, k int) {
	t.Helper()
	n := len(counts)
	probs := make([]float64, n)
	for i := range probs {
		probs[i] = 1 / float64(n)
	}
	r, err := ChiSquare(counts, probs, ChiSquareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// Sampling without replacement within a trial makes the counts less
	// variable than multinomial by (n-k)/(n-1); undo that before testing.
	x2 := r.Statistic.Value * float64(n-1) / float64(n-k)
	p := distuv.ChiSquared{K: float64(n - 1)}.Survival(x2)
	if p < 1e-3 {
		t.Errorf("%s: inclusion counts not uniform (X² = %.1f on %d df, p = %.2g): %v", name, x2, n-1, p, counts)
	}
}

func TestReservoirUniform(t *testing.T) {
	const trials, n, k = 20000, 40, 8
	counts := inclusionCounts(t, trials, n, func(seed uint64) *Reservoir {
		r, _ := NewReservoir(k, seed)
		r.AddAll(seq(0, n))
		return r
	})
	uniformInclusion(t, "single stream", counts, k)
}

// Shards of unequal size (one smaller than the reservoir) merged in
// different orders still give a uniform sample of the union, and the
// merged reservoir keeps sampling uniformly afterwards.
func TestReservoirMergeUniform(t *testing.T) {
	const trials, n, k = 20000, 40, 8
	merged := inclusionCounts(t, trials, n, func(seed uint64) *Reservoir {
		a, _ := NewReservoir(k, 3*seed)
		b, _ := NewReservoir(k, 3*seed+1)
		c, _ := NewReservoir(k, 3*seed+2)
		a.AddAll(seq(0, 25))
		b.AddAll(seq(25, 30))
		c.AddAll(seq(30, 34))
		if err := b.Merge(c); err != nil {
			t.Fatal(err)
		}
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		if a.Seen() != 34 {
			t.Fatalf("merged reservoir saw %d values, want 34", a.Seen())
		}
		a.AddAll(seq(34, n))
		return a
	})
	uniformInclusion(t, "merged shards", merged, k)

	a, _ := NewReservoir(4, 1)
	b, _ := NewReservoir(5, 2)
	if err := a.Merge(b); err == nil {
		t.Error("merging reservoirs of different sizes was accepted")
	}
}

// Pairs too: after a merge, each pair of values is kept together with
// probability k(k-1)/(n(n-1)), which a merge that kept the shards'
// samples side by side without the hypergeometric split would miss.
func TestReservoirMergePairs(t *testing.T) {
	const trials, k = 40000, 3
	together := 0 // values 0 and 5 (one from each shard) kept together
	sameShard := 0
	for i := range trials {
		a, _ := NewReservoir(k, uint64(2*i))
		b, _ := NewReservoir(k, uint64(2*i+1))
		a.AddAll(seq(0, 5))
		b.AddAll(seq(5, 10))
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		v := a.Values()
		if slices.Contains(v, 0) && slices.Contains(v, 5) {
			together++
		}
		if slices.Contains(v, 0) && slices.Contains(v, 1) {
			sameShard++
		}
	}
	want := float64(k*(k-1)) / (10 * 9) // 1/15
	for name, c := range map[string]int{"across shards": together, "within a shard": sameShard} {
		got := float64(c) / trials
		// binomial standard error at p = 1/15 and 40000 trials is 0.00125.
		if !near(got, want, 0.005) {
			t.Errorf("pair %s kept together in %.4f of trials, want %.4f", name, got, want)
		}
	}
}

// A long stream exercises Algorithm L's skips: the positions kept, in 50
// bins of 2000, are uniform.
func TestReservoirLongStreamUniform(t *testing.T) {
	const trials, n, k, bins = 2000, 100000, 20, 50
	x := seq(0, n)
	counts := make([]int64, bins)
	for i := range trials {
		r, _ := NewReservoir(k, uint64(i))
		r.AddAll(x)
		for _, v := range r.Values() {
			counts[int(v)/(n/bins)]++
		}
	}
	probs := make([]float64, bins)
	for i := range probs {
		probs[i] = 1.0 / bins
	}
	res, err := ChiSquare(counts, probs, ChiSquareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if res.PValue < 1e-3 {
		t.Errorf("kept positions not uniform over the stream: X² = %.1f, p = %.2g, counts %v", res.Statistic.Value, res.PValue, counts)
	}
}
