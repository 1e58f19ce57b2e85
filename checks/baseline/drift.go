package baseline

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/assay-project/assay/checks/gof"
)

// This file holds the measures that compare new data with a baseline or a
// reference sample. Each takes two distributions: "base" is the one
// trusted, "cur" the one judged.

// KS2 returns the two-sample Kolmogorov-Smirnov distance
//
//	D = sup_x |F(x) - G(x)|
//
// between the step CDFs of two weighted distributions (each normalised by
// its total weight). For two samples (unit weights) it is Smirnov's (1939)
// statistic exactly; when base is a sketch, its CDF is off by at most the
// sketch's rank error, so D is too. It is 0 when either side is empty.
func KS2(base, cur Weighted) float64 {
	d := 0.0
	walk(base, cur, func(_, fb, fc float64) { d = max(d, math.Abs(fb-fc)) })
	return d
}

// walk calls fn at each distinct value x of base and cur, in ascending
// order, with both normalised CDFs at x; it calls nothing when either side
// has no weight.
func walk(base, cur Weighted, fn func(x, fb, fc float64)) {
	tb, tc := base.Total(), cur.Total()
	if tb == 0 || tc == 0 {
		return
	}
	var i, j int
	var fb, fc float64
	for i < len(base.X) || j < len(cur.X) {
		var x float64
		switch {
		case j == len(cur.X) || (i < len(base.X) && base.X[i] <= cur.X[j]):
			x = base.X[i]
		default:
			x = cur.X[j]
		}
		for i < len(base.X) && base.X[i] == x {
			fb += base.W[i] / tb
			i++
		}
		for j < len(cur.X) && cur.X[j] == x {
			fc += cur.W[j] / tc
			j++
		}
		fn(x, fb, fc)
	}
}

// KS2PValue returns the asymptotic p-value of a two-sample KS distance d
// between samples of n and m values: Kolmogorov's limiting distribution at
// lambda = sqrt(n m / (n + m)) d (Smirnov 1939; Kolmogorov 1933),
//
//	Q(lambda) = 2 sum_{k>=1} (-1)^(k-1) exp(-2 k^2 lambda^2)
//
// (package gof sums it). It is the large-sample approximation: good when n m / (n + m)
// is in the hundreds or more, and conservative-to-slightly-liberal below.
// With a baseline sketch for one side, n is the baseline's row count and
// d carries the sketch's rank error, so the p-value is approximate too.
func KS2PValue(d float64, n, m int64) float64 {
	if n <= 0 || m <= 0 {
		return math.NaN()
	}
	en := float64(n) * float64(m) / float64(n+m)
	return gof.KolmogorovLimitSurvival(math.Sqrt(en) * d)
}

// PSIEpsilon is the share an empty bin is given before PSI takes its
// logarithm: ln(0) would make one empty bin infinitely unstable. Flooring
// both shares at a small epsilon such as 1e-4 is common practice; the
// measure then stays finite (at most about 9.2 per bin) and a bin empty
// on both sides adds 0.
const PSIEpsilon = 1e-4

// PSI returns the population stability index of shares cur against
// shares base (the same bins, each side summing to 1):
//
//	PSI = sum_i (c_i - b_i) ln(c_i / b_i)
//
// with both shares floored at PSIEpsilon. It is the symmetrised
// Kullback-Leibler divergence KL(c||b) + KL(b||c) of the binned
// distributions. The usual reading — below 0.1 stable, 0.1 to 0.25 a
// moderate shift, above 0.25 a major one — is common practice in credit
// scoring, not a published test.
func PSI(base, cur []float64) float64 {
	s := 0.0
	for i := range base {
		b, c := max(base[i], PSIEpsilon), max(cur[i], PSIEpsilon)
		s += (c - b) * math.Log(c/b)
	}
	return s
}

