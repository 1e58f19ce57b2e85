package outlier

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/assay-project/assay/checks/internal/order"
)

// Properties that hold whatever the data: monotonicity, bounds,
// equivariance, agreement of two ways to compute one thing.

// randomSample draws n values from a mixture with ties and a long tail.
func randomSample(rng *rand.Rand, n int) []float64 {
	x := make([]float64, n)
	for i := range x {
		switch rng.IntN(4) {
		case 0:
			x[i] = float64(rng.IntN(5)) // ties
		case 1:
			x[i] = rng.ExpFloat64() * 10
		default:
			x[i] = rng.NormFloat64()
		}
	}
	return x
}

func TestQuantile7Invariants(t *testing.T) {
	rng := newRand(1)
	for _, n := range []int{1, 2, 3, 10, 101} {
		x := randomSample(rng, n)
		slices.Sort(x)
		if Quantile7(x, 0) != x[0] || Quantile7(x, 1) != x[n-1] {
			t.Errorf("n = %d: Q(0), Q(1) = %v, %v, want min %v, max %v", n, Quantile7(x, 0), Quantile7(x, 1), x[0], x[n-1])
		}
		prev := math.Inf(-1)
		for p := 0.0; p <= 1; p += 0.001 {
			q := Quantile7(x, p)
			if q < prev || q < x[0] || q > x[n-1] {
				t.Fatalf("n = %d: Q(%v) = %v after %v, outside [%v, %v] or decreasing", n, p, q, prev, x[0], x[n-1])
			}
			prev = q
		}
	}
	for _, p := range []float64{-0.1, 1.1, math.NaN()} {
		if q := Quantile7([]float64{1, 2}, p); !math.IsNaN(q) {
			t.Errorf("Quantile7(p = %v) = %v, want NaN", p, q)
		}
	}
	if q := Quantile7(nil, 0.5); !math.IsNaN(q) {
		t.Errorf("Quantile7 of nothing = %v, want NaN", q)
	}
}

// naiveMAD sorts the absolute deviations, the definition.
func naiveMAD(sorted []float64) float64 {
	med := Quantile7(sorted, 0.5)
	d := make([]float64, len(sorted))
	for i, v := range sorted {
		d[i] = math.Abs(v - med)
	}
	slices.Sort(d)
	return Quantile7(d, 0.5)
}

func TestSortedMADMatchesDefinition(t *testing.T) {
	rng := newRand(2)
	for trial := range 500 {
		x := randomSample(rng, 1+trial%40)
		slices.Sort(x)
		if got, want := sortedMAD(x, Quantile7(x, 0.5)), naiveMAD(x); got != want {
			t.Fatalf("%v: sortedMAD = %v, definition %v", x, got, want)
		}
	}
}

func FuzzSortedMAD(f *testing.F) {
	f.Add(1.0, 2.0, 2.0, 9.0, -3.0)
	f.Add(0.0, 0.0, 0.0, 0.0, 1.0)
	f.Fuzz(func(t *testing.T, a, b, c, d, e float64) {
		x := []float64{a, b, c, d, e}
		if checkAll(x) != nil {
			return
		}
		for k := 1; k <= len(x); k++ {
			s := slices.Clone(x[:k])
			slices.Sort(s)
			got, want := sortedMAD(s, Quantile7(s, 0.5)), naiveMAD(s)
			if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Fatalf("%v: sortedMAD = %v, definition %v", s, got, want)
			}
		}
	})
}

// TestUnivariateEquivariance: the z-score, the modified z-score and the
// Tukey score of every value are unchanged when the data are shifted and
// rescaled (a x + b, a ≠ 0), and the same positions are flagged.
func TestUnivariateEquivariance(t *testing.T) {
	rng := newRand(3)
	x := randomSample(rng, 300)
	x[17], x[200] = 40, -25
	fit := func(x []float64) []Rule {
		s := slices.Clone(x)
		slices.Sort(s)
		f, err := TukeyFences(s, DefaultTukeyK)
		if err != nil {
			t.Fatal(err)
		}
		z, err := NewZScore(x, DefaultZCutoff)
		if err != nil {
			t.Fatal(err)
		}
		r, err := NewRobustZ(s, DefaultRobustZCutoff)
		if err != nil {
			t.Fatal(err)
		}
		return []Rule{f, z, r}
	}
	base := fit(x)
	for _, ab := range [][2]float64{{3, 7}, {-0.5, 100}, {1e-3, -1e4}} {
		y := make([]float64, len(x))
		for i, v := range x {
			y[i] = ab[0]*v + ab[1]
		}
		for k, r := range fit(y) {
			got, want := Scan(y, r), Scan(x, base[k])
			if len(got) != len(want) || len(want) == 0 {
				t.Fatalf("rule %d, a, b = %v: %d flagged, %d before", k, ab, len(got), len(want))
			}
			for i := range got {
				// Scores are in IQR or sd units; 1e-6 allows for the digits
				// a·x + b loses when b dwarfs a·x.
				if got[i].Index != want[i].Index || !near(got[i].Score, want[i].Score, 1e-6) {
					t.Errorf("rule %d, a, b = %v: #%d is %+v, was %+v", k, ab, i, got[i], want[i])
				}
			}
		}
	}
}

