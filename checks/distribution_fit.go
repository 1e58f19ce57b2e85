package checks

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"strings"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/gof"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// The analysis of a distribution rule once its first pass is done: the
// fit, the test, the distance, where the data exceed the fit, and the plot
// data. See distributionCheck for what is computed and why.

// analyse fits and tests a numeric family on the first pass's state.
func (c *distributionCheck) analyse(st *DistributionState) *distFinding {
	r := c.rule
	if st.N == 0 {
		return noValues(r)
	}
	var (
		usable  []dist.Family
		skipped []report.Candidate
	)
	for i, f := range c.families {
		if o := st.Outside[i]; o.Count > 0 {
			e := &dist.SupportError{Family: f.String(), Need: c.needs[i], Count: int(o.Count), N: int(st.N), Values: o.Values}
			skipped = append(skipped, skippedCandidate(f.Name(), e.Error()))
			continue
		}
		usable = append(usable, f)
	}
	if len(usable) == 0 {
		return c.outsideSupport(st, skipped)
	}
	s, err := gof.SortInPlace(st.Sample.Values(0))
	if err != nil {
		return &distFinding{result: Failed(r, err)}
	}
	fits := dist.Rank(s.Values(), usable)
	best := fits[0]
	if best.Err != nil {
		if len(fits) == 1 {
			return &distFinding{result: Failed(r, best.Err)}
		}
		return &distFinding{result: Failed(r, fmt.Errorf("no candidate family could be fitted; %s: %w", best.Family.Name(), best.Err))}
	}
	ft := &fitting{check: c, st: st, sorted: s, best: best}
	if err := ft.test(); err != nil {
		return &distFinding{result: Failed(r, fmt.Errorf("%s: %w", ft.testName(), err))}
	}
	return ft.finding(fits, skipped)
}

// noValues is the finding on an empty column: the measure is undefined,
// which fails the rule.
func noValues(r *rules.Rule) *distFinding {
	res := NewResult(r, math.NaN())
	res.Message = "the column has no values"
	return &distFinding{result: res}
}

// skippedCandidate reports a family that could not be fitted.
func skippedCandidate(family, why string) report.Candidate {
	nan := report.Number(math.NaN())
	return report.Candidate{Family: family, LogLik: nan, AIC: nan, BIC: nan, Skipped: why}
}

// outsideSupport is the finding when no candidate can produce the data:
// the rule fails, its measure undefined, and the second pass lists the
// values outside the first candidate's support.
func (c *distributionCheck) outsideSupport(st *DistributionState, skipped []report.Candidate) *distFinding {
	res := NewResult(c.rule, math.NaN())
	res.Message = skipped[0].Skipped
	if len(skipped) > 1 {
		res.Message = "no candidate family can produce the data: " + res.Message
	}
	res.Fit = &report.Fit{
		Family: c.families[0].Name(), N: st.N, Seed: c.spec.Seed, Test: string(c.spec.Test),
		Distance: report.Number(math.NaN()), Candidates: skipped,
	}
	in := c.inside[0]
	return &distFinding{result: res, match: func(x float64) (bool, float64) { return !in.Contains(x), 1 }}
}

// fitting is one numeric analysis in progress.
type fitting struct {
	check  *distributionCheck
	st     *DistributionState
	sorted gof.Sorted
	best   dist.Fit
	grid   *gof.Resolution // the resolution compared at, if any
	res    gof.Result      // the test's result
	df     int             // chi-square degrees of freedom
	dist   float64         // the distance measure
	cells  []cell          // the partition regions are found on
	note   string          // how the test's sample differs from the fit's
	// atGrid is the KS test at the grid against the best fit, once made;
	// effectAtBest says that the test's effect (Result.Effect) is the KS
	// distance to the best fit itself, as gof.Specified and gof.Estimated
	// compute it, so that it need not be computed again.
	atGrid       *gof.Result
	effectAtBest bool
}

