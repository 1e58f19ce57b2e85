package relate

import (
	"cmp"
	"errors"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// Ranks returns the ranks 1..n of x, ties given the average of the ranks
// they span (mid-ranks), and whether x has ties. NaN values must be
// removed first.
func Ranks(x []float64) (r []float64, ties bool) {
	r = make([]float64, len(x))
	return r, ranksTo(r, x, make([]valueIndex, len(x)))
}

// valueIndex is a value and the index it came from, sorted together so
// that sorting touches contiguous memory.
type valueIndex struct {
	v float64
	i int
}

// ranksTo writes the mid-ranks of x into dst using buf as scratch and
// reports ties.
func ranksTo(dst, x []float64, buf []valueIndex) bool {
	for i, v := range x {
		buf[i] = valueIndex{v, i}
	}
	slices.SortFunc(buf, func(a, b valueIndex) int { return cmp.Compare(a.v, b.v) })
	ties := false
	for i := 0; i < len(buf); {
		j := i + 1
		for j < len(buf) && buf[j].v == buf[i].v {
			j++
		}
		if j-i > 1 {
			ties = true
		}
		mid := float64(i+j+1) / 2 // average of ranks i+1 .. j
		for _, e := range buf[i:j] {
			dst[e.i] = mid
		}
		i = j
	}
	return ties
}

// SpearmanTest returns Spearman's rank correlation rho (Spearman 1904), the
// Pearson correlation of the mid-ranks of x and y, with the two-sided test
// of independence. The statistic is S = (n³-n)(1-rho)/6, which without
// ties is Σ d², d the rank differences. The p-value follows R's cor.test
// (R 4.2):
//
//   - no ties and n <= 9: exact, from all n! permutations;
//   - no ties and 10 <= n <= 1290: the Edgeworth series of Best & Roberts
//     (1975, "Algorithm AS 89: the upper tail probabilities of Spearman's
//     rho", Applied Statistics 24(3):377-379), evaluated at S ∓ 1 as a
//     continuity correction;
//   - ties, or n > 1290: t = rho sqrt((n-2)/(1-rho²)) on n-2 degrees of
//     freedom (common practice, e.g. Zar 1972; with ties no exact
//     distribution is computed).
//
// The one-sided tail probability is doubled and capped at 1. It needs at
// least three pairs.
func SpearmanTest(x, y []float64) (Correlation, error) {
	if err := checkPairs("spearman correlation", x, y, 3); err != nil {
		return Correlation{}, err
	}
	n := len(x)
	buf := make([]valueIndex, n)
	rx, ry := make([]float64, n), make([]float64, n)
	tx := ranksTo(rx, x, buf)
	ty := ranksTo(ry, y, buf)
	var m Moments
	m.AddAll(rx, ry)
	if m.M2X <= 0 || m.M2Y <= 0 {
		return Correlation{}, errors.New("spearman correlation is undefined: a variable is constant")
	}
	rho := m.Correlation()
	nf := float64(n)
	span := (nf*nf*nf - nf) / 6 // E[S] under independence
	s := span * (1 - rho)
	c := Correlation{
		Method:    Spearman,
		Estimate:  rho,
		Statistic: Statistic{Name: "S", Value: s},
		N:         int64(n),
		Ties:      tx || ty,
	}
	upper := s > span // rho < 0: the upper tail of S
	switch {
	case c.Ties || n > 1290:
		c.PMethod = StudentT
		c.PValue = twoSidedT(rho*math.Sqrt((nf-2)/(1-rho*rho)), nf-2)
		return c, nil
	case n <= 9:
		c.PMethod = Exact
		c.PValue = spearmanExact(n, math.Round(s), upper)
	default:
		c.PMethod = Edgeworth
		c.PValue = spearmanEdgeworth(n, math.Round(s), upper)
	}
	c.PValue = math.Min(1, 2*c.PValue)
	return c, nil
}

// spearmanExact returns P(S >= s) when upper, else P(S <= s), for
// S = Σ (i - π(i))² over the n! permutations π (n <= 9).
func spearmanExact(n int, s float64, upper bool) float64 {
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	count := make([]float64, (n*n*n-n)/3+1) // S ranges over 0 .. (n³-n)/3
	total := 0.0
	sumSq := func() int {
		t := 0
		for i, p := range perm {
			t += (i - p) * (i - p)
		}
		return t
	}
	// Heap's algorithm (Heap 1963), iterative form: every permutation once.
	c := make([]int, n)
	count[sumSq()]++
	total++
	for i := 0; i < n; {
		if c[i] < i {
			if i%2 == 0 {
				perm[0], perm[i] = perm[i], perm[0]
			} else {
				perm[c[i]], perm[i] = perm[i], perm[c[i]]
			}
			count[sumSq()]++
			total++
			c[i]++
			i = 0
			continue
		}
		c[i] = 0
		i++
	}
	tail := 0.0
	for v, k := range count {
		if (upper && float64(v) >= s) || (!upper && float64(v) <= s) {
			tail += k
		}
	}
	return tail / total
}

// spearmanEdgeworth returns P(S >= s) when upper, else P(S <= s), by the
// Edgeworth series of AS 89. With z = (6(s'-1)/(n³-n) - 1) sqrt(n-1), where
// s' = s for the upper tail and s' = s + 2 for the lower (S is even without
// ties, so P(S <= s) = P(S < s + 2)), and b = 1/n,
//
//	P(S >= s) ≈ 1 - Φ(z) + u(z) e^{-z²/2},  P(S <= s) ≈ Φ(z) - u(z) e^{-z²/2}
//	u(z) = z b (P0 + b P1 + b² P2), y = z²:
//	P0 = c1 - c4 y;  P1 = c2 + c5 y - c7 y² + c9 y³
//	P2 = c3 + c6 y - c8 y² - c10 y³ + c11 y⁴ - c12 y⁵
//
// with Best & Roberts' coefficients below, clamped to [0, 1].
func spearmanEdgeworth(n int, s float64, upper bool) float64 {
	const (
		c1, c2, c3, c4    = 0.2274, 0.2531, 0.1745, 0.0758
		c5, c6, c7, c8    = 0.1033, 0.3932, 0.0879, 0.0151
		c9, c10, c11, c12 = 0.0072, 0.0831, 0.0131, 4.6e-4
	)
	nf := float64(n)
	if !upper {
		s += 2
	}
	z := (6*(s-1)/(nf*nf*nf-nf) - 1) * math.Sqrt(nf-1)
	b, y := 1/nf, z*z
	p0 := c1 - c4*y
	p1 := c2 + y*(c5+y*(-c7+y*c9))
	p2 := c3 + y*(c6+y*(-c8+y*(-c10+y*(c11-y*c12))))
	corr := z * b * (p0 + b*(p1+b*p2)) * math.Exp(-y/2)
	std := distuv.UnitNormal
	var p float64
	if upper {
		p = std.Survival(z) + corr
	} else {
		p = std.CDF(z) - corr
	}
	return math.Max(0, math.Min(1, p))
}

// KendallTest returns Kendall's tau-b (Kendall 1938; 1945 for ties),
//
//	tau_b = (C - D) / sqrt((n0 - n1)(n0 - n2)),
//
// with C and D the concordant and discordant pairs, n0 = n(n-1)/2 and n1,
// n2 the pairs tied in x and in y, computed in O(n log n) by Knight's
// algorithm (Knight 1966, "A computer method for calculating Kendall's tau
// with ungrouped data", JASA 61(314):436-439): sort by (x, y), count the
// exchanges a merge sort of y makes (D), and the tie runs. The two-sided
// p-value follows R's cor.test (R 4.2):
//
//   - no ties and n < 50: exact, from the distribution of the number of
//     inversions of a random permutation (the statistic T = C);
//   - otherwise the normal approximation z = (C - D)/sqrt(Var) with the
//     tie-corrected variance (Kendall 1970, Rank Correlation Methods,
//     4th ed., ch. 4), without continuity correction:
//     Var = (v0 - vt - vu)/18 + v1/(2n(n-1)) + v2/(9n(n-1)(n-2)),
//     v0 = n(n-1)(2n+5), vt = Σ t(t-1)(2t+5) over the tie groups t of x,
//     vu the same for y, v1 = Σt(t-1)·Σu(u-1), v2 = Σt(t-1)(t-2)·Σu(u-1)(u-2).
//
// It needs at least three pairs.
func KendallTest(x, y []float64) (Correlation, error) {
	if err := checkPairs("kendall correlation", x, y, 3); err != nil {
		return Correlation{}, err
	}
	n := len(x)
	type pair struct{ x, y float64 }
	p := make([]pair, n)
	for i := range x {
		p[i] = pair{x[i], y[i]}
	}
	slices.SortFunc(p, func(a, b pair) int {
		if c := cmp.Compare(a.x, b.x); c != 0 {
			return c
		}
		return cmp.Compare(a.y, b.y)
	})
	var tiesX, tiesXY tieSums
	for i := 0; i < n; {
		j := i + 1
		for j < n && p[j].x == p[i].x {
			j++
		}
		tiesX.add(j - i)
		for k := i; k < j; {
			l := k + 1
			for l < j && p[l].y == p[k].y {
				l++
			}
			tiesXY.add(l - k)
			k = l
		}
		i = j
	}
	ys := make([]float64, n)
	for i := range p {
		ys[i] = p[i].y
	}
	d := mergeCount(ys, make([]float64, n)) // ys ends sorted
	var tiesY tieSums
	for i := 0; i < n; {
		j := i + 1
		for j < n && ys[j] == ys[i] {
			j++
		}
		tiesY.add(j - i)
		i = j
	}
	nf := float64(n)
	n0 := nf * (nf - 1) / 2
	// C - D = n0 - n1 - n2 + n3 - 2D (Knight 1966).
	sNum := n0 - tiesX.pairs - tiesY.pairs + tiesXY.pairs - 2*float64(d)
	den := math.Sqrt((n0 - tiesX.pairs) * (n0 - tiesY.pairs))
	if den == 0 {
		return Correlation{}, errors.New("kendall correlation is undefined: a variable is constant")
	}
	c := Correlation{
		Method:   Kendall,
		Estimate: math.Max(-1, math.Min(1, sNum/den)),
		N:        int64(n),
		Ties:     tiesX.pairs > 0 || tiesY.pairs > 0,
	}
	if !c.Ties && n < 50 {
		conc := int(n0) - int(d)
		c.Statistic = Statistic{Name: "T", Value: float64(conc)}
		c.PMethod = Exact
		c.PValue = math.Min(1, 2*kendallExactTail(n, conc))
		return c, nil
	}
	v := (nf*(nf-1)*(2*nf+5)-tiesX.v0-tiesY.v0)/18 +
		tiesX.v1*tiesY.v1/(2*nf*(nf-1)) +
		tiesX.v2*tiesY.v2/(9*nf*(nf-1)*(nf-2))
	z := sNum / math.Sqrt(v)
	c.Statistic = Statistic{Name: "z", Value: z}
	c.PMethod = Normal
	// Two-sided normal tail 2·Q(|z|) = erfc(|z|/√2), from erfc so that it
	// keeps its relative precision far out (gonum's Normal.Survival is
	// 1 - erf and underflows to 0 near 8 sd).
	c.PValue = math.Min(1, math.Erfc(math.Abs(z)/math.Sqrt2))
	return c, nil
}

// tieSums accumulates, over tie groups of size t, the tied pairs
// Σ t(t-1)/2 and the variance terms Σ t(t-1)(2t+5), Σ t(t-1), Σ t(t-1)(t-2).
type tieSums struct{ pairs, v0, v1, v2 float64 }

func (s *tieSums) add(size int) {
	if size < 2 {
		return
	}
	t := float64(size)
	s.pairs += t * (t - 1) / 2
	s.v0 += t * (t - 1) * (2*t + 5)
	s.v1 += t * (t - 1)
	s.v2 += t * (t - 1) * (t - 2)
}

// mergeCount sorts a in place (bottom-up merge sort, buf as scratch of the
// same length) and returns the number of pairs i < j with a[i] > a[j].
func mergeCount(a, buf []float64) int64 {
	n := len(a)
	var inv int64
	src, dst := a, buf
	for width := 1; width < n; width *= 2 {
		for lo := 0; lo < n; lo += 2 * width {
			mid, hi := min(lo+width, n), min(lo+2*width, n)
			i, j, k := lo, mid, lo
			for i < mid && j < hi {
				if src[j] < src[i] {
					dst[k] = src[j]
					inv += int64(mid - i)
					j++
				} else {
					dst[k] = src[i]
					i++
				}
				k++
			}
			k += copy(dst[k:], src[i:mid])
			copy(dst[k:], src[j:hi])
		}
		src, dst = dst, src
	}
	if &src[0] != &a[0] {
		copy(a, src)
	}
	return inv
}

// kendallExactTail returns the one-sided tail of the exact null
// distribution of the concordant pairs T of n untied pairs, on the side of
// t: P(T >= t) when t > n(n-1)/4, else P(T <= t). T has the distribution
// of the number of inversions of a uniform random permutation, whose
// probabilities follow f_m(k) = (1/m) Σ_{j=0}^{min(k,m-1)} f_{m-1}(k-j)
// (inserting element m adds 0..m-1 inversions), computed as a running sum.
func kendallExactTail(n, t int) float64 {
	maxK := n * (n - 1) / 2
	f := make([]float64, maxK+1)
	g := make([]float64, maxK+1)
	f[0] = 1
	for m := 2; m <= n; m++ {
		top := m * (m - 1) / 2
		run := 0.0
		for k := 0; k <= top; k++ {
			run += f[k]
			if k-m >= 0 {
				run -= f[k-m]
			}
			g[k] = run / float64(m)
		}
		f, g = g, f
	}
	tail := 0.0
	if 4*t > n*(n-1) {
		for k := t; k <= maxK; k++ {
			tail += f[k]
		}
	} else {
		for k := 0; k <= t && k <= maxK; k++ {
			tail += f[k]
		}
	}
	return math.Min(1, tail)
}