// JensenShannon returns the Jensen-Shannon divergence (Lin 1991,
// "Divergence measures based on the Shannon entropy", IEEE Trans. Inf.
// Theory 37(1)) of two share vectors in bits:
//
//	JS = (KL(p||m) + KL(q||m)) / 2,  m = (p + q) / 2,  log base 2,
//
// which lies in [0, 1]; 0 ln 0 is taken as 0, so empty bins need no
// epsilon.
func JensenShannon(p, q []float64) float64 {
	s := 0.0
	for i := range p {
		m := (p[i] + q[i]) / 2
		if p[i] > 0 {
			s += p[i] * math.Log2(p[i]/m)
		}
		if q[i] > 0 {
			s += q[i] * math.Log2(q[i]/m)
		}
	}
	return min(1, max(0, s/2))
}

// Wasserstein1 returns the first Wasserstein (earth mover's) distance
// between two weighted distributions on the line, each normalised:
//
//	W1 = integral |F(x) - G(x)| dx,
//
// the area between the step CDFs (Vallender 1974). It is in the unit of
// the values; 0 when either side is empty.
func Wasserstein1(base, cur Weighted) float64 {
	var w, prev, gap float64
	first := true
	walk(base, cur, func(x, fb, fc float64) {
		if !first {
			w += gap * (x - prev)
		}
		first, prev, gap = false, x, math.Abs(fb-fc)
	})
	return w
}

// Homogeneity is Pearson's chi-square test that two sets of counts over
// the same categories come from one distribution.
type Homogeneity struct {
	Statistic float64
	DF        int
	PValue    float64
}

// ChiSquareHomogeneity tests a 2 x K table of counts (base and cur per
// category) for homogeneity: with row totals R_r, column totals C_k and
// grand total T, the expected count is E = R_r C_k / T and
//
//	X2 = sum (O - E)^2 / E,  df = K' - 1,
//
// K' the categories with a positive column total; the p-value is the
// chi-square survival at X2 (Pearson 1900; no continuity correction).
func ChiSquareHomogeneity(base, cur []int64) (Homogeneity, error) {
	if len(base) != len(cur) {
		return Homogeneity{}, fmt.Errorf("chi-square homogeneity: %d and %d categories", len(base), len(cur))
	}
	var rb, rc int64
	for i := range base {
		rb += base[i]
		rc += cur[i]
	}
	if rb == 0 || rc == 0 {
		return Homogeneity{}, fmt.Errorf("chi-square homogeneity: a side has no values")
	}
	t := float64(rb + rc)
	var x2 float64
	k := 0
	for i := range base {
		col := float64(base[i] + cur[i])
		if col == 0 {
			continue
		}
		k++
		for _, o := range [2]struct{ obs, row float64 }{{float64(base[i]), float64(rb)}, {float64(cur[i]), float64(rc)}} {
			e := o.row * col / t
			x2 += (o.obs - e) * (o.obs - e) / e
		}
	}
	h := Homogeneity{Statistic: x2, DF: k - 1, PValue: 1}
	if h.DF > 0 {
		h.PValue = distuv.ChiSquared{K: float64(h.DF)}.Survival(x2)
	}
	return h, nil
}

// UnitsTolerance is how close a ratio must be to a power of ten to be
// called a likely change of units: within 5% (own choice).
const UnitsTolerance = 0.05

// PowerOfTen returns k when r lies within UnitsTolerance of 10^k for a
// k != 0 (a ratio of 1000 gives 3, of 0.001 gives -3), else false.
func PowerOfTen(r float64) (int, bool) {
	if !(r > 0) || math.IsInf(r, 0) {
		return 0, false
	}
	k := math.Round(math.Log10(r))
	if k == 0 || math.Abs(r/math.Pow(10, k)-1) > UnitsTolerance {
		return 0, false
	}
	return int(k), true
}