// cell is one cell of the partition regions are looked for in: values in
// (lo, hi] for continuous families, whole numbers lo..hi for discrete ones,
// or a label. expected is its probability under the fitted family.
type cell struct {
	lo, hi   float64
	label    string
	observed int64
	expected float64
}

// testName names the rule's test.
func (ft *fitting) testName() string { return string(ft.check.spec.Test) }

// test runs the rule's test on the best fit and computes the distance.
func (ft *fitting) test() error {
	c := ft.check
	fam := ft.best.Family
	if fam.Digits() > 0 {
		return ft.benford()
	}
	if fam.Kind() == dist.Discrete {
		obs, probs, lo, err := gof.IntegerCells(ft.sorted, ft.best.Dist)
		if err != nil {
			return err
		}
		for i := range obs {
			k := float64(lo) + float64(i)
			ft.cells = append(ft.cells, cell{lo: k, hi: k, observed: obs[i], expected: probs[i]})
		}
		return ft.chiSquare(obs, probs)
	}
	if err := ft.resolution(); err != nil {
		return err
	}
	edges := ft.binEdges()
	obs, probs, err := gof.BinCells(ft.sorted, ft.best.Dist, edges)
	if err != nil {
		return err
	}
	for i := range obs {
		lo, hi := math.Inf(-1), math.Inf(1)
		if i > 0 {
			lo = edges[i-1]
		}
		if i < len(edges) {
			hi = edges[i]
		}
		ft.cells = append(ft.cells, cell{lo: lo, hi: hi, observed: obs[i], expected: probs[i]})
	}
	if c.spec.Test == rules.TestChiSquare {
		return ft.chiSquare(obs, probs)
	}
	if ft.grid != nil {
		at, err := gof.KSAtResolution(ft.sorted, ft.best.Dist, *ft.grid)
		if err != nil {
			return err
		}
		ft.atGrid = &at
		ft.dist = at.Statistic.Value
		return ft.edf()
	}
	if err := ft.edf(); err != nil {
		return err
	}
	if ft.effectAtBest {
		ft.dist = ft.res.Effect.Value
	} else {
		ft.dist = gof.Distance(ft.sorted, ft.best.Dist).D
	}
	return nil
}

// chiSquare tests counts against cell probabilities; the distance is the
// total variation distance.
func (ft *fitting) chiSquare(obs []int64, probs []float64) error {
	var err error
	ft.res, ft.df, ft.dist, ft.note, err = chiSquare(obs, probs, ft.best.K, ft.check.spec.Measure)
	return err
}

// chiSquare runs Pearson's test of counts against cell probabilities, k
// parameters estimated, and gives the total variation distance. When the
// test cannot run (too few values to leave a degree of freedom after
// pooling) and the rule judges the distance, the distance is still given,
// the p-value is NaN, and note says why.
func chiSquare(obs []int64, probs []float64, k int, m rules.DistMeasure) (gof.Result, int, float64, string, error) {
	cs, err := gof.ChiSquare(obs, probs, gof.ChiSquareOptions{Estimated: k})
	if err == nil {
		return cs.Result, cs.DF, cs.Effect.Value, "", nil
	}
	if m == rules.MeasurePValue {
		return gof.Result{}, 0, 0, "", err
	}
	var n int64
	for _, o := range obs {
		n += o
	}
	var tv float64
	for i, o := range obs {
		tv += math.Abs(float64(o)/float64(n) - probs[i])
	}
	nan := math.NaN()
	res := gof.Result{Test: gof.ChiSq, Statistic: gof.Statistic{Name: "X2", Value: nan}, PValue: nan, N: int(n)}
	return res, 0, tv / 2, "chi-square could not run: " + err.Error(), nil
}

