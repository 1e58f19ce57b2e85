package relate

import (
	"math"
	"slices"
	"testing"
)

func TestRanks(t *testing.T) {
	for _, c := range []struct {
		x    []float64
		want []float64
		ties bool
	}{
		{[]float64{3, 1, 4, 1, 5}, []float64{3, 1.5, 4, 1.5, 5}, true},
		{[]float64{10, 20, 30}, []float64{1, 2, 3}, false},
		{[]float64{7, 7, 7, 7}, []float64{2.5, 2.5, 2.5, 2.5}, true},
		{[]float64{-1, 2, 2, 2, -5}, []float64{2, 4, 4, 4, 1}, true},
		{nil, []float64{}, false},
	} {
		got, ties := Ranks(c.x)
		if !slices.Equal(got, c.want) || ties != c.ties {
			t.Errorf("Ranks(%v) = %v, %v; want %v, %v", c.x, got, ties, c.want, c.ties)
		}
	}
}

// kendallByDefinition counts concordant and discordant pairs and the pairs
// tied in x and in y in O(n²).
func kendallByDefinition(x, y []float64) (tau float64) {
	var s, tx, ty, n0 float64
	for i := range x {
		for j := i + 1; j < len(x); j++ {
			n0++
			dx, dy := x[j]-x[i], y[j]-y[i]
			switch {
			case dx == 0 && dy == 0:
				tx++
				ty++
			case dx == 0:
				tx++
			case dy == 0:
				ty++
			case (dx > 0) == (dy > 0):
				s++
			default:
				s--
			}
		}
	}
	return s / math.Sqrt((n0-tx)*(n0-ty))
}

// TestKendallKnight checks Knight's O(n log n) tau-b against the O(n²)
// definition, with and without ties.
func TestKendallKnight(t *testing.T) {
	rng := newRand(13)
	for trial := 0; trial < 200; trial++ {
		n := 3 + rng.IntN(150)
		levels := 2 + rng.IntN(40)
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			if trial%3 == 0 {
				x[i], y[i] = rng.NormFloat64(), rng.NormFloat64()
			} else {
				x[i] = float64(rng.IntN(levels))
				y[i] = float64(rng.IntN(levels)) + x[i]*float64(trial%5-2)
			}
		}
		want := kendallByDefinition(x, y)
		got, err := KendallTest(x, y)
		if math.IsNaN(want) {
			wantErr(t, "constant", err, "a variable is constant")
			continue
		}
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.Estimate-want) > 1e-13 {
			t.Errorf("trial %d (n = %d): tau-b = %.16g, by definition %.16g", trial, n, got.Estimate, want)
		}
		if got.PValue < 0 || got.PValue > 1 {
			t.Errorf("trial %d: p = %v outside [0, 1]", trial, got.PValue)
		}
	}
}

// TestKendallExactDistribution checks the inversion distribution against
// counting the inversions of every permutation of n <= 7.
func TestKendallExactDistribution(t *testing.T) {
	for n := 3; n <= 7; n++ {
		maxK := n * (n - 1) / 2
		count := make([]float64, maxK+1)
		total := 0.0
		forEachPermutation(n, func(p []int) {
			inv := 0
			for i := range p {
				for j := i + 1; j < n; j++ {
					if p[i] > p[j] {
						inv++
					}
				}
			}
			count[inv]++
			total++
		})
		for tt := 0; tt <= maxK; tt++ {
			want := 0.0
			for k, c := range count {
				if (4*tt > n*(n-1) && k >= tt) || (4*tt <= n*(n-1) && k <= tt) {
					want += c
				}
			}
			want /= total
			if got := kendallExactTail(n, tt); math.Abs(got-want) > 1e-15 {
				t.Errorf("n = %d, T = %d: tail %v, by enumeration %v", n, tt, got, want)
			}
		}
	}
}

// forEachPermutation calls f with every permutation of 0..n-1 in
// lexicographic order.
func forEachPermutation(n int, f func([]int)) {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	for {
		f(p)
		i := n - 2
		for i >= 0 && p[i] > p[i+1] {
			i--
		}
		if i < 0 {
			return
		}
		j := n - 1
		for p[j] < p[i] {
			j--
		}
		p[i], p[j] = p[j], p[i]
		slices.Reverse(p[i+1:])
	}
}