// Shares returns the share of values of the sorted sample x in each bin
// of bins: bin i holds (Upper_{i-1}, Upper_i], the first from -Inf and
// the last up to +Inf, so every value counts.
func Shares(bins []Bin, x []float64) []float64 {
	out := make([]float64, len(bins))
	if len(x) == 0 || len(bins) == 0 {
		return out
	}
	edges := upperEdges(bins)
	for _, v := range x {
		i, _ := slices.BinarySearch(edges, v)
		out[min(i, len(bins)-1)]++
	}
	for i := range out {
		out[i] /= float64(len(x))
	}
	return out
}

func upperEdges(bins []Bin) []float64 {
	e := make([]float64, len(bins))
	for i, b := range bins {
		e[i] = b.Upper
	}
	return e
}

// Move is a value range whose share changed.
type Move struct {
	// Lower and Upper bound the range (Lower, Upper]; Lower is -Inf for
	// the first bin and Upper +Inf for the last.
	Lower, Upper float64
	Base, Cur    float64 // shares of the range
}

// Moves returns the n bins whose share changed most, largest change
// first (ties by position).
func Moves(bins []Bin, base, cur []float64, n int) []Move {
	out := make([]Move, len(bins))
	for i, b := range bins {
		lo, hi := math.Inf(-1), b.Upper
		if i > 0 {
			lo = bins[i-1].Upper
		}
		if i == len(bins)-1 {
			hi = math.Inf(1)
		}
		out[i] = Move{Lower: lo, Upper: hi, Base: base[i], Cur: cur[i]}
	}
	slices.SortStableFunc(out, func(a, b Move) int {
		return cmp.Compare(math.Abs(b.Cur-b.Base), math.Abs(a.Cur-a.Base))
	})
	return out[:min(n, len(out))]
}

// ks2ExactMaxCells bounds n m for KS2ExactPValue: its work is one pass
// over an (n+1) x (m+1) lattice, 1e7 cells in some tens of milliseconds.
const ks2ExactMaxCells = 10_000_000

// KS2ExactPValue returns the exact p-value P(D >= d) of the two-sample KS
// distance d between samples of n and m values drawn from one continuous
// distribution (no ties), by counting the paths of the merged ranks:
// a path from (0,0) to (n,m) steps right for a value of the first sample
// and up for one of the second, and D >= d when it reaches a point with
// |i/n - j/m| >= d. The share of paths that never do follows the
// recursion p(i,j) = p(i-1,j) i/(i+j) + p(i,j-1) j/(i+j), p = 0 outside
// (Hodges 1958, "The significance probability of the Smirnov two-sample
// test", Arkiv för Matematik 3(5), §2). Distances are compared on the
// lattice of 1/lcm(n,m), d rounded to it, as SciPy's ks_2samp does. The
// result is 1 minus the share inside, so it is exact to about 1e-15
// absolute: a smaller p-value is rounding, read it as "below 1e-14". It
// returns false when n m exceeds ks2ExactMaxCells.
func KS2ExactPValue(d float64, n, m int64) (float64, bool) {
	if n <= 0 || m <= 0 || n*m > ks2ExactMaxCells {
		return math.NaN(), false
	}
	g := n
	for r := m; r != 0; {
		g, r = r, g%r
	}
	lcm := n / g * m
	a, b := lcm/n, lcm/m
	h := int64(math.Round(d * float64(lcm)))
	if h <= 0 {
		return 1, true
	}
	inside := func(i, j int64) bool {
		x := i*a - j*b
		return x < h && -x < h
	}
	p := make([]float64, m+1)
	p[0] = 1
	for j := int64(1); j <= m; j++ {
		if inside(0, j) {
			p[j] = p[j-1]
		}
	}
	for i := int64(1); i <= n; i++ {
		if !inside(i, 0) {
			p[0] = 0 // along the edge j = 0 the share is carried on unchanged (i/(i+0) = 1)
		}
		for j := int64(1); j <= m; j++ {
			if !inside(i, j) {
				p[j] = 0
				continue
			}
			p[j] = (p[j]*float64(i) + p[j-1]*float64(j)) / float64(i+j)
		}
	}
	return min(1, max(0, 1-p[m])), true
}
