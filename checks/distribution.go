package checks

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/gof"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// distributionCheck judges how far a column's values are from a family of
// package dist: one family, with given parameters or fitted by maximum
// likelihood, or the best of several candidates ranked by AIC, then BIC
// (dist.Rank).
//
// First pass. Every non-null value is counted, and tested against the
// support of each candidate (dist.Family.InSupport), so values a family
// cannot produce (a negative value for a lognormal, a fraction for a
// Poisson) are counted exactly however many rows there are. The values
// themselves are kept up to the rule's sample size; beyond it a seeded
// uniform sample of that many rows is kept instead (bottomk.Sample: the
// rows of smallest key, a hash of the seed and the data-row number), and
// the fit and the test run on it. Categorical rules count each listed
// category exactly instead.
//
// Finish. A candidate with values outside its support is skipped; when
// none is left the rule fails with its measure undefined and a second pass
// lists the values outside, each scored 1. Otherwise the candidates are
// fitted, the best is tested:
//
//   - ks, anderson-darling, cramer-von-mises on continuous families: with
//     every parameter given, gof.Specified. With parameters estimated:
//     gof.Normal (Lilliefors KS with Dallal & Wilkinson's p-values;
//     Stephens' AD and CvM) and gof.Exponential for those families, and a
//     seeded parametric bootstrap (gof.Estimated) for the others, on
//     samples of at most bootstrapMax values; above that, the fully
//     specified p-value at the fitted distribution, which is an upper bound
//     of the true one (the estimated parameters bring the fit closer to the
//     data than the true ones would: Lilliefors 1967, Durbin 1973) and is
//     reported as conservative.
//   - resolution. Values recorded at a step h (0.01 °C) are tied, and at
//     millions of rows the ties alone move the KS test. With a step
//     detected (gof.DetectResolution) or given, ks compares the empirical
//     and the fitted CDF only at the boundaries of the recording cells
//     (gof.KSAtResolution), which rounding cannot move; with parameters
//     estimated its p-value comes from a parametric bootstrap of the same
//     statistic on draws rounded to the step (up to bootstrapMax values),
//     and chi-square puts its bin edges on cell boundaries.
//   - shapiro-wilk (normal): gof.ShapiroWilk on up to 5000 values, the
//     range of Royston's approximation; a larger sample is sub-sampled
//     (seeded) to 5000 and the result says so.
//   - chi-square: Pearson's test (gof.ChiSquare, cells pooled to expected
//     counts of at least 5, one degree of freedom less per estimated
//     parameter) over binsFor(n) bins of equal probability under the fitted
//     continuous family (Mann & Wald 1942), over whole numbers for discrete
//     families (gof.IntegerCells), over leading digits for Benford and over
//     the listed categories for the categorical family.
//
// The measure is the distance (the KS distance D = sup |F_n − F| between
// the empirical and the fitted CDF, at cell boundaries when a resolution
// applies; for chi-square the total variation distance ½ Σ |O_i/n − p_i|
// between observed and expected cell shares, before pooling) or the test's
// p-value.
//
// Where it is off. When the verdict is not pass, the cells of the
// chi-square partition (bins, whole numbers, digits or categories) are
// compared: runs of adjacent cells whose observed share exceeds the
// expected share are merged into regions, and the maxRegions with the
// largest excess are reported. A second pass then lists the rows whose
// value lies in a region, scored by −log10 of the two-sided tail
// probability of the value under the fitted family, min(1, 2 min(P(X ≤ x),
// P(X ≥ x))), so the most extreme of them come first; rows of categories
// and leading digits are scored by their cell's excess share.
type distributionCheck struct {
	rule     *rules.Rule
	env      *Env
	col      column
	spec     rules.DistributionSpec
	families []dist.Family   // candidates, with given parameters
	inside   []dist.Interval // each candidate's support
	within   dist.Interval   // the values inside every candidate's support
	needs    []string        // what each candidate needs, in words
	shares   dist.Shares     // the categorical family's shares
	category map[string]int  // index of each listed category
	// replicates is the number of bootstrap replicates (gof.DefaultB);
	// bootstrapMax is the largest sample a bootstrap p-value runs on.
	replicates, bootstrapMax int
}