func TestRuleScores(t *testing.T) {
	f := Fences{Q1: 1, Q3: 3, K: 1.5, Lower: -2, Upper: 6}
	for _, c := range []struct {
		x       float64
		outside bool
		score   float64
	}{{-2, false, 0}, {0, false, 0}, {6, false, 0}, {7, true, 0.5}, {-6, true, 2}} {
		if f.Outside(c.x) != c.outside || f.Score(c.x) != c.score {
			t.Errorf("fences at %v: outside %v score %v, want %v %v", c.x, f.Outside(c.x), f.Score(c.x), c.outside, c.score)
		}
	}
	flat := Fences{Q1: 2, Q3: 2, K: 1.5, Lower: 2, Upper: 2}
	if !math.IsInf(flat.Score(3), 1) || flat.Score(2) != 0 {
		t.Errorf("IQR 0: score(3) = %v, score(2) = %v, want +Inf, 0", flat.Score(3), flat.Score(2))
	}
	z, err := NewZScore([]float64{5, 5, 5}, 3)
	if err != nil {
		t.Fatal(err)
	}
	if z.SD != 0 || z.Mean != 5 || z.Outside(5) || !z.Outside(5.1) {
		t.Errorf("constant data: %+v, outside(5) %v, outside(5.1) %v", z, z.Outside(5), z.Outside(5.1))
	}
	x := []float64{3, 1, 4, 1, 5, 9, 2, 6, 50, -40, 5, 3}
	got := Scan(x, ZScore{Mean: 0, SD: 1, Cutoff: 4.5})
	want := []int{8, 9, 5, 7, 4, 10}
	if len(got) != len(want) {
		t.Fatalf("scan: %+v", got)
	}
	for i, e := range got {
		if e.Index != want[i] || e.Value != x[want[i]] || e.Score != math.Abs(x[want[i]]) {
			t.Errorf("scan #%d = %+v, want index %d", i, e, want[i])
		}
	}
	if got := Scan([]float64{math.NaN(), 100}, ZScore{SD: 1, Cutoff: 3}); len(got) != 1 || got[0].Index != 1 {
		t.Errorf("NaN is flagged or the real outlier is not: %+v", got)
	}
}

// TestTailStandardNormal: for the standard normal the tail score is |x|
// itself, and x is outside exactly when |x| > Φ⁻¹(1 − α/(2n)).
func TestTailStandardNormal(t *testing.T) {
	tail, err := NewTail(symmetricNormal{}, 0.05, 1000)
	if err != nil {
		t.Fatal(err)
	}
	crit := distuv.UnitNormal.Quantile(1 - 0.05/2000)
	for _, x := range []float64{-37, -8, -crit - 1e-9, -1, 0, 0.5, crit - 1e-9, crit + 1e-9, 6, 30} {
		if s := tail.Score(x); !near(s, math.Abs(x), 1e-9*math.Max(1, math.Abs(x))) {
			t.Errorf("score(%v) = %.12g, want %.12g", x, s, math.Abs(x))
		}
		if want := math.Abs(x) > crit; tail.Outside(x) != want {
			t.Errorf("outside(%v) = %v, want %v (critical %v)", x, tail.Outside(x), want, crit)
		}
	}
	// Without a Survival method the upper tail falls back to 1 − F.
	plain, _ := NewTail(cdfOnly{distuv.UnitNormal}, 0.05, 1000)
	if !near(plain.Score(4), 4, 1e-6) || plain.Outside(3) || !plain.Outside(-5) {
		t.Errorf("CDF-only tail: score(4) = %v", plain.Score(4))
	}
}

