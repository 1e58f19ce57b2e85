package outlier

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/assay-project/assay/checks/internal/order"
)

// MCDOptions tune FastMCD. The zero value gives the defaults of Rousseeuw &
// Van Driessen (1999), which are also robustbase's.
type MCDOptions struct {
	// Alpha is the share of rows the estimate rests on, 1/2 <= Alpha <= 1;
	// h = SubsetSize(n, p, Alpha). 0 means 1/2, the maximal breakdown point.
	Alpha float64
	// Starts is the number of random (p+1)-subsets; 0 means 500.
	Starts int
	// GroupSize is the size of the subgroups large data are split into;
	// 0 means 300. Data of fewer than 2·GroupSize rows are not split.
	GroupSize int
	// MaxGroups bounds the number of subgroups; 0 means 5, so the merged
	// set has at most 1500 rows.
	MaxGroups int
	// Keep is the number of best solutions carried from one stage to the
	// next; 0 means 10.
	Keep int
	// MaxSteps bounds the C-steps of one solution in the full data; 0
	// means 200.
	MaxSteps int
	// Reweight is the chi-square quantile whose value cuts the raw squared
	// distances for the reweighting step; 0 means 0.975.
	Reweight float64
}

func (o MCDOptions) withDefaults() (MCDOptions, error) {
	def := func(v *int, d int, name string) error {
		if *v < 0 {
			return fmt.Errorf("%s is %d, want a positive number (0 for the default %d)", name, *v, d)
		}
		if *v == 0 {
			*v = d
		}
		return nil
	}
	for _, f := range []struct {
		v    *int
		d    int
		name string
	}{{&o.Starts, 500, "starts"}, {&o.GroupSize, 300, "group size"}, {&o.MaxGroups, 5, "groups"}, {&o.Keep, 10, "kept solutions"}, {&o.MaxSteps, 200, "steps"}} {
		if err := def(f.v, f.d, f.name); err != nil {
			return o, err
		}
	}
	if o.Alpha == 0 {
		o.Alpha = 0.5
	}
	if !(o.Alpha >= 0.5 && o.Alpha <= 1) {
		return o, fmt.Errorf("alpha is %v, want 0.5 <= alpha <= 1", o.Alpha)
	}
	if o.Reweight == 0 {
		o.Reweight = 0.975
	}
	if !(o.Reweight > 0 && o.Reweight < 1) {
		return o, fmt.Errorf("reweighting quantile is %v, want 0 < q < 1", o.Reweight)
	}
	if o.GroupSize < 2 {
		return o, fmt.Errorf("group size is %d, want at least 2", o.GroupSize)
	}
	return o, nil
}

// SubsetSize is the number of rows h an MCD estimate rests on, for n rows,
// p columns and share alpha (1/2 <= alpha <= 1): with n₂ = ⌊(n+p+1)/2⌋,
//
//	h = ⌊2n₂ − n + 2(n − n₂) α⌋,
//
// which is n₂, the size of maximal breakdown point (Rousseeuw & Van
// Driessen 1999), at α = 1/2, about αn above it, and n at α = 1. It is the
// formula of robustbase's h.alpha.n.
func SubsetSize(n, p int, alpha float64) int {
	n2 := (n + p + 1) / 2
	return int(math.Floor(float64(2*n2-n) + 2*float64(n-n2)*alpha))
}

// ConsistencyFactor is the factor that makes the covariance of the a·n rows
// closest to the center (0 < a <= 1) consistent for the covariance of a
// p-variate normal (Croux & Haesbroeck 1999):
//
//	c(a, p) = a / F_{χ²(p+2)}(χ²_{p, a}),
//
// χ²_{p,a} the a-quantile of the chi-square distribution with p degrees of
// freedom and F_{χ²(p+2)} the distribution function with p + 2. c(1, p) = 1.
// robustbase calls it .MCDcons.
func ConsistencyFactor(p int, a float64) float64 {
	if p < 1 || !(a > 0 && a <= 1) {
		return math.NaN()
	}
	if a == 1 {
		return 1
	}
	q := distuv.ChiSquared{K: float64(p)}.Quantile(a)
	return a / distuv.ChiSquared{K: float64(p + 2)}.CDF(q)
}