// Bootstrap limits. A parametric bootstrap refits the family B times; at
// 2000 values and 999 replicates that takes about a second for the
// families fitted in closed form and several for those fitted by BFGS
// (see BenchmarkDistribution). Beyond it the p-value of a test with
// estimated parameters is the conservative one described above.
const (
	bootstrapMax  = 2000
	shapiroMax    = 5000 // Royston's (1995) approximation covers 3 <= n <= 5000
	maxRegions    = 3
	maxQQ         = 200
	maxListedVals = 5
	maxRedraws    = 1000 // draws of one bootstrap value before a rounded family is taken to leave its support
)

func newDistributionCheck(r *rules.Rule, s rules.DistributionSpec, env *Env) (Check, error) {
	c := &distributionCheck{rule: r, env: env, spec: s, replicates: gof.DefaultB, bootstrapMax: bootstrapMax,
		within: dist.Finite}
	if len(s.Families) == 0 {
		return nil, fmt.Errorf("the distribution rule names no family")
	}
	for _, name := range s.Families {
		f, err := dist.Lookup(name)
		if err != nil {
			return nil, err
		}
		if f.Kind() != dist.Categorical {
			if f, err = f.Fix(s.Parameters); err != nil {
				return nil, err
			}
			in, need, _ := f.Within()
			c.inside, c.needs = append(c.inside, in), append(c.needs, need)
			c.within = c.within.Intersect(in)
		}
		c.families = append(c.families, f)
	}
	var err error
	if c.families[0].Kind() == dist.Categorical {
		if c.shares, err = dist.NewShares(s.Categories, s.Weights); err != nil {
			return nil, err
		}
		c.category = make(map[string]int, len(s.Categories))
		for i, l := range s.Categories {
			c.category[l] = i
		}
		c.col, err = bindColumnOf(r, env, "distribution categorical", classString, classInteger, classBoolean)
	} else {
		c.col, err = bindColumnOf(r, env, "distribution "+c.families[0].Name(), classInteger, classNumber)
	}
	if err != nil {
		return nil, err
	}
	if s.Sample < 1 {
		return nil, fmt.Errorf("sample size %d is below 1", s.Sample)
	}
	return c, nil
}

func (c *distributionCheck) Rule() *rules.Rule { return c.rule }

func (c *distributionCheck) categorical() bool { return c.families[0].Kind() == dist.Categorical }

// NewAccumulators returns n accumulators of one run whose samples share
// a bound (bottomk.Bound).
func (c *distributionCheck) NewAccumulators(n int) []Accumulator {
	b := bottomk.NewBound(c.spec.Sample)
	as := make([]Accumulator, n)
	for i := range as {
		a := c.NewAccumulator().(*DistributionAccumulator)
		a.bound = b
		as[i] = a
	}
	return as
}

func (c *distributionCheck) NewAccumulator() Accumulator {
	a := &DistributionAccumulator{check: c}
	a.Min, a.Max = math.Inf(1), math.Inf(-1)
	if c.categorical() {
		a.Counts = make([]int64, len(c.spec.Categories))
	} else {
		a.Outside = make([]OutsideValues, len(c.families))
	}
	return a
}

// DistributionState is the first-pass state of a distribution rule.
type DistributionState struct {
	N        int64   // non-null values
	Min, Max float64 // smallest and largest finite value (numeric families)
	// Sample is a uniform sample of at most the rule's sample size of the
	// finite values (nil before the first value), in row order: every
	// value while there are no more. Which values it keeps depends on the
	// seed and the rows alone, not on how the batches were cut or dealt to
	// accumulators.
	Sample *bottomk.Sample
	// Outside counts, per candidate, the values it cannot produce.
	Outside []OutsideValues
	// Counts counts each listed category, in the policy's order, and
	// Unlisted the values of no listed category, of which UnlistedValues
	// keeps the first few distinct ones, first seen at data rows
	// UnlistedRows (categorical rules).
	Counts         []int64
	Unlisted       int64
	UnlistedValues []string
	UnlistedRows   []int64
}

// OutsideValues counts the values outside a family's support and keeps
// the first few, of data rows Rows.
type OutsideValues struct {
	Count  int64
	Values []float64
	Rows   []int64
}

// add counts value v of data row row, keeping it if it is among the first.
func (o *OutsideValues) add(v float64, row int64) {
	o.Count++
	if len(o.Values) < maxListedVals {
		o.Values = append(o.Values, v)
		o.Rows = append(o.Rows, row)
	}
}

// merge adds p's count to o and keeps the values of the first rows of
// both. Each accumulator kept its first values, so the first of all the
// rows are among them whichever batches each saw.
func (o *OutsideValues) merge(p OutsideValues) {
	o.Count += p.Count
	o.Values, o.Rows = firstByRow(o.Values, o.Rows, p.Values, p.Rows, func(float64) bool { return true })
}