// TestSpearmanExactDistribution checks the exact tail of S = Σd² against
// enumeration in lexicographic order (independent of Heap's algorithm) and
// the symmetry of S about (n³-n)/6.
func TestSpearmanExactDistribution(t *testing.T) {
	for n := 3; n <= 7; n++ {
		top := (n*n*n - n) / 3
		count := make([]float64, top+1)
		forEachPermutation(n, func(p []int) {
			s := 0
			for i, v := range p {
				s += (i - v) * (i - v)
			}
			count[s]++
		})
		total := 0.0
		for _, c := range count {
			total += c
		}
		for s := 0; s <= top; s += 2 {
			up, down := 0.0, 0.0
			for v, c := range count {
				if v >= s {
					up += c
				}
				if v <= s {
					down += c
				}
			}
			if got := spearmanExact(n, float64(s), true); math.Abs(got-up/total) > 1e-15 {
				t.Errorf("n = %d: P(S >= %d) = %v, by enumeration %v", n, s, got, up/total)
			}
			if got := spearmanExact(n, float64(s), false); math.Abs(got-down/total) > 1e-15 {
				t.Errorf("n = %d: P(S <= %d) = %v, by enumeration %v", n, s, got, down/total)
			}
			if a, b := spearmanExact(n, float64(s), false), spearmanExact(n, float64(top-s), true); math.Abs(a-b) > 1e-15 {
				t.Errorf("n = %d: P(S <= %d) = %v but P(S >= %d) = %v", n, s, a, top-s, b)
			}
		}
	}
}

// TestRankCorrelationInvariants: the coefficients are invariant under
// monotone transformations of either variable, change sign when one is
// reversed, are ±1 for monotone relations, and p-values lie in [0, 1].
func TestRankCorrelationInvariants(t *testing.T) {
	rng := newRand(17)
	for _, n := range []int{5, 9, 12, 40, 60, 1300} {
		x, y := linearSample(rng, n, 0, 1, 0, 0.5, 1)
		ex, cy := make([]float64, n), make([]float64, n)
		neg := make([]float64, n)
		for i := range x {
			ex[i] = math.Exp(x[i])
			cy[i] = y[i] * y[i] * y[i]
			neg[i] = -y[i]
		}
		for _, test := range []func(x, y []float64) (Correlation, error){SpearmanTest, KendallTest} {
			base, err := test(x, y)
			if err != nil {
				t.Fatal(err)
			}
			mono, _ := test(ex, cy)
			flip, _ := test(x, neg)
			self, _ := test(x, ex)
			if mono.Estimate != base.Estimate || mono.PValue != base.PValue {
				t.Errorf("%v n = %d: monotone transform changed %v (p %v) to %v (p %v)", base.Method, n, base.Estimate, base.PValue, mono.Estimate, mono.PValue)
			}
			if math.Abs(flip.Estimate+base.Estimate) > 1e-14 || math.Abs(flip.PValue-base.PValue) > 1e-12 {
				t.Errorf("%v n = %d: reversing y gave %v (p %v), want %v (p %v)", base.Method, n, flip.Estimate, flip.PValue, -base.Estimate, base.PValue)
			}
			if self.Estimate != 1 {
				t.Errorf("%v n = %d: monotone pair gives %v, want 1", base.Method, n, self.Estimate)
			}
			if base.PValue < 0 || base.PValue > 1 {
				t.Errorf("%v n = %d: p = %v", base.Method, n, base.PValue)
			}
		}
	}
}

func TestRankCorrelationErrors(t *testing.T) {
	for _, test := range []func(x, y []float64) (Correlation, error){SpearmanTest, KendallTest} {
		for _, c := range []struct {
			x, y []float64
			want string
		}{
			{[]float64{1, 2}, []float64{1, 2}, "at least 3 pairs, got 2"},
			{[]float64{1, 2, 3}, []float64{4, 4, 4}, "a variable is constant"},
			{[]float64{1, 2, 3}, []float64{1, 2}, "x has 3 values and y has 2"},
			{[]float64{1, math.NaN(), 3}, []float64{1, 2, 3}, "pair 2 is (NaN, 2)"},
		} {
			_, err := test(c.x, c.y)
			wantErr(t, "rank correlation", err, c.want)
		}
	}
}