// MCD is a minimum covariance determinant estimate with its reweighted
// version.
type MCD struct {
	N, H int
	// Best holds the rows (0-based, ascending) of the h-subset whose
	// covariance has the smallest determinant found.
	Best []int
	// LogDet is ln det of the covariance (divisor h − 1) of the Best rows,
	// before any factor: the criterion minimised (robustbase's crit).
	LogDet float64
	// Raw is the mean and covariance of the Best rows, the covariance
	// multiplied by RawFactor = ConsistencyFactor(p, h/n).
	Raw       Scatter
	RawFactor float64
	// Kept is the number of rows whose squared distance to Raw is below
	// the reweighting cutoff, χ²_{p, 0.975} by default.
	Kept int
	// Final is the mean and covariance (divisor Kept − 1) of those rows,
	// the covariance multiplied by Factor = ConsistencyFactor(p, Kept/n).
	Final  Scatter
	Factor float64
}

// FastMCD computes the minimum covariance determinant estimate of p >= 2
// columns of equal length by the FAST-MCD algorithm of Rousseeuw & Van
// Driessen (1999), then reweights it. The MCD estimate is the mean and
// covariance of the h rows (h = SubsetSize) whose covariance has the
// smallest determinant; with h about n/2 up to half the rows can be
// arbitrarily bad without carrying it away.
//
// The search rests on the C-step (their Theorem 1): given a mean and
// covariance, take the h rows with the smallest squared distances to them;
// the covariance of those rows has a determinant no larger. Each of
// opt.Starts random subsets of p+1 rows (enlarged by random rows while its
// covariance is singular) gives a first estimate, improved by three
// C-steps (to H1, H2, H3 in the paper's notation). Data of 2·GroupSize rows
// or more are split into k = min(MaxGroups, ⌊n/GroupSize⌋) random groups
// (drawn from a random sample of k·GroupSize rows when n is larger); the
// starts are shared among the groups and run within them, with h scaled to
// the group; the Keep best of each group are then improved by two C-steps
// within the merged groups. Finally, in the full data: without groups the
// Keep best solutions are each iterated until the determinant stops
// decreasing; with groups the Keep best of the merged stage take two
// C-steps and only the best of them is iterated on (an economy of ours:
// at that size they share one basin, and a full-data step costs O(n p²)).
// Iteration stops when ln det decreases by less than 1e-10, or after
// MaxSteps C-steps; the best solution gives the h-subset of the raw
// estimate.
//
// Consistency and reweighting follow robustbase's covMcd without its
// small-sample correction (use.correction = FALSE): the raw covariance is
// multiplied by ConsistencyFactor(p, h/n); rows whose squared distance to
// the raw estimate is below χ²_{p, opt.Reweight} get weight 1, the others
// 0; the final estimate is the mean and covariance of the weighted rows,
// multiplied by ConsistencyFactor(p, Kept/n). The small-sample factors of
// Pison, Van Aelst & Willems (2002) are not applied; they tend to 1 as n
// grows.
//
// Every random choice comes from rng, so a result repeats from its seed.
// Memory is O(n) beyond the data; time is O(n p²) per full-data C-step.
// For data that do not fit in memory, estimate from a seeded sample and
// score every row with Final. It fails when n < p + 2, and when at least
// h rows satisfy an exact linear relation (a singular h-subset was found and
// h rows lie on its hyperplane: the "exact fit" case, with determinant 0,
// where robust distances are undefined); the error names the relation.
func FastMCD(cols [][]float64, opt MCDOptions, rng *rand.Rand) (MCD, error) {
	opt, err := opt.withDefaults()
	if err != nil {
		return MCD{}, fmt.Errorf("fast mcd: %w", err)
	}
	if rng == nil {
		return MCD{}, fmt.Errorf("fast mcd: no random source")
	}
	p := len(cols)
	if p < 2 {
		return MCD{}, fmt.Errorf("fast mcd: %d columns, need at least 2 (use the robust z-score for one)", p)
	}
	n, err := checkColumns(cols, p)
	if err != nil {
		return MCD{}, fmt.Errorf("fast mcd: %w", err)
	}
	if n < p+2 {
		return MCD{}, fmt.Errorf("fast mcd: %d rows of %d columns, need at least %d", n, p, p+2)
	}
	h := SubsetSize(n, p, opt.Alpha)
	r := newMCDRun(cols, n, rng)
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	if _, ok := r.fit(all); !ok {
		return MCD{}, fmt.Errorf("fast mcd: the covariance of all rows is singular (a constant column, or columns that are linear combinations of others)")
	}
	best := all
	if h < n {
		est, ok := r.search(h, opt)
		if err := r.exactFit(h); err != nil {
			return MCD{}, fmt.Errorf("fast mcd: %w", err)
		}
		if !ok {
			return MCD{}, fmt.Errorf("fast mcd: every subset of %d rows tried has a singular covariance", h)
		}
		best = slices.Clone(r.smallest(est, nil, n, h))
		slices.Sort(best)
	}
	res, err := r.finish(best, opt.Reweight)
	if err != nil {
		return MCD{}, fmt.Errorf("fast mcd: %w", err)
	}
	return res, nil
}