// symmetricNormal is the standard normal with its upper tail computed as
// the lower tail of −x, exact far out (gonum's Survival is 1 − erf).
type symmetricNormal struct{}

func (symmetricNormal) CDF(x float64) float64      { return distuv.UnitNormal.CDF(x) }
func (symmetricNormal) Survival(x float64) float64 { return distuv.UnitNormal.CDF(-x) }

type cdfOnly struct{ d distuv.Normal }

func (c cdfOnly) CDF(x float64) float64 { return c.d.CDF(x) }

// TestGrubbsConsistency: P < alpha exactly when G > critical; P in [0, 1];
// the first step of the generalized ESD is the two-sided Grubbs test (same
// statistic and critical value).
func TestGrubbsConsistency(t *testing.T) {
	rng := newRand(4)
	for trial := range 300 {
		n := 3 + trial%60
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64()
		}
		if trial%3 == 0 {
			x[rng.IntN(n)] += 2 + 6*rng.Float64()
		}
		for _, alt := range []Alternative{TwoSided, Greater, Less} {
			g, err := Grubbs(x, 0.05, alt)
			if err != nil {
				t.Fatal(err)
			}
			if !(g.P >= 0 && g.P <= 1) || (g.P < 0.05) != g.Outlier {
				t.Fatalf("n = %d %v: G %v critical %v P %v outlier %v", n, alt, g.G, g.Critical, g.P, g.Outlier)
			}
		}
		if n < 3 {
			continue
		}
		g, _ := Grubbs(x, 0.05, TwoSided)
		e, err := GeneralizedESD(x, 1, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		if s := e.Steps[0]; !near(s.R, g.G, 1e-12*g.G) || !near(s.Lambda, g.Critical, 1e-12) || s.Index != g.Index {
			t.Fatalf("n = %d: ESD step 1 %+v, Grubbs %+v", n, s, g)
		}
	}
	if g, _ := Grubbs([]float64{1, 1, 1, 1}, 0.05, TwoSided); g.G != 0 || g.P != 1 || g.Outlier {
		t.Errorf("constant sample: %+v", g)
	}
	// The largest G a sample of n can reach, (n−1)/√n, has P = 0.
	if g, _ := Grubbs([]float64{0, 0, 0, 0, 1}, 0.05, Greater); !near(g.G, 4/math.Sqrt(5), 1e-12) || g.P != 0 || !g.Outlier {
		t.Errorf("extreme sample: %+v", g)
	}
	for n := 4; n < 200; n++ {
		if GrubbsCritical(n, 0.05, TwoSided) <= GrubbsCritical(n-1, 0.05, TwoSided) {
			t.Fatalf("critical value not increasing at n = %d", n)
		}
	}
}

// gaussianColumns draws n rows of p correlated normal columns.
func gaussianColumns(rng *rand.Rand, n, p int) [][]float64 {
	cols := make([][]float64, p)
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	for i := range n {
		var prev float64
		for j := range p {
			v := 0.6*prev + rng.NormFloat64()
			cols[j][i] = v*float64(j+1) + float64(10*j)
			prev = v
		}
	}
	return cols
}

// TestCoMomentsMerge: summarising in batches of any size and merging in any
// order gives the one-batch result to 1e-12 relative; the covariance is the
// two-pass sample covariance.
func TestCoMomentsMerge(t *testing.T) {
	rng := newRand(5)
	n, p := 1000, 3
	cols := gaussianColumns(rng, n, p)
	whole := NewCoMoments(p)
	if err := whole.AddColumns(cols); err != nil {
		t.Fatal(err)
	}
	for trial := range 20 {
		var parts []*CoMoments
		for lo := 0; lo < n; {
			hi := min(n, lo+1+rng.IntN(150))
			part := NewCoMoments(p)
			batch := make([][]float64, p)
			for j := range p {
				batch[j] = cols[j][lo:hi]
			}
			if err := part.AddColumns(batch); err != nil {
				t.Fatal(err)
			}
			if trial%2 == 0 { // also grow one state batch by batch
				parts = append(parts, part)
			} else {
				parts = append([]*CoMoments{part}, parts...)
			}
			lo = hi
		}
		acc := NewCoMoments(p)
		for _, part := range parts {
			if err := acc.Merge(part); err != nil {
				t.Fatal(err)
			}
		}
		if acc.N != n {
			t.Fatalf("merged N = %d", acc.N)
		}
		for j := range p {
			if relErr(acc.Mean[j], whole.Mean[j]) > 1e-12 {
				t.Errorf("mean %d: %v merged, %v whole", j, acc.Mean[j], whole.Mean[j])
			}
		}
		for k := range acc.C {
			if relErr(acc.C[k], whole.C[k]) > 1e-12 {
				t.Errorf("C[%d]: %v merged, %v whole", k, acc.C[k], whole.C[k])
			}
		}
	}
	cov, err := whole.Covariance()
	if err != nil {
		t.Fatal(err)
	}
	for a := range p {
		for b := range p {
			var s float64
			for i := range n {
				s += (cols[a][i] - whole.Mean[a]) * (cols[b][i] - whole.Mean[b])
			}
			if relErr(cov.At(a, b), s/float64(n-1)) > 1e-12 {
				t.Errorf("cov %d,%d = %v, two-pass %v", a, b, cov.At(a, b), s/float64(n-1))
			}
		}
	}
	if err := whole.Merge(NewCoMoments(2)); err == nil {
		t.Error("merging 2 columns into 3: no error")
	}
}