// firstByRow returns the values of a and b (of data rows ra and rb) in
// row order, keeping at most maxListedVals; a value already taken is
// skipped when fresh reports it seen (distinct listings).
func firstByRow[T any](a []T, ra []int64, b []T, rb []int64, fresh func(T) bool) ([]T, []int64) {
	type kept struct {
		v   T
		row int64
	}
	all := make([]kept, 0, len(a)+len(b))
	for i, v := range a {
		all = append(all, kept{v, ra[i]})
	}
	for i, v := range b {
		all = append(all, kept{v, rb[i]})
	}
	slices.SortStableFunc(all, func(x, y kept) int { return cmp.Compare(x.row, y.row) })
	var vs []T
	var rows []int64
	for _, k := range all {
		if len(vs) < maxListedVals && fresh(k.v) {
			vs, rows = append(vs, k.v), append(rows, k.row)
		}
	}
	return vs, rows
}

// DistributionAccumulator is the first pass of a distribution rule.
type DistributionAccumulator struct {
	DistributionState
	check   *distributionCheck
	scratch scratch
	vals    []float64
	at      []int          // the place in the batch of each of vals
	found   *distFinding   // the analysis, once made
	bound   *bottomk.Bound // shared with the run's other lanes, or nil
}

// Observe counts the batch's values, tests them against each candidate's
// support and offers the finite ones to the sample, each under its
// data-row number.
func (a *DistributionAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	if a.check.categorical() {
		eachText(arr, func(i int, s string) { a.count(s, b.Row(i)) })
		return nil
	}
	var (
		finite []float64
		all    bool
		v      = validOf(arr)
	)
	if a.check.col.class == classNumber {
		// A batch without nulls whose values are all inside every
		// candidate's support is offered to the sample in place.
		xs := float64s(arr, &a.scratch.floats)
		finite, all = xs, true
		if n := observeInside(a, v, xs); n < len(xs) {
			finite, all = observeValues(a, b, v, xs, n)
		}
	} else {
		xs := int64s(arr, &a.scratch.ints)
		finite, all = observeValues(a, b, v, xs, observeInside(a, v, xs))
	}
	if len(finite) == 0 {
		return nil
	}
	if a.Sample == nil {
		if a.Sample, err = bottomk.New(a.check.spec.Sample, 1, a.check.spec.Seed); err != nil {
			return err
		}
		if a.bound != nil {
			a.Sample.Share(a.bound)
		}
	}
	switch {
	case all && b.Rows == nil:
		a.Sample.OfferRun(b.FirstRow, finite)
	case all:
		for i, x := range finite {
			a.Sample.Offer(b.Rows[i], []float64{x})
		}
	case b.Rows == nil:
		a.Sample.OfferAt(b.FirstRow, a.at, finite)
	default:
		for i, k := range a.at {
			a.Sample.Offer(b.Rows[k], finite[i:i+1])
		}
	}
	return nil
}

// observeInside counts the values of xs and tracks their least and
// greatest when none is null and every one is inside every candidate's
// support (a.check.within, which holds finite values only), and returns
// how many it took: len(xs) then, else 0. The support is tested once for
// the batch, on its least and greatest value (NaN, which min and max
// carry through, fails the test), and value by value only for whole
// numbers.
func observeInside[T int64 | float64](a *DistributionAccumulator, v valid, xs []T) int {
	if v.bits != nil || len(xs) == 0 {
		return 0
	}
	least, most := boundsOf(xs)
	in := a.check.within
	if !(least >= in.Lo && most <= in.Hi) {
		return 0
	}
	if in.Whole {
		for _, x := range xs {
			if f := float64(x); f != math.Trunc(f) {
				return 0
			}
		}
	}
	a.N += int64(len(xs))
	a.Min, a.Max = min(a.Min, least), max(a.Max, most)
	return len(xs)
}