// finish turns the best h-subset (ascending rows) into the raw estimate
// and reweights it with the cutoff χ²_{p, q}.
func (r *mcdRun) finish(best []int, q float64) (MCD, error) {
	n, p, h := r.n, r.p, len(best)
	res := MCD{N: n, H: h, Best: best, RawFactor: ConsistencyFactor(p, float64(h)/float64(n))}
	raw, ok := r.fit(best)
	if !ok {
		return MCD{}, fmt.Errorf("the covariance of the %d rows is singular (a constant column or linearly dependent columns)", h)
	}
	res.LogDet = raw.logDet
	var err error
	if res.Raw, err = raw.scatter(res.RawFactor); err != nil {
		return MCD{}, fmt.Errorf("raw estimate: %w", err)
	}
	cut := Cutoff(p, q)
	d2 := r.d2[:n]
	res.Raw.distances(r.cols, nil, d2)
	kept := make([]int, 0, n)
	for i, d := range d2 {
		if d < cut {
			kept = append(kept, i)
		}
	}
	res.Kept = len(kept)
	res.Factor = ConsistencyFactor(p, float64(res.Kept)/float64(n))
	rew, ok := r.fit(kept)
	if !ok {
		return MCD{}, fmt.Errorf("the %d rows kept by reweighting have a singular covariance", len(kept))
	}
	if res.Final, err = rew.scatter(res.Factor); err != nil {
		return MCD{}, fmt.Errorf("reweighted estimate: %w", err)
	}
	return res, nil
}