// benford tests the leading digits of the sample against Benford's law.
func (ft *fitting) benford() error {
	k := ft.best.Family.Digits()
	lo, hi := 1, 9
	if k == 2 {
		lo, hi = 10, 99
	}
	obs := make([]int64, hi-lo+1)
	for _, v := range ft.sorted.Values() {
		d, ok := dist.LeadingDigits(v, k)
		if !ok {
			return fmt.Errorf("value %v has no leading digits", v)
		}
		obs[d-lo]++
	}
	probs := make([]float64, len(obs))
	for i := range obs {
		probs[i] = ft.best.Dist.Prob(float64(lo + i))
		ft.cells = append(ft.cells, cell{lo: float64(lo + i), hi: float64(lo + i), label: strconv.Itoa(lo + i),
			observed: obs[i], expected: probs[i]})
	}
	return ft.chiSquare(obs, probs)
}

// resolution finds the grid the values are compared on: the step given,
// or the one detected; none when the rule says none or the values are not
// on a grid.
func (ft *fitting) resolution() error {
	spec := ft.check.spec
	switch {
	case spec.AutoResolution:
		if g, ok := gof.DetectResolution(ft.sorted); ok {
			ft.grid = &g
		}
	case spec.Resolution > 0:
		h := spec.Resolution
		x0 := ft.sorted.Values()[0]
		g := gof.Resolution{Step: h, Origin: x0 - h*math.Round(x0/h)}
		if math.Abs(g.Origin) < 1e-9*h {
			g.Origin = 0
		}
		ft.grid = &g
	}
	return nil
}

// binsFor is the number of equal-probability bins for n values: about ten
// values a bin, from 4 to 20 bins (own choice; with 20 bins and the
// chi-square rule of at least 5 expected values a bin, from 100 values on
// no cell is pooled).
func binsFor(n int) int { return min(20, max(4, n/10)) }

// binEdges returns the inner edges of binsFor(n) bins of equal probability
// under the fitted family, moved to the nearest cell boundary when values
// are compared at a resolution, so that rounding cannot carry a value
// across an edge.
func (ft *fitting) binEdges() []float64 {
	k := binsFor(ft.sorted.Len())
	var edges []float64
	for j := 1; j < k; j++ {
		e := ft.best.Dist.Quantile(float64(j) / float64(k))
		if g := ft.grid; g != nil {
			e = g.Origin + (math.Floor((e-g.Origin)/g.Step)+0.5)*g.Step
		}
		if math.IsNaN(e) || math.IsInf(e, 0) || (len(edges) > 0 && !(e > edges[len(edges)-1])) {
			continue
		}
		edges = append(edges, e)
	}
	return edges
}

// edf runs the KS, AD, CvM or Shapiro-Wilk test of the continuous fit.
func (ft *fitting) edf() error {
	c := ft.check
	t := map[rules.DistTest]gof.Test{rules.TestKS: gof.KS, rules.TestAD: gof.AD, rules.TestCvM: gof.CvM, rules.TestSW: gof.SW}[c.spec.Test]
	n := ft.sorted.Len()
	boot := gof.Resampling{B: c.replicates, Seed: c.spec.Seed}
	fam, d := ft.best.Family, ft.best.Dist
	var err error
	switch {
	case t == gof.SW:
		s := ft.sorted
		if n > shapiroMax {
			s, err = subsample(s, shapiroMax, c.spec.Seed)
			if err != nil {
				return err
			}
			ft.note = fmt.Sprintf("on a seeded sample of %s of the values (the most Royston's approximation covers)", thousands(shapiroMax))
		}
		ft.res, err = gof.ShapiroWilk(s)
	case ft.best.K == 0 && ft.grid != nil:
		ft.res, err = ft.ksAtGrid()
	case ft.best.K == 0:
		ft.res, err = gof.Specified(t, ft.sorted, d)
		ft.effectAtBest = true
	case ft.grid != nil && n <= c.bootstrapMax:
		ft.res, err = ft.bootstrapAtResolution(boot)
	case ft.grid != nil:
		ft.res, err = ft.ksAtGrid()
		ft.res.Method.Source += "; parameters estimated from the data, so the p-value is an upper bound"
	case fam.Name() == "normal" && (t != gof.KS || n <= c.bootstrapMax):
		ft.res, err = gof.Normal(t, ft.sorted, boot)
	case fam.Name() == "exponential" && (t == gof.AD || n <= c.bootstrapMax):
		ft.res, err = gof.Exponential(t, ft.sorted, boot)
	case n <= c.bootstrapMax:
		ft.res, err = gof.Estimated(t, ft.sorted, d, refit(fam), boot)
		ft.effectAtBest = true
	default:
		ft.res, err = gof.Specified(t, ft.sorted, d)
		ft.effectAtBest = true
		ft.res.Method.Conservative = true
		ft.res.Method.Source += fmt.Sprintf("; parameters estimated from the data, so the p-value is an upper bound (a bootstrap runs on at most %s values)", thousands(int64(c.bootstrapMax)))
	}
	return err
}