// TestMahalanobisInvariants: contributions sum to d²; d² of the center is
// 0; classical distances do not change under an affine map of the columns
// x → A x + b (A invertible).
func TestMahalanobisInvariants(t *testing.T) {
	rng := newRand(6)
	n, p := 500, 3
	cols := gaussianColumns(rng, n, p)
	s, err := Classical(cols)
	if err != nil {
		t.Fatal(err)
	}
	d2, err := s.Distances(cols, nil)
	if err != nil {
		t.Fatal(err)
	}
	row := make([]float64, p)
	var mean float64
	for i := range n {
		for j := range p {
			row[j] = cols[j][i]
		}
		c := s.Contributions(row)
		var sum float64
		for _, v := range c {
			sum += v
		}
		if relErr(sum, d2[i]) > 1e-10 || relErr(s.Dist2(row), d2[i]) > 1e-14 {
			t.Fatalf("row %d: contributions sum to %v, Dist2 %v, Distances %v", i, sum, s.Dist2(row), d2[i])
		}
		mean += d2[i]
	}
	// The classical d² average exactly p (n − 1)/n.
	if want := float64(p) * float64(n-1) / float64(n); relErr(mean/float64(n), want) > 1e-10 {
		t.Errorf("mean d² = %v, want %v", mean/float64(n), want)
	}
	if d := s.Dist2(s.Center); d != 0 {
		t.Errorf("d² of the center = %v", d)
	}
	a := mat.NewDense(p, p, []float64{2, 0.5, 0, -1, 3, 0.2, 0.3, 0, -4})
	moved := affine(cols, a, []float64{100, -7, 0.5})
	sm, err := Classical(moved)
	if err != nil {
		t.Fatal(err)
	}
	d2m, _ := sm.Distances(moved, nil)
	for i := range n {
		if relErr(d2m[i], d2[i]) > 1e-9 {
			t.Fatalf("row %d: d² %v after an affine map, %v before", i, d2m[i], d2[i])
		}
	}
}

// affine returns the columns of rows A x + b.
func affine(cols [][]float64, a *mat.Dense, b []float64) [][]float64 {
	p, n := len(cols), len(cols[0])
	out := make([][]float64, p)
	for j := range out {
		out[j] = make([]float64, n)
		for i := range n {
			v := b[j]
			for k := range p {
				v += a.At(j, k) * cols[k][i]
			}
			out[j][i] = v
		}
	}
	return out
}

// TestContributionsPointAtTheColumn: a row that is ordinary in every
// column but breaks the correlation of columns 1 and 2 gets its distance
// from those two; a row off only in column 3 (independent of the others)
// gets it from column 3.
func TestContributionsPointAtTheColumn(t *testing.T) {
	cov := mat.NewSymDense(3, []float64{1, 0.9, 0, 0.9, 1, 0, 0, 0, 1})
	s, err := NewScatter([]float64{0, 0, 0}, cov)
	if err != nil {
		t.Fatal(err)
	}
	r := RowExtreme{Contrib: s.Contributions([]float64{1.5, -1.5, 0.2})}
	if rk := r.Ranked(); rk[2] != 2 || r.Contrib[0] < 10*r.Contrib[2] {
		t.Errorf("correlation break: contributions %v, ranked %v", r.Contrib, rk)
	}
	r = RowExtreme{Contrib: s.Contributions([]float64{0.1, 0.1, 6})}
	if rk := r.Ranked(); rk[0] != 2 || !near(r.Contrib[2], 36, 1e-12) {
		t.Errorf("column 3 off: contributions %v, ranked %v", r.Contrib, rk)
	}
}