// exactFit checks the singular subset found by the search, if any: when at
// least h of the n rows lie on its hyperplane a·x = a·x̄ (a the eigenvector
// of its covariance's smallest eigenvalue), the MCD is that subset, with
// determinant 0, and robust distances are undefined; the error names the
// hyperplane. A row lies on it when |a·(x − x̄)| is within 100 times the
// largest such value among the subset's own rows (their rounding error),
// and at least 1e-12 times the largest over all rows.
func (r *mcdRun) exactFit(h int) error {
	if r.singular == nil {
		return nil
	}
	p := r.p
	mean := make([]float64, p)
	for j, c := range r.cols {
		var s float64
		for _, i := range r.singular {
			s += c[i]
		}
		mean[j] = s / float64(len(r.singular))
	}
	cov := mat.NewSymDense(p, nil)
	u := rowBuf(p)
	for _, i := range r.singular {
		for j := range p {
			u[j] = r.cols[j][i] - mean[j]
		}
		for j := range p {
			for k := j; k < p; k++ {
				cov.SetSym(j, k, cov.At(j, k)+u[j]*u[k])
			}
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(cov, true) {
		return nil
	}
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	a := mat.Col(nil, 0, &vecs) // eigenvalues ascend
	proj := func(i int) float64 {
		var t float64
		for j := range p {
			t += a[j] * (r.cols[j][i] - mean[j])
		}
		return math.Abs(t)
	}
	var own, all float64
	for _, i := range r.singular {
		own = max(own, proj(i))
	}
	for i := range r.n {
		all = max(all, proj(i))
	}
	tol := max(100*own, 1e-12*all)
	on := 0
	for i := range r.n {
		if proj(i) <= tol {
			on++
		}
	}
	if on < h {
		return nil
	}
	var b, size float64
	for j := range p {
		b += a[j] * mean[j]
		size += math.Abs(a[j] * mean[j])
	}
	if math.Abs(b) <= 1e-9*size {
		b = 0 // rounding error of a plane through the origin
	}
	return fmt.Errorf("%d of the %d rows satisfy %s (an exact linear relation, at least h = %d rows): their covariance is singular and robust distances are undefined", on, r.n, hyperplane(a, b), h)
}

// hyperplane writes a·x = b with the columns named x1, x2, ... and the
// coefficients scaled so that the largest is 1.
func hyperplane(a []float64, b float64) string {
	var big float64
	for _, v := range a {
		if math.Abs(v) > math.Abs(big) {
			big = v
		}
	}
	var sb strings.Builder
	for j, v := range a {
		c := v / big
		if math.Abs(c) < 1e-12 {
			continue
		}
		if sb.Len() > 0 {
			if c < 0 {
				sb.WriteString(" - ")
				c = -c
			} else {
				sb.WriteString(" + ")
			}
		}
		fmt.Fprintf(&sb, "%.6g x%d", c, j+1)
	}
	fmt.Fprintf(&sb, " = %.6g", b/big+0) // +0 turns −0 into 0
	return sb.String()
}

// estimate is a mean and covariance (p × p row-major) of some rows with
// the inverse Cholesky factor of the covariance and ln det.
type estimate struct {
	mean, cov, linv []float64
	logDet          float64
}

func (e estimate) scatter(factor float64) (Scatter, error) {
	p := len(e.mean)
	cov := mat.NewSymDense(p, nil)
	for j := range p {
		for k := j; k < p; k++ {
			cov.SetSym(j, k, factor*e.cov[j*p+k])
		}
	}
	return NewScatter(e.mean, cov)
}

// same reports whether two estimates are bit for bit the same, which they
// are when they come from the same rows.
func (e estimate) same(o estimate) bool {
	return e.logDet == o.logDet && slices.Equal(e.mean, o.mean)
}

// mcdRun holds the data and the scratch space of one FastMCD call.
type mcdRun struct {
	cols [][]float64
	n, p int
	rng  *rand.Rand
	f    factor
	sym  *mat.SymDense
	d2   []float64 // distances of the rows of the current set
	tmp  []float64 // copy of d2 for selection
	sel  []int     // rows selected by the last C-step
	eq   []int     // rows at the h-th distance in the last C-step
	// guess is the last k-th distance found among guessM values (kth).
	guess  float64
	guessM int
	// singular holds the first C-step subset found with a singular
	// covariance, nil if none.
	singular []int
}

func newMCDRun(cols [][]float64, n int, rng *rand.Rand) *mcdRun {
	p := len(cols)
	return &mcdRun{cols: cols, n: n, p: p, rng: rng, sym: mat.NewSymDense(p, nil),
		d2: make([]float64, n), tmp: make([]float64, n)}
}

// fit returns the mean and covariance (divisor len(rows) − 1) of the rows
// listed, by two passes. It reports false when the covariance is not
// positive definite.
func (r *mcdRun) fit(rows []int) (estimate, bool) {
	p, m := r.p, len(rows)
	e := estimate{mean: make([]float64, p), cov: make([]float64, p*p), linv: make([]float64, p*p)}
	if p == 3 {
		coMoments3(r.cols, rows, e.mean, e.cov)
	} else {
		coMoments(r.cols, rows, e.mean, e.cov)
	}
	d := float64(m - 1)
	for j := range p {
		for l := j; l < p; l++ {
			v := e.cov[j*p+l] / d
			e.cov[j*p+l], e.cov[l*p+j] = v, v
			r.sym.SetSym(j, l, v)
		}
	}
	if !r.f.factorize(r.sym, e.linv) {
		return estimate{}, false
	}
	e.logDet = r.f.chol.LogDet()
	return e, true
}

// coMoments writes the mean of each column over the rows listed into mean
// and the upper triangle of the co-moments Σ (x_j − x̄_j)(x_l − x̄_l),
// row-major p × p, into cov (zeros on entry): each a sum in the order of
// rows.
func coMoments(cols [][]float64, rows []int, mean, cov []float64) {
	p, m := len(cols), len(rows)
	for j, c := range cols {
		var s float64
		for _, i := range rows {
			s += c[i]
		}
		mean[j] = s / float64(m)
	}
	u := rowBuf(p)
	for _, i := range rows {
		for j, c := range cols {
			u[j] = c[i] - mean[j]
		}
		for j := range p {
			uj := u[j]
			c := cov[j*p : j*p+p]
			for l := j; l < p; l++ {
				c[l] += uj * u[l]
			}
		}
	}
}

// coMoments3 is coMoments for three columns, unrolled: the same sums,
// each over the rows in the same order, kept in locals (so the three
// means and the six co-moments do not wait on one another), and so the
// same to the bit.
func coMoments3(cols [][]float64, rows []int, mean, cov []float64) {
	x0, x1, x2 := cols[0], cols[1], cols[2]
	var s0, s1, s2 float64
	for _, i := range rows {
		s0 += x0[i]
		s1 += x1[i]
		s2 += x2[i]
	}
	m := float64(len(rows))
	m0, m1, m2 := s0/m, s1/m, s2/m
	mean[0], mean[1], mean[2] = m0, m1, m2
	var c00, c01, c02, c11, c12, c22 float64
	for _, i := range rows {
		u0, u1, u2 := x0[i]-m0, x1[i]-m1, x2[i]-m2
		c00 += u0 * u0
		c01 += u0 * u1
		c02 += u0 * u2
		c11 += u1 * u1
		c12 += u1 * u2
		c22 += u2 * u2
	}
	cov[0], cov[1], cov[2] = c00, c01, c02
	cov[4], cov[5] = c11, c12
	cov[8] = c22
}

// smallest returns the h rows of the set (rows, or the first m rows when
// rows is nil) with the smallest squared distances to e: those closer than
// the h-th distance in set order, then as many rows at exactly that
// distance as are needed, in set order. The slice is reused by the next
// call.
func (r *mcdRun) smallest(e estimate, rows []int, m, h int) []int {
	d2 := r.d2[:m]
	sqDistances(r.cols, e.mean, e.linv, rows, d2)
	t := r.kth(d2, h-1)
	sel, eq := splitAt(d2, t, r.sel, r.eq)
	sel = append(sel, eq[:h-len(sel)]...)
	if rows != nil {
		for i, k := range sel {
			sel[i] = rows[k]
		}
	}
	r.sel, r.eq = sel, eq
	return sel
}

// kth returns the k-th smallest of d2 (0-based) without reordering it. The
// k-th distance moves little from one C-step to the next, so it first
// counts the values below a band of ±5% around the previous one on a set
// of the same size and selects within the band; only when the k-th value
// has left the band does it select among all values.
func (r *mcdRun) kth(d2 []float64, k int) float64 {
	m := len(d2)
	if r.guessM == m && r.guess > 0 {
		lo, hi := 0.95*r.guess, 1.05*r.guess
		below, band := countBand(d2, lo, hi, r.tmp)
		if below <= k && k < below+len(band) {
			r.guess = order.Select(band, k-below)
			return r.guess
		}
	}
	tmp := r.tmp[:m]
	copy(tmp, d2)
	r.guess, r.guessM = order.Select(tmp, k), m
	return r.guess
}

// splitAt returns the places k of the values d2[k] below t (sel) and
// equal to t (eq), each in order, reusing the slices given. It writes
// every place at both slices' ends and advances each past it only when
// the value belongs there, without a branch: in a C-step about half the
// values lie below t in no pattern a branch predictor could learn.
func splitAt(d2 []float64, t float64, sel, eq []int) ([]int, []int) {
	m := len(d2)
	sel, eq = slices.Grow(sel[:0], m)[:m], slices.Grow(eq[:0], m)[:m]
	ns, ne := 0, 0
	for k, d := range d2 {
		sel[ns], eq[ne] = k, k
		ns += one(d < t)
		ne += one(d == t)
	}
	return sel[:ns], eq[:ne]
}

// countBand returns how many values of d2 lie below lo and, in order, the
// values in [lo, hi] (NaN in neither), written into buf's array without a
// branch, as in splitAt; buf needs room for len(d2) values.
func countBand(d2 []float64, lo, hi float64, buf []float64) (int, []float64) {
	band := buf[:len(d2)]
	below, nb := 0, 0
	for _, d := range d2 {
		band[nb] = d
		below += one(d < lo)
		nb += one(d >= lo) & one(d <= hi)
	}
	return below, band[:nb]
}

// one is 1 for true and 0 for false.
func one(b bool) int {
	if b {
		return 1
	}
	return 0
}

// cstep is one C-step in the set: the h rows closest to e, and their fit.
// When their covariance is singular it keeps the first such subset for
// the exact-fit check and reports false.
func (r *mcdRun) cstep(e estimate, rows []int, m, h int) (estimate, bool) {
	sel := r.smallest(e, rows, m, h)
	next, ok := r.fit(sel)
	if !ok && r.singular == nil {
		r.singular = slices.Clone(sel)
	}
	return next, ok
}

// search runs the three stages of FAST-MCD and returns the best estimate
// found in the full data; false when every subset it reached was singular.
func (r *mcdRun) search(h int, opt MCDOptions) (estimate, bool) {
	n := r.n
	groups := r.groups(opt)
	var cands []estimate
	if groups == nil {
		cands = r.starts(nil, n, h, opt.Starts, opt.Keep)
	} else {
		var merged []int
		for g, rows := range groups {
			starts := opt.Starts / len(groups)
			if g < opt.Starts%len(groups) {
				starts++
			}
			hg := max(r.p+1, len(rows)*h/n)
			cands = append(cands, r.starts(rows, len(rows), hg, max(starts, 1), opt.Keep)...)
			merged = append(merged, rows...)
		}
		hm := max(r.p+1, len(merged)*h/n)
		var best keepBest
		for _, c := range cands {
			if e, ok := r.iterate(c, merged, len(merged), hm, 2); ok {
				best.add(e, opt.Keep)
			}
		}
		// Large data: the solutions from the merged groups take two C-steps
		// in the full data and only the best goes on. At this size they
		// share one basin (at n = 1e6 ten of them iterated to the end agree
		// to 1e-9 in ln det), and each full step costs O(n p²).
		var screened keepBest
		for _, c := range best.list {
			if e, ok := r.iterate(c, nil, n, h, 2); ok {
				screened.add(e, 1)
			}
		}
		cands = screened.list
	}
	var final keepBest
	var converged []estimate
	for _, e := range cands {
		for range opt.MaxSteps {
			next, ok := r.cstep(e, nil, n, h)
			if !ok || next.logDet >= e.logDet {
				break
			}
			small := e.logDet-next.logDet < convergedLogDet
			e = next
			if small || slices.ContainsFunc(converged, e.same) {
				break // converged, or on the path of a solution already iterated
			}
		}
		converged = append(converged, e)
		final.add(e, 1)
	}
	if len(final.list) == 0 {
		return estimate{}, false
	}
	return final.list[0], true
}

// convergedLogDet ends the C-steps in the full data when ln det decreases
// by less: the determinant then changes by under 1e-10 relative. In large
// data the decrease shrinks geometrically (by about half a step at
// n = 1e6), so what is left is of the same order; in small data C-steps
// reach their fixed point, where the decrease is exactly 0, much sooner.
const convergedLogDet = 1e-10

// starts runs count random starts in the set (rows, or all n rows when rows
// is nil) of m rows with subset size h, three C-steps each, and returns the
// keep best distinct results.
func (r *mcdRun) starts(rows []int, m, h, count, keep int) []estimate {
	var best keepBest
	j := make([]int, 0, m)
	in := make([]bool, m)
	for range count {
		j = j[:0]
		clear(in)
		var e estimate
		ok := false
		for !ok && len(j) < m {
			k := r.rng.IntN(m)
			if in[k] {
				continue
			}
			in[k] = true
			j = append(j, k)
			if len(j) > r.p {
				e, ok = r.fit(r.mapRows(rows, j))
			}
		}
		if !ok {
			continue
		}
		if e, ok = r.iterate(e, rows, m, h, 3); ok {
			best.add(e, keep)
		}
	}
	return best.list
}

// mapRows returns the data rows of the set positions in pos (pos itself
// when the set is all rows) in a scratch slice.
func (r *mcdRun) mapRows(rows, pos []int) []int {
	if rows == nil {
		return pos
	}
	out := r.sel[:0]
	for _, k := range pos {
		out = append(out, rows[k])
	}
	r.sel = out
	return out
}

// iterate takes steps C-steps from e in the set; it reports false when a
// subset's covariance is singular.
func (r *mcdRun) iterate(e estimate, rows []int, m, h, steps int) (estimate, bool) {
	for range steps {
		var ok bool
		if e, ok = r.cstep(e, rows, m, h); !ok {
			return e, false
		}
	}
	return e, true
}

// groups splits the data for the nested stages: nil when n < 2·GroupSize,
// else k = min(MaxGroups, ⌊n/GroupSize⌋) groups of about equal size from a
// random sample of min(n, k·GroupSize) rows.
func (r *mcdRun) groups(opt MCDOptions) [][]int {
	n := r.n
	if n < 2*opt.GroupSize {
		return nil
	}
	k := min(opt.MaxGroups, n/opt.GroupSize)
	size := min(n, k*opt.GroupSize)
	pool := sampleRows(r.rng, n, size)
	r.rng.Shuffle(len(pool), func(a, b int) { pool[a], pool[b] = pool[b], pool[a] })
	out := make([][]int, k)
	for g := range k {
		out[g] = pool[g*size/k : (g+1)*size/k]
	}
	return out
}

// sampleRows draws k distinct rows of n by Floyd's algorithm (Bentley &
// Floyd 1987, "Programming pearls: a sample of brilliance"), in O(k).
func sampleRows(rng *rand.Rand, n, k int) []int {
	if k >= n {
		out := make([]int, n)
		for i := range out {
			out[i] = i
		}
		return out
	}
	seen := make(map[int]bool, k)
	out := make([]int, 0, k)
	for j := n - k; j < n; j++ {
		t := rng.IntN(j + 1)
		if seen[t] {
			t = j
		}
		seen[t] = true
		out = append(out, t)
	}
	return out
}

// keepBest keeps the estimates with the smallest determinants, without
// duplicates, in ascending order of ln det.
type keepBest struct {
	list []estimate
}

func (b *keepBest) add(e estimate, keep int) {
	i, _ := slices.BinarySearchFunc(b.list, e.logDet, func(x estimate, v float64) int {
		if x.logDet < v {
			return -1
		}
		if x.logDet > v {
			return 1
		}
		return 0
	})
	for k := i; k < len(b.list) && b.list[k].logDet == e.logDet; k++ {
		if b.list[k].same(e) {
			return
		}
	}
	if i >= keep {
		return
	}
	b.list = slices.Insert(b.list, i, e)
	if len(b.list) > keep {
		b.list = b.list[:keep]
	}
}