// ksAtGrid is the KS test at the grid against the best fit, computed once.
func (ft *fitting) ksAtGrid() (gof.Result, error) {
	if ft.atGrid == nil {
		at, err := gof.KSAtResolution(ft.sorted, ft.best.Dist, *ft.grid)
		if err != nil {
			return gof.Result{}, err
		}
		ft.atGrid = &at
	}
	return *ft.atGrid, nil
}

// refit is the estimator of family f for a bootstrap.
func refit(f dist.Family) gof.Refit {
	return func(sorted []float64) (gof.Fitted, error) {
		fit, err := f.Fit(sorted)
		if err != nil {
			return nil, err
		}
		return fit.Dist, nil
	}
}

// bootstrapAtResolution is the p-value of the KS distance at the cell
// boundaries of the grid, D_h (gof.KSAtResolution), with parameters
// estimated: a parametric bootstrap (Stute, Gonzáles Manteiga & Presedo
// Quindimil 1993) of the rounded family. Replicate b draws n values from
// the fitted family with its own generator (PCG seeded with the rule's
// seed and b, as gof.BootstrapPValue does), rounds them to the grid,
// refits, and computes D*_h against the refitted family;
// p = (1 + #{b : D*_h >= D_h}) / (B + 1). A draw that rounds to a value
// the family cannot produce (0 for a Weibull) is drawn again, as the data,
// which passed the support test, were in effect: the replicates follow the
// rounded family given that it stays in the support.
func (ft *fitting) bootstrapAtResolution(r gof.Resampling) (gof.Result, error) {
	g := *ft.grid
	res, err := ft.ksAtGrid()
	if err != nil {
		return gof.Result{}, err
	}
	n, b := ft.sorted.Len(), r.B
	if b <= 0 {
		b = gof.DefaultB
	}
	fit := refit(ft.best.Family)
	in, need := ft.best.Family.InSupport()
	round := func(v float64) float64 { return g.Origin + g.Step*math.Round((v-g.Origin)/g.Step) }
	buf := make([]float64, n)
	exceed := 0
	for i := range b {
		rng := rand.New(rand.NewPCG(r.Seed, uint64(i+1)))
		ft.best.Dist.Draw(rng, buf)
		for j, v := range buf {
			buf[j] = round(v)
			for k := 0; !in(buf[j]); k++ {
				if k == maxRedraws {
					return gof.Result{}, fmt.Errorf("bootstrap: draws from %s rounded to %v keep falling outside %s", ft.best.Dist, g.Step, need)
				}
				buf[j] = round(ft.best.Dist.Rand(rng))
			}
		}
		s, err := gof.SortInPlace(buf)
		if err != nil {
			return gof.Result{}, fmt.Errorf("bootstrap replicate %d of %d: %w", i+1, b, err)
		}
		ref, err := fit(s.Values())
		if err != nil {
			return gof.Result{}, fmt.Errorf("bootstrap replicate %d of %d: %w", i+1, b, err)
		}
		rep, err := gof.KSAtResolution(s, ref, g)
		if err != nil {
			return gof.Result{}, fmt.Errorf("bootstrap replicate %d of %d: %w", i+1, b, err)
		}
		if rep.Statistic.Value >= res.Statistic.Value {
			exceed++
		}
	}
	res.PValue = float64(1+exceed) / float64(b+1)
	res.Method = gof.Method{Kind: gof.Bootstrap, B: b, Seed: r.Seed,
		Source: fmt.Sprintf("parametric bootstrap of the KS distance at cell boundaries of step %v, draws rounded to the step", g.Step)}
	return res, nil
}