// TestFastMCDEquivariance: the MCD is affine equivariant and the search
// uses only distances, which an affine map does not change, so with the
// same seed the same rows are chosen and the robust distances agree.
func TestFastMCDEquivariance(t *testing.T) {
	rng := newRand(7)
	n, p := 700, 3 // above 2·300: the nested stages run
	cols := gaussianColumns(rng, n, p)
	for i := 0; i < n; i += 20 {
		cols[0][i] += 9
	}
	m1, err := FastMCD(cols, MCDOptions{}, newRand(8))
	if err != nil {
		t.Fatal(err)
	}
	a := mat.NewDense(p, p, []float64{1, 0.3, 0, 0, 2, -0.5, 0.1, 0, 0.7})
	moved := affine(cols, a, []float64{5, 6, 7})
	m2, err := FastMCD(moved, MCDOptions{}, newRand(8))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(m1.Best, m2.Best) || m1.Kept != m2.Kept {
		t.Fatalf("best subsets differ after an affine map (kept %d, %d)", m1.Kept, m2.Kept)
	}
	d1, _ := m1.Final.Distances(cols, nil)
	d2, _ := m2.Final.Distances(moved, nil)
	for i := range d1 {
		if relErr(d1[i], d2[i]) > 1e-8 {
			t.Fatalf("row %d: robust d² %v, %v after the map", i, d1[i], d2[i])
		}
	}
	// |det A| moves ln det by 2 ln |det A|.
	if want := m1.LogDet + 2*math.Log(math.Abs(mat.Det(a))); !near(m2.LogDet, want, 1e-9) {
		t.Errorf("ln det %v after the map, want %v", m2.LogDet, want)
	}
}

// TestFastMCDRepeatsAndAlphaOne: the same seed gives the same estimate;
// alpha = 1 is the classical estimate (factor 1), then reweighted.
func TestFastMCDRepeatsAndAlphaOne(t *testing.T) {
	cols := gaussianColumns(newRand(9), 400, 2)
	a, err := FastMCD(cols, MCDOptions{}, newRand(10))
	if err != nil {
		t.Fatal(err)
	}
	b, _ := FastMCD(cols, MCDOptions{}, newRand(10))
	if !slices.Equal(a.Best, b.Best) || a.LogDet != b.LogDet || !mat.Equal(a.Final.Cov, b.Final.Cov) {
		t.Error("the same seed gave different estimates")
	}
	one, err := FastMCD(cols, MCDOptions{Alpha: 1}, newRand(10))
	if err != nil {
		t.Fatal(err)
	}
	cl, _ := Classical(cols)
	if one.H != 400 || one.RawFactor != 1 || !mat.EqualApprox(one.Raw.Cov, cl.Cov, 1e-12) {
		t.Errorf("alpha 1: h %d, factor %v, raw cov %v, classical %v", one.H, one.RawFactor, mat.Formatted(one.Raw.Cov), mat.Formatted(cl.Cov))
	}
}

// TestKthWithGuess: the banded selection returns the exact k-th value
// whether the previous one is a good guess, a bad one or absent, and leaves
// the distances in place.
func TestKthWithGuess(t *testing.T) {
	rng := newRand(12)
	r := &mcdRun{tmp: make([]float64, 500)}
	for trial := range 400 {
		n := 1 + rng.IntN(500)
		d := make([]float64, n)
		for i := range d {
			d[i] = rng.ExpFloat64() * float64(1+trial%3)
		}
		orig := slices.Clone(d)
		s := slices.Clone(d)
		slices.Sort(s)
		k := rng.IntN(n)
		if trial%4 != 0 { // a guess near, far or at the answer
			r.guess, r.guessM = s[k]*(0.9+0.2*rng.Float64())*float64(1+trial%7/6*9), n
		}
		if got := r.kth(d, k); got != s[k] || !slices.Equal(d, orig) {
			t.Fatalf("n = %d, k = %d, guess %v: kth = %v, want %v", n, k, r.guess, got, s[k])
		}
	}
}