// boundsOf returns the least and the greatest of xs (not empty) as
// float64, by min and max: NaN when xs holds one, −0 below +0. The min
// of a sequence is the same in any grouping, so four running minima and
// maxima (which the processor keeps apart, where one would wait for the
// last) give the same as one.
func boundsOf[T int64 | float64](xs []T) (least, most float64) {
	f := float64(xs[0])
	l0, l1, l2, l3 := f, f, f, f
	m0, m1, m2, m3 := f, f, f, f
	i := 0
	for ; i+4 <= len(xs); i += 4 {
		x0, x1, x2, x3 := float64(xs[i]), float64(xs[i+1]), float64(xs[i+2]), float64(xs[i+3])
		l0, l1, l2, l3 = min(l0, x0), min(l1, x1), min(l2, x2), min(l3, x3)
		m0, m1, m2, m3 = max(m0, x0), max(m1, x1), max(m2, x2), max(m3, x3)
	}
	for ; i < len(xs); i++ {
		l0, m0 = min(l0, float64(xs[i])), max(m0, float64(xs[i]))
	}
	return min(l0, l1, l2, l3), max(m0, m1, m2, m3)
}

// observeValues observes the values of xs from place from on, those
// before having been observed by observeInside: it counts the non-null
// values (valid says which), as float64, tests each against every
// candidate's support and returns the finite ones of all of xs, in a's
// buffer, and whether they are every value of xs; when they are not,
// a.at holds the place of each in xs. One pass over the array, read in
// place.
func observeValues[T int64 | float64](a *DistributionAccumulator, b *source.Batch, v valid, xs []T, from int) ([]float64, bool) {
	finite, at := a.vals[:0], a.at[:0]
	for _, x := range xs[:from] {
		finite = append(finite, float64(x))
	}
	all, within := true, a.check.within
	least, most := a.Min, a.Max
	for i := from; i < len(xs); i++ {
		if !v.at(i) {
			if all { // the first value left out: the places so far are 0..i-1
				at, all = appendPlaces(at, i), false
			}
			continue
		}
		a.N++
		// A value inside the intersection of the supports is inside
		// each, and finite.
		f := float64(xs[i])
		if !within.Contains(f) {
			for k, in := range a.check.inside {
				if !in.Contains(f) {
					a.Outside[k].add(f, b.Row(i))
				}
			}
			if math.IsNaN(f) || math.IsInf(f, 0) {
				if all {
					at, all = appendPlaces(at, i), false
				}
				continue
			}
		}
		// min and max give −0 below +0; the branches are rarely taken.
		if f <= least {
			least = min(least, f)
		}
		if f >= most {
			most = max(most, f)
		}
		finite = append(finite, f)
		if !all {
			at = append(at, i)
		}
	}
	a.Min, a.Max = least, most
	a.vals, a.at = finite, at
	return finite, all
}

// appendPlaces appends 0, 1, ..., n-1 to at.
func appendPlaces(at []int, n int) []int {
	for k := range n {
		at = append(at, k)
	}
	return at
}

// count adds one categorical value, of data row row.
func (a *DistributionAccumulator) count(s string, row int64) {
	a.N++
	if i, ok := a.check.category[s]; ok {
		a.Counts[i]++
		return
	}
	a.Unlisted++
	if len(a.UnlistedValues) < maxListedVals && !slices.Contains(a.UnlistedValues, s) {
		a.UnlistedValues = append(a.UnlistedValues, strings.Clone(s))
		a.UnlistedRows = append(a.UnlistedRows, row)
	}
}

// eachText calls f with the text of every non-null value of a string,
// integer or boolean array, as a categorical rule names its categories.
func eachText(arr arrow.Array, f func(i int, s string)) {
	switch classOf(arr.DataType()) {
	case classString:
		eachString(arr, f)
	case classBoolean:
		bs := arr.(*array.Boolean)
		v := validOf(arr)
		for i := range bs.Len() {
			if v.at(i) {
				f(i, strconv.FormatBool(bs.Value(i)))
			}
		}
	default:
		var buf []int64
		v := validOf(arr)
		for i, x := range int64s(arr, &buf) {
			if v.at(i) {
				f(i, strconv.FormatInt(x, 10))
			}
		}
	}
}

// Merge folds other's counts and sample into a. The values listed are
// those of the first rows of both, so the result does not depend on which
// batches each accumulator saw.
func (a *DistributionAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*DistributionAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.N += o.N
	a.Min, a.Max = min(a.Min, o.Min), max(a.Max, o.Max)
	for i := range a.Outside {
		a.Outside[i].merge(o.Outside[i])
	}
	for i := range a.Counts {
		a.Counts[i] += o.Counts[i]
	}
	a.Unlisted += o.Unlisted
	seen := map[string]bool{}
	a.UnlistedValues, a.UnlistedRows = firstByRow(a.UnlistedValues, a.UnlistedRows, o.UnlistedValues, o.UnlistedRows,
		func(s string) bool {
			fresh := !seen[s]
			seen[s] = true
			return fresh
		})
	if o.Sample == nil {
		return nil
	}
	if a.Sample == nil {
		a.Sample = o.Sample
		return nil
	}
	return a.Sample.Merge(o.Sample)
}