// subsample returns a seeded uniform sample of k of s's values, sorted.
func subsample(s gof.Sorted, k int, seed uint64) (gof.Sorted, error) {
	x := slices.Clone(s.Values())
	rng := rand.New(rand.NewPCG(seed, 0x73756273616d706c))
	for i := range k {
		j := i + rng.IntN(len(x)-i)
		x[i], x[j] = x[j], x[i]
	}
	return gof.SortInPlace(x[:k])
}

// finding makes the result of a numeric fit.
func (ft *fitting) finding(fits []dist.Fit, skipped []report.Candidate) *distFinding {
	c, st, best := ft.check, ft.st, ft.best
	measure := ft.dist
	if c.spec.Measure == rules.MeasurePValue {
		measure = ft.res.PValue
	}
	res := NewResult(c.rule, measure)
	res.Statistic, res.PValue = testReport(ft.res)
	res.Estimates = best.Dist.Params()
	n := int64(ft.sorted.Len())
	fit := &report.Fit{
		Family:     best.Family.Name(),
		Estimated:  best.K,
		N:          st.N,
		Sampled:    n < st.N,
		SampleSize: n,
		Seed:       c.spec.Seed,
		Test:       string(c.spec.Test),
		Method:     testMethod(ft.res.Method, ft.note),
		DF:         ft.df,
		Distance:   report.Number(ft.dist),
	}
	if ft.grid != nil {
		h := report.Number(ft.grid.Step)
		fit.Resolution = &h
	}
	for _, f := range fits {
		if f.Err != nil {
			fit.Candidates = append(fit.Candidates, skippedCandidate(f.Family.Name(), f.Err.Error()))
			continue
		}
		fit.Candidates = append(fit.Candidates, report.Candidate{Family: f.Family.Name(), Estimates: f.Dist.Params(),
			LogLik: report.Number(f.LogLik), AIC: report.Number(f.AIC), BIC: report.Number(f.BIC)})
	}
	fit.Candidates = append(fit.Candidates, skipped...)
	if best.Family.Digits() > 0 {
		for _, cl := range ft.cells {
			fit.Cells = append(fit.Cells, report.Cell{Label: cl.label, Count: cl.observed, Expected: report.Number(cl.expected)})
		}
	} else {
		fit.QQ = qqPlot(ft.sorted, best.Dist)
		fit.Histogram = histogram(ft.sorted, best.Dist, best.Family.Kind() == dist.Discrete)
	}
	res.Fit = fit
	res.Message = ft.message()
	f := &distFinding{result: res}
	if res.Verdict == report.Pass {
		return f
	}
	regions := excessRegions(ft.cells, n)
	for _, g := range regions {
		res.Fit.Regions = append(res.Fit.Regions, g.report(n))
	}
	f.result = res
	switch {
	case best.Family.Digits() > 0:
		k := best.Family.Digits()
		f.match = func(x float64) (bool, float64) {
			d, ok := dist.LeadingDigits(x, k)
			for _, g := range regions {
				if ok && float64(d) >= g.lo && float64(d) <= g.hi {
					return true, g.excess(n)
				}
			}
			return false, 0
		}
	case len(regions) > 0:
		discrete := best.Family.Kind() == dist.Discrete
		d := best.Dist
		f.match = func(x float64) (bool, float64) {
			for _, g := range regions {
				if g.holds(x, discrete) {
					return true, 0
				}
			}
			return false, 0
		}
		f.tail = func(x float64) float64 { return tailScore(d, x, discrete) }
	}
	return f
}