func TestSelectKth(t *testing.T) {
	rng := newRand(11)
	for trial := range 300 {
		n := 1 + rng.IntN(200)
		a := make([]float64, n)
		for i := range a {
			a[i] = float64(rng.IntN(1 + trial%30)) // many ties
		}
		if trial%50 == 0 {
			slices.Sort(a) // sorted and reversed inputs
			if trial%100 == 0 {
				slices.Reverse(a)
			}
		}
		s := slices.Clone(a)
		slices.Sort(s)
		k := rng.IntN(n)
		if got := order.Select(a, k); got != s[k] {
			t.Fatalf("order.Select(k = %d) = %v, want %v", k, got, s[k])
		}
		for i := range k {
			if a[i] > a[k] {
				t.Fatalf("a[%d] = %v > a[k] = %v", i, a[i], a[k])
			}
		}
		for i := k + 1; i < n; i++ {
			if a[i] < a[k] {
				t.Fatalf("a[%d] = %v < a[k] = %v", i, a[i], a[k])
			}
		}
	}
}

// FuzzFastMCD: for any small data set (ties, huge and tiny values, few
// rows) FastMCD either returns an error or an estimate whose h-subset is
// valid and whose distances are finite; it never panics.
func FuzzFastMCD(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20}, uint8(2))
	f.Add([]byte{0, 0, 0, 0, 0, 0, 0, 0, 1, 2, 3, 250, 251, 252, 7, 7, 7, 7}, uint8(3))
	f.Add([]byte{255, 254, 128, 0, 1, 64, 32, 16, 8, 4, 2, 1, 200, 100, 50, 25}, uint8(2))
	values := []float64{0, 1, -1, 2.5, 1e-300, -1e-300, 1e300, -1e300, 3, 7, 0.1, 1e6, -1e6, 42, 5e-324, 12}
	f.Fuzz(func(t *testing.T, data []byte, pp uint8) {
		p := 2 + int(pp)%2
		n := len(data) / p
		if n == 0 || n > 60 {
			return
		}
		cols := make([][]float64, p)
		for j := range cols {
			cols[j] = make([]float64, n)
			for i := range n {
				b := data[i*p+j]
				cols[j][i] = values[b%16] + float64(b/16)
			}
		}
		m, err := FastMCD(cols, MCDOptions{Starts: 20}, newRand(uint64(len(data))))
		if err != nil {
			return
		}
		if len(m.Best) != m.H || !slices.IsSorted(m.Best) || m.Best[0] < 0 || m.Best[m.H-1] >= n {
			t.Fatalf("best subset %v for h = %d, n = %d", m.Best, m.H, n)
		}
		d, err := m.Final.Distances(cols, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range d {
			if math.IsNaN(v) || v < 0 {
				t.Fatalf("row %d: d² = %v", i, v)
			}
		}
	})
}

// FuzzUnivariate: the univariate rules and tests never panic, and what
// they flag has a non-negative score (NaN where overflow leaves no scale).
func FuzzUnivariate(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 200})
	f.Add([]byte{9, 9, 9, 9, 9})
	values := []float64{0, 1, -1, 2.5, 1e-300, -1e-300, 1e300, -1e300, 3, 7, 0.1, 1e6, -1e6, 42, 5e-324, math.MaxFloat64}
	f.Fuzz(func(t *testing.T, data []byte) {
		x := make([]float64, len(data))
		for i, b := range data {
			x[i] = values[b%16] * float64(1+b/16)
		}
		if checkAll(x) != nil {
			return // overflowed to ±Inf: refused with an error, tested elsewhere
		}
		s := slices.Clone(x)
		slices.Sort(s)
		var rules []Rule
		if r, err := TukeyFences(s, DefaultTukeyK); err == nil {
			rules = append(rules, r)
		}
		if r, err := NewRobustZ(s, DefaultRobustZCutoff); err == nil {
			rules = append(rules, r)
		}
		if r, err := NewZScore(x, DefaultZCutoff); err == nil {
			rules = append(rules, r)
		}
		for _, r := range rules {
			for _, e := range Scan(x, r) {
				if e.Score < 0 {
					t.Fatalf("%T: %+v", r, e)
				}
			}
		}
		if len(x) >= 3 {
			if _, err := GeneralizedESD(x, max(1, len(x)/3), 0.05); err != nil {
				t.Fatal(err)
			}
			for _, alt := range []Alternative{TwoSided, Greater, Less} {
				if _, err := Grubbs(x, 0.05, alt); err != nil {
					t.Fatal(err)
				}
			}
		}
	})
}