// Finish fits, tests and judges; rows are listed only after a second pass.
func (a *DistributionAccumulator) Finish() report.Result {
	return a.finding().result
}

// SecondPass returns the accumulator that lists the rows where the data
// depart from the family, or nil when there are none to list.
func (a *DistributionAccumulator) SecondPass() Accumulator {
	f := a.finding()
	if f.match == nil && f.matchText == nil {
		return nil
	}
	return &distributionLister{check: a.check, found: f, listing: Offenders{Limit: a.check.env.MaxRowsListed}}
}

func (a *DistributionAccumulator) finding() *distFinding {
	if a.found == nil {
		if a.check.categorical() {
			a.found = a.check.analyseCategories(&a.DistributionState)
		} else {
			a.found = a.check.analyse(&a.DistributionState)
		}
	}
	return a.found
}

// distFinding is what Finish learnt: the result without rows, and which
// rows a second pass lists, with their scores.
type distFinding struct {
	result    report.Result
	match     func(x float64) (bool, float64)
	matchText func(s string) (bool, float64)
	// tail, when set, scores the values match accepts in place of the
	// score match gives: a function of the value alone, which each lister
	// computes once per distinct value (scoreMemo).
	tail func(x float64) float64
}

// distributionLister is the second pass of a distribution rule: it lists
// the rows that match the finding.
type distributionLister struct {
	check   *distributionCheck
	found   *distFinding
	listing Offenders
	scratch scratch
	scores  scoreMemo
}

// scoreMemo keeps the tail scores of up to maxScoreMemo distinct values
// (keyed by their bits), so that a value recorded to a few decimals, met
// on many rows, has its CDF and survival computed once; past that many,
// further values are scored each time. The score is a function of the
// value, so the rows listed and their order are the same either way.
type scoreMemo map[uint64]float64

// maxScoreMemo bounds a scoreMemo (about 2 MB).
const maxScoreMemo = 1 << 16

// at returns f(x), from the memo when x was scored before.
func (m *scoreMemo) at(x float64, f func(float64) float64) float64 {
	b := math.Float64bits(x)
	if s, ok := (*m)[b]; ok {
		return s
	}
	s := f(x)
	if *m == nil {
		*m = scoreMemo{}
	}
	if len(*m) < maxScoreMemo {
		(*m)[b] = s
	}
	return s
}

// matchValue reports whether x is listed and its score.
func (l *distributionLister) matchValue(x float64) (bool, float64) {
	hit, score := l.found.match(x)
	if hit && l.found.tail != nil {
		score = l.scores.at(x, l.found.tail)
	}
	return hit, score
}

// Observe lists the batch's rows that match.
func (l *distributionLister) Observe(b *source.Batch) error {
	arr, err := l.check.col.in(b)
	if err != nil {
		return err
	}
	cols := []int{l.check.col.index}
	add := func(i int, hit bool, score float64) {
		if hit {
			l.listing.Add(score, b.Row(i), func() report.Row { return RowAt(l.check.env, b, i, cols) })
		}
	}
	if l.found.matchText != nil {
		eachText(arr, func(i int, s string) {
			hit, score := l.found.matchText(s)
			add(i, hit, score)
		})
		return nil
	}
	v := validOf(arr)
	if l.check.col.class == classNumber {
		for i, x := range float64s(arr, &l.scratch.floats) {
			if v.at(i) {
				hit, score := l.matchValue(x)
				add(i, hit, score)
			}
		}
		return nil
	}
	for i, x := range int64s(arr, &l.scratch.ints) {
		if v.at(i) {
			hit, score := l.matchValue(float64(x))
			add(i, hit, score)
		}
	}
	return nil
}

// Merge adds other's listing to l.
func (l *distributionLister) Merge(other Accumulator) error {
	o, ok := other.(*distributionLister)
	if !ok || o.check != l.check {
		return errMerge(l.check.rule, l, other)
	}
	l.listing.Merge(&o.listing)
	return nil
}

// Finish adds the listed rows to the finding's result.
func (l *distributionLister) Finish() report.Result {
	res := l.found.result
	res.Offending = offending(l.listing.Count, &l.listing)
	return res
}