// message says in a sentence what the rule found.
func (ft *fitting) message() string {
	c := ft.check
	what := "KS distance"
	if c.spec.Test == rules.TestChiSquare {
		what = "TV distance"
	}
	of := thousands(int64(ft.sorted.Len())) + " values"
	if int64(ft.sorted.Len()) < ft.st.N {
		of = fmt.Sprintf("a sample of %s of %s values", thousands(int64(ft.sorted.Len())), thousands(ft.st.N))
	}
	how := "fitted"
	switch {
	case ft.best.K == 0:
		how = "given"
	case ft.best.K < len(ft.best.Family.Params()):
		how = "partly given"
	}
	msg := fmt.Sprintf("%s %s between %s and %s (%s); %s", what, sig(ft.dist), of, distText(ft.best.Dist), how,
		pText(c.spec.Test, ft.res, ft.note))
	if ft.grid != nil {
		msg += fmt.Sprintf("; compared at resolution %v", ft.grid.Step)
	}
	return msg
}

// distText writes a distribution with its parameters to four significant
// digits: lognormal(meanlog=1.02, sdlog=0.4987).
func distText(d dist.Dist) string {
	f := d.Family()
	var parts []string
	for _, q := range f.Params() {
		parts = append(parts, q.Name+"="+sig(d.Param(q.Name)))
	}
	if len(parts) == 0 {
		return f.Name()
	}
	return f.Name() + "(" + strings.Join(parts, ", ") + ")"
}