// TestDistancesAtMatchDist2: the squared distances of a batch of rows
// (DistancesAt, Distances, with the unrolled loop for three columns) are
// those of Dist2 row by row, to the bit, for every row and
// for a list of rows, zeros of either sign included.
func TestDistancesAtMatchDist2(t *testing.T) {
	rng := newRand(17)
	for p := 1; p <= 5; p++ {
		cols := gaussianColumns(rng, 400, p)
		s, err := Classical(cols)
		if err != nil {
			t.Fatal(err)
		}
		for j := range p {
			cols[j] = append(cols[j], s.Center[j], math.Copysign(0, -1), 1e300)
		}
		n := len(cols[0])
		rows := []int{n - 1, 3, 3, 0, n - 3, n - 2}
		for _, at := range [][]int{nil, rows} {
			got := s.DistancesAt(cols, at, nil)
			all, err := s.Distances(cols, nil)
			if err != nil && at == nil {
				t.Fatal(err)
			}
			for k, d := range got {
				i := k
				if at != nil {
					i = at[k]
				}
				row := make([]float64, p)
				for j := range p {
					row[j] = cols[j][i]
				}
				want := s.Dist2(row)
				if math.Float64bits(d) != math.Float64bits(want) || (all != nil && math.Float64bits(all[i]) != math.Float64bits(want)) {
					t.Errorf("p %d row %d: DistancesAt %v, Dist2 %v", p, i, d, want)
				}
			}
		}
	}
}

// TestCoMoments3: the unrolled co-moments of three columns that FAST-MCD
// fits its subsets with are those of the general loop, to the bit, over
// rows listed in any order and over rows of widely different scales.
func TestCoMoments3(t *testing.T) {
	rng := newRand(23)
	cols := gaussianColumns(rng, 2000, 3)
	for i := range 50 {
		cols[i%3][rng.IntN(2000)] *= 1e9
	}
	for _, rows := range [][]int{rng.Perm(2000), rng.Perm(2000)[:700], {5, 5, 9, 1}} {
		mean, cov := make([]float64, 3), make([]float64, 9)
		wantMean, wantCov := make([]float64, 3), make([]float64, 9)
		coMoments3(cols, rows, mean, cov)
		coMoments(cols, rows, wantMean, wantCov)
		for j, v := range append(mean, cov...) {
			if w := append(wantMean, wantCov...)[j]; math.Float64bits(v) != math.Float64bits(w) {
				t.Errorf("%d rows: value %d is %v, the general loop gives %v", len(rows), j, v, w)
			}
		}
	}
}

// TestSplitAtAndCountBand: the branch-free loops of a C-step classify
// every value as the plain comparisons do, in order, ties and NaN
// included, whatever the slices they reuse held.
func TestSplitAtAndCountBand(t *testing.T) {
	rng := newRand(29)
	d2 := make([]float64, 3000)
	for i := range d2 {
		d2[i] = float64(rng.IntN(50)) / 7
	}
	d2[10], d2[11] = math.NaN(), math.Inf(1)
	sel, eq, buf := []int{99, 98}, []int{97}, make([]float64, len(d2))
	for _, cut := range []float64{3, 0, 7, 1.5, math.Inf(1), math.NaN()} {
		var wantSel, wantEq []int
		wantBelow, wantBand := 0, []float64{}
		lo, hi := 0.95*cut, 1.05*cut
		for k, d := range d2 {
			if d < cut {
				wantSel = append(wantSel, k)
			} else if d == cut {
				wantEq = append(wantEq, k)
			}
			if d < lo {
				wantBelow++
			} else if d <= hi {
				wantBand = append(wantBand, d)
			}
		}
		sel, eq = splitAt(d2, cut, sel, eq)
		if !slices.Equal(sel, wantSel) || !slices.Equal(eq, wantEq) {
			t.Errorf("cut %v: %d below and %d equal, want %d and %d", cut, len(sel), len(eq), len(wantSel), len(wantEq))
		}
		below, band := countBand(d2, lo, hi, buf)
		if below != wantBelow || !slices.Equal(band, wantBand) {
			t.Errorf("band [%v, %v]: %d below and %d within, want %d and %d", lo, hi, below, len(band), wantBelow, len(wantBand))
		}
	}
}