// sig writes v with four significant digits.
func sig(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// testReport writes a test's statistic and p-value for the report; none
// when the test did not run.
func testReport(r gof.Result) (*report.Statistic, *float64) {
	if math.IsNaN(r.PValue) {
		return nil, nil
	}
	p := r.PValue
	return &report.Statistic{Name: r.Statistic.Name, Value: report.Number(r.Statistic.Value), N: int64(r.N)}, &p
}

// pText writes a test's p-value for a message, or why there is none.
func pText(test rules.DistTest, r gof.Result, note string) string {
	if math.IsNaN(r.PValue) {
		return "no p-value (" + note + ")"
	}
	return fmt.Sprintf("%s p-value %s", test, sig(r.PValue))
}

// testMethod writes how a p-value was obtained for the report.
func testMethod(m gof.Method, note string) report.TestMethod {
	src := m.Source
	if note != "" && src != "" {
		src += "; " + note
	} else if note != "" {
		src = note
	}
	kind := "none"
	if m.Kind != 0 {
		kind = m.Kind.String()
	}
	out := report.TestMethod{Kind: kind, Source: src, Conservative: m.Conservative}
	if m.Kind == gof.Bootstrap {
		out.Replicates = m.B
	}
	return out
}

// tailScore is −log10 of the two-sided tail probability of x under d,
// min(1, 2 min(P(X <= x), P(X >= x))); for a discrete family P(X >= x) is
// the survival beyond x − 1. A value the family cannot produce scores
// +Inf.
func tailScore(d dist.Dist, x float64, discrete bool) float64 {
	lower := d.CDF(x)
	upper := d.Survival(x)
	if discrete {
		upper = d.Survival(x - 1)
	}
	p := min(1, 2*min(lower, upper))
	if p <= 0 {
		return math.Inf(1)
	}
	return -math.Log10(p)
}

// region is a run of adjacent cells whose observed share exceeds the
// expected one.
type region struct {
	lo, hi   float64
	label    string
	observed int64
	expected float64
}

// excess is the region's observed share minus its expected share, of n
// values.
func (g region) excess(n int64) float64 { return float64(g.observed)/float64(n) - g.expected }

// holds reports whether x lies in the region: lo < x <= hi for continuous
// families, lo <= x <= hi for discrete ones.
func (g region) holds(x float64, discrete bool) bool {
	if discrete {
		return x >= g.lo && x <= g.hi
	}
	return x > g.lo && x <= g.hi
}

// report writes the region for the report; infinite ends are left out.
func (g region) report(n int64) report.Region {
	out := report.Region{Label: g.label, Count: g.observed, Observed: report.Number(float64(g.observed) / float64(n)),
		Expected: report.Number(g.expected)}
	if g.label == "" {
		if !math.IsInf(g.lo, 0) {
			lo := report.Number(g.lo)
			out.Lo = &lo
		}
		if !math.IsInf(g.hi, 0) {
			hi := report.Number(g.hi)
			out.Hi = &hi
		}
	}
	return out
}

// excessRegions merges runs of adjacent cells whose observed share of n
// exceeds their expected share, and returns the maxRegions runs of largest
// excess, largest first. Labelled cells (categories, digits) are not
// merged.
func excessRegions(cells []cell, n int64) []region {
	var out []region
	open := false
	for _, c := range cells {
		if float64(c.observed)/float64(n) <= c.expected {
			open = false
			continue
		}
		if open && c.label == "" {
			g := &out[len(out)-1]
			g.hi, g.observed, g.expected = c.hi, g.observed+c.observed, g.expected+c.expected
			continue
		}
		out = append(out, region{lo: c.lo, hi: c.hi, label: c.label, observed: c.observed, expected: c.expected})
		open = true
	}
	slices.SortStableFunc(out, func(a, b region) int {
		ea, eb := a.excess(n), b.excess(n)
		switch {
		case ea > eb:
			return -1
		case ea < eb:
			return 1
		}
		return 0
	})
	return out[:min(len(out), maxRegions)]
}

// qqPlot returns up to maxQQ quantile pairs: at p = (i + 1/2)/m the
// sample's order statistic x_(ceil(p n)) and the fitted quantile.
func qqPlot(s gof.Sorted, d dist.Dist) *report.QQ {
	x := s.Values()
	m := min(maxQQ, len(x))
	q := &report.QQ{Fitted: make([]report.Number, m), Sample: make([]report.Number, m)}
	for i := range m {
		p := (float64(i) + 0.5) / float64(m)
		k := min(len(x)-1, max(0, int(math.Ceil(p*float64(len(x))))-1))
		q.Sample[i] = report.Number(x[k])
		q.Fitted[i] = report.Number(d.Quantile(p))
	}
	return q
}

// histogram counts the sample in equal-width bins over its range, with the
// fitted density. Continuous families get ceil((2n)^(1/3)) bins, from 5 to
// 50 (Terrell & Scott 1985, "Oversmoothed nonparametric density
// estimates", JASA 80:209-214, the fewest bins that show the shape);
// discrete families a bin per whole number, or bins of several whole
// numbers when there are more than 50.
func histogram(s gof.Sorted, d dist.Dist, discrete bool) *report.Histogram {
	x := s.Values()
	lo, hi := x[0], x[len(x)-1]
	var edges []float64
	if discrete {
		width := math.Max(1, math.Ceil((hi-lo+1)/50))
		for e := lo - 0.5; ; e += width {
			edges = append(edges, e)
			if e > hi {
				break
			}
		}
	} else {
		k := min(50, max(5, int(math.Ceil(math.Cbrt(2*float64(len(x)))))))
		if hi == lo {
			k = 1
		}
		for j := 0; j <= k; j++ {
			edges = append(edges, lo+(hi-lo)*float64(j)/float64(k))
		}
		edges[k] = hi
	}
	h := &report.Histogram{Counts: make([]int64, len(edges)-1), Density: make([]report.Number, len(edges)-1)}
	for _, e := range edges {
		h.Edges = append(h.Edges, report.Number(e))
	}
	j := 0
	for _, v := range x {
		for j < len(h.Counts)-1 && v >= edges[j+1] {
			j++
		}
		h.Counts[j]++
	}
	for i := range h.Counts {
		a, b := edges[i], edges[i+1]
		if discrete {
			h.Density[i] = report.Number((d.CDF(b) - d.CDF(a)) / (b - a))
		} else {
			h.Density[i] = report.Number(d.Prob((a + b) / 2))
		}
	}
	return h
}

// analyseCategories tests a categorical rule's counts against its shares.
func (c *distributionCheck) analyseCategories(st *DistributionState) *distFinding {
	r := c.rule
	if st.N == 0 {
		return noValues(r)
	}
	probs := c.shares.Probs()
	labels := c.shares.Labels()
	fit := &report.Fit{Family: "categorical", N: st.N, SampleSize: st.N, Seed: c.spec.Seed, Test: string(c.spec.Test)}
	for i, l := range labels {
		fit.Cells = append(fit.Cells, report.Cell{Label: l, Count: st.Counts[i], Expected: report.Number(probs[i])})
	}
	if st.Unlisted > 0 {
		quoted := make([]string, len(st.UnlistedValues))
		for i, s := range st.UnlistedValues {
			quoted[i] = strconv.Quote(s)
		}
		lead := ":"
		if st.Unlisted > int64(len(st.UnlistedValues)) {
			lead = ", among them"
		}
		why := fmt.Sprintf("categorical needs one of the listed categories, but %s of %s values are not%s %s",
			thousands(st.Unlisted), thousands(st.N), lead, strings.Join(quoted, ", "))
		res := NewResult(r, math.NaN())
		res.Message = why
		fit.Distance = report.Number(math.NaN())
		fit.Candidates = []report.Candidate{skippedCandidate("categorical", why)}
		res.Fit = fit
		return &distFinding{result: res, matchText: func(s string) (bool, float64) {
			_, listed := c.category[s]
			return !listed, 1
		}}
	}
	cs, df, tv, note, err := chiSquare(st.Counts, probs, 0, c.spec.Measure)
	if err != nil {
		return &distFinding{result: Failed(r, fmt.Errorf("chi-square: %w", err))}
	}
	measure := tv
	if c.spec.Measure == rules.MeasurePValue {
		measure = cs.PValue
	}
	res := NewResult(r, measure)
	res.Statistic, res.PValue = testReport(cs)
	res.Estimates = map[string]float64{}
	counts := make([]float64, len(st.Counts))
	for i, l := range labels {
		res.Estimates[l] = probs[i]
		counts[i] = float64(st.Counts[i])
	}
	ll := c.shares.LogLik(counts)
	fit.Method = testMethod(cs.Method, note)
	fit.DF = df
	fit.Distance = report.Number(tv)
	fit.Candidates = []report.Candidate{{Family: "categorical", Estimates: res.Estimates, LogLik: report.Number(ll),
		AIC: report.Number(-2 * ll), BIC: report.Number(-2 * ll)}}
	res.Fit = fit
	res.Message = fmt.Sprintf("TV distance %s between %s values and the expected shares; %s",
		sig(tv), thousands(st.N), pText(c.spec.Test, cs, note))
	f := &distFinding{result: res}
	if res.Verdict == report.Pass {
		return f
	}
	var cells []cell
	for i, l := range labels {
		cells = append(cells, cell{label: l, observed: st.Counts[i], expected: probs[i]})
	}
	regions := excessRegions(cells, st.N)
	scores := map[string]float64{}
	for _, g := range regions {
		res.Fit.Regions = append(res.Fit.Regions, g.report(st.N))
		scores[g.label] = g.excess(st.N)
	}
	f.result = res
	if len(regions) > 0 {
		f.matchText = func(s string) (bool, float64) {
			score, ok := scores[s]
			return ok, score
		}
	}
	return f
}
