package checks

import (
	"fmt"
	"iter"
	"math"
	"slices"
	"strings"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/checks/outlier"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// The analysis of an extremes rule once its first pass is done, and its
// second pass. See extremesCheck for what is computed and why.

// extFinding is what an extremes rule learnt from its first pass: the
// fitted method, how many values it flags (when known), and how to
// recognise them in the second pass.
type extFinding struct {
	n            int64 // values judged
	count        int64 // values flagged; -1 until the second pass counts them
	below, above int64 // values flagged on each side, when count is known
	fitted       string
	skipped      string // why the method cannot run on these values
	err          error
	ext          report.Extremes
	estimates    map[string]float64
	statistic    *report.Statistic
	pValue       *float64
	notes        []string
	// match says whether the value x at data row row is extreme, and its
	// score; low says whether a flagged finite value lies on the low side.
	match func(x float64, row int64) (bool, float64)
	low   func(x float64) bool
	// calmLo and calmHi bound finite values match does not flag, so that
	// the second pass need not ask it about them: empty (calmLo > calmHi)
	// unless the method's rule is a threshold whose Outside is monotone in
	// the distance from the center, and neither bound is outside. Any
	// value between them then lies between the center and a bound on its
	// side, and is not outside either.
	calmLo, calmHi float64
}

// minValues is the fewest finite values each method can be fitted on.
var minValues = map[rules.ExtremesMethod]int64{
	rules.ExtremesTukey: 1, rules.ExtremesRobustZ: 1, rules.ExtremesTail: 1,
	rules.ExtremesZScore: 2, rules.ExtremesESD: 3, rules.ExtremesGrubbs: 3,
}

// scoreNames say what an offending row's score is, per method.
var scoreNames = map[rules.ExtremesMethod]string{
	rules.ExtremesTukey:   "distance beyond the nearer fence, in IQRs",
	rules.ExtremesZScore:  "|z|",
	rules.ExtremesRobustZ: "modified z-score |M|",
	rules.ExtremesESD:     "R, the studentized deviation when the test removed the value",
	rules.ExtremesGrubbs:  "Grubbs' G",
	rules.ExtremesTail:    "normal deviate of the tail probability",
}

// analyse fits the rule's method to the first pass's state.
func (c *extremesCheck) analyse(st *ExtremesState) *extFinding {
	m := c.spec.Method
	fin := st.finite()
	infs := st.NegInf + st.PosInf
	f := &extFinding{n: fin + infs, count: infs, below: st.NegInf, above: st.PosInf, calmLo: math.Inf(1), calmHi: math.Inf(-1)}
	f.ext = report.Extremes{Method: string(m), N: f.n, NaN: st.NaN, Score: scoreNames[m],
		Center: report.Number(math.NaN()), Scale: report.Number(math.NaN())}
	if st.NaN > 0 {
		f.notes = append(f.notes, fmt.Sprintf("%s NaN values not judged", thousands(st.NaN)))
	}
	if infs > 0 {
		f.notes = append(f.notes, fmt.Sprintf("%s infinite values, extreme whatever the method", thousands(infs)))
	}
	switch {
	case f.n == 0:
		f.fitted = "the column has no values"
		return f
	case fin < minValues[m]:
		f.skipped = fmt.Sprintf("%s needs at least %d finite values, the column has %d", m, minValues[m], fin)
		return f
	case m == rules.ExtremesZScore:
		c.zscore(st, f)
		return f
	}
	if m == rules.ExtremesTukey || m == rules.ExtremesRobustZ {
		c.byThreshold(st, f)
		return f
	}
	values := st.Values.Flatten()
	// The tail fit and the tests work on the sorted values (sorted by
	// radix, order.SortFloat64); the tests name values by their position,
	// so they are given the values as kept.
	sorted := values
	if c.keepsRows() {
		sorted = slices.Clone(values)
	}
	order.SortFloat64(sorted)
	switch m {
	case rules.ExtremesTail:
		c.tail(sorted, f)
	case rules.ExtremesESD:
		c.esd(values, st.Rows.Flatten(), sorted, f)
	case rules.ExtremesGrubbs:
		c.grubbs(values, st.Rows.Flatten(), sorted, f)
	}
	return f
}

// byThreshold fits Tukey's fences or the modified z-score without
// sorting or copying the values: the quartiles and the median are order
// statistics found by radix selection over the kept parts (order.Chunks'
// Quantiles7, R's type 7, as sorting would give them), the MAD the median
// of the deviations from the median, found the same way with each
// deviation computed as it is read (order.DeviationQuantiles7); the
// values flagged are counted in one pass over the parts.
func (c *extremesCheck) byThreshold(st *ExtremesState, f *extFinding) {
	q := st.Tally.Quantiles7(0.25, 0.5, 0.75)
	var r outlier.Rule
	switch c.spec.Method {
	case rules.ExtremesTukey:
		fences := outlier.NewFences(q[0], q[2], c.spec.K) // k > 0 and finite: newExtremesCheck
		f.estimates = map[string]float64{"q1": fences.Q1, "q3": fences.Q3, "iqr": fences.IQR(), "k": c.spec.K,
			"lower": fences.Lower, "upper": fences.Upper}
		f.fitted = fmt.Sprintf("beyond Tukey's fences [%s, %s] (Q1 %s, Q3 %s, k = %s)", sig(fences.Lower), sig(fences.Upper),
			sig(fences.Q1), sig(fences.Q3), number(c.spec.K))
		f.setScale(q[1], fences.IQR(), fences.Lower, fences.Upper)
		r = fences
	case rules.ExtremesRobustZ:
		rz := outlier.RobustZ{Median: q[1], MAD: order.DeviationQuantiles7Tally(&st.Tally, q[1], 0.5)[0], Cutoff: c.spec.K}
		// |M| > k exactly when x lies beyond median ± k MAD / 0.6745.
		half := c.spec.K * rz.MAD / 0.6745
		f.estimates = map[string]float64{"median": rz.Median, "mad": rz.MAD, "k": c.spec.K,
			"lower": rz.Median - half, "upper": rz.Median + half}
		f.fitted = fmt.Sprintf("with a modified z-score beyond %s (median %s, MAD %s)", number(c.spec.K), sig(rz.Median), sig(rz.MAD))
		f.setScale(rz.Median, rz.MAD, rz.Median-half, rz.Median+half)
		r = rz
	}
	// The values flagged below the center are the least ones and those
	// flagged above it the greatest (each threshold lies beyond the
	// center, on its side, and Outside is monotone in the distance from
	// it), so the least and greatest values not flagged are the order
	// statistics sorting would put at the whiskers.
	var (
		lo, hi           int64
		whiskLo, whiskHi = math.Inf(1), math.Inf(-1)
	)
	for x, n := range st.Tally.All() {
		switch {
		case !r.Outside(x):
			whiskLo, whiskHi = min(whiskLo, x), max(whiskHi, x)
		case f.low(x):
			lo += n
		default:
			hi += n
		}
	}
	box := &report.Box{Min: report.Number(st.Min), Q1: report.Number(q[0]), Median: report.Number(q[1]),
		Q3: report.Number(q[2]), Max: report.Number(st.Max), WhiskerLo: report.Number(whiskLo), WhiskerHi: report.Number(whiskHi)}
	if lo+hi == st.Tally.Len() {
		box.WhiskerLo, box.WhiskerHi = report.Number(math.NaN()), report.Number(math.NaN())
	}
	f.calmLo, f.calmHi = whiskLo, whiskHi
	f.settle(lo, hi, box, valueHistogram(st.Tally.All(), st.Min, st.Max, nil), func(x float64, _ int64) (bool, float64) {
		return r.Outside(x), r.Score(x)
	})
}

// setScale records the center, scale and thresholds of a finding; values
// below the center lie on the low side.
func (f *extFinding) setScale(center, scale, lower, upper float64) {
	f.ext.Center, f.ext.Scale = report.Number(center), report.Number(scale)
	f.ext.Lower, f.ext.Upper = numberPtr(lower), numberPtr(upper)
	f.low = func(x float64) bool { return x < center }
}

// numberPtr is v for a report field that is absent when v is not finite.
func numberPtr(v float64) *report.Number {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	n := report.Number(v)
	return &n
}

// flagByRule counts the sorted finite values a threshold rule flags, and
// makes the plot data and the second pass's match. density, if not nil,
// is the fitted density a histogram shows.
func (f *extFinding) flagByRule(r outlier.Rule, sorted []float64, density func(a, b float64) float64) {
	var lo, hi int64
	for _, x := range sorted {
		if r.Outside(x) {
			if f.low(x) {
				lo++
			} else {
				hi++
			}
		}
	}
	f.settleSorted(sorted, lo, hi, density, func(x float64, _ int64) (bool, float64) { return r.Outside(x), r.Score(x) })
}

// settleSorted records that the lo smallest and hi largest of the sorted
// finite values are extreme, with their box plot and histogram (density
// as in flagByRule), and makes the second pass's match from hit.
func (f *extFinding) settleSorted(sorted []float64, lo, hi int64, density func(a, b float64) float64, hit func(x float64, row int64) (bool, float64)) {
	n := int64(len(sorted))
	nan := report.Number(math.NaN())
	box := &report.Box{Min: report.Number(sorted[0]), Q1: report.Number(outlier.Quantile7(sorted, 0.25)),
		Median: report.Number(outlier.Quantile7(sorted, 0.5)), Q3: report.Number(outlier.Quantile7(sorted, 0.75)),
		Max: report.Number(sorted[n-1]), WhiskerLo: nan, WhiskerHi: nan}
	if lo+hi < n {
		box.WhiskerLo, box.WhiskerHi = report.Number(sorted[lo]), report.Number(sorted[n-1-hi])
	}
	f.settle(lo, hi, box, valueHistogram(eachOnce(sorted), sorted[0], sorted[n-1], density), hit)
}

// settle records that lo finite values below the center and hi above it
// are extreme, the plot data, and the second pass's match from hit.
func (f *extFinding) settle(lo, hi int64, box *report.Box, hist *report.Histogram, hit func(x float64, row int64) (bool, float64)) {
	f.count += lo + hi
	f.below += lo
	f.above += hi
	f.ext.Box, f.ext.Histogram = box, hist
	f.match = withInf(hit)
}

// withInf is the match of a method whose values hit flags: ±Inf values
// are extreme too, with the score +Inf.
func withInf(hit func(x float64, row int64) (bool, float64)) func(x float64, row int64) (bool, float64) {
	return func(x float64, row int64) (bool, float64) {
		if math.IsInf(x, 0) {
			return true, math.Inf(1)
		}
		return hit(x, row)
	}
}

// histBins is the number of equal-width bins a histogram of n values gets:
// ceil((2n)^(1/3)), from 5 to 50 (Terrell & Scott 1985, the fewest bins
// that show the shape; the distribution rule uses the same).
func histBins(n int64) int {
	return min(maxHistBins, max(minHistBins, int(math.Ceil(math.Cbrt(2*float64(n))))))
}

// binOf is the bin of x among k equal bins over [lo, hi]; the last bin
// holds hi.
func binOf(x, lo, hi float64, k int) int {
	return min(k-1, max(0, int((x-lo)/(hi-lo)*float64(k))))
}

// valueHistogram counts values, given with their counts in any order,
// in equal-width bins over [lo, hi] (one bin when lo = hi), with the
// density's mass per bin when density is not nil.
func valueHistogram(values iter.Seq2[float64, int64], lo, hi float64, density func(a, b float64) float64) *report.Histogram {
	var n int64
	for _, c := range values {
		n += c
	}
	k := histBins(n)
	if hi == lo {
		k = 1
	}
	h := &report.Histogram{Counts: make([]int64, k)}
	for j := 0; j <= k; j++ {
		h.Edges = append(h.Edges, report.Number(lo+(hi-lo)*float64(j)/float64(k)))
	}
	h.Edges[k] = report.Number(hi)
	if k == 1 {
		h.Counts[0] = n
	} else {
		for x, c := range values {
			h.Counts[binOf(x, lo, hi, k)] += c
		}
	}
	if density != nil {
		for j := range k {
			h.Density = append(h.Density, report.Number(density(float64(h.Edges[j]), float64(h.Edges[j+1]))))
		}
	}
	return h
}

// eachOnce yields each of xs with the count 1.
func eachOnce(xs []float64) iter.Seq2[float64, int64] {
	return func(yield func(float64, int64) bool) {
		for _, x := range xs {
			if !yield(x, 1) {
				return
			}
		}
	}
}

// zscore fits mean ± k sd from the streamed moments. The extreme values
// are counted here only when there are none: when the least and the
// greatest value are both within the cutoff.
func (c *extremesCheck) zscore(st *ExtremesState, f *extFinding) {
	m := st.Moments
	sd := math.Sqrt(m.C[0] / float64(m.N-1))
	z := outlier.ZScore{Mean: m.Mean[0], SD: sd, Cutoff: c.spec.K}
	if st.Min == st.Max { // all equal: the rounding of the mean must not set them apart
		z.Mean, z.SD, sd = st.Min, 0, 0
	}
	lower, upper := z.Mean-c.spec.K*sd, z.Mean+c.spec.K*sd
	f.estimates = map[string]float64{"mean": z.Mean, "sd": sd, "k": c.spec.K, "lower": lower, "upper": upper}
	f.fitted = fmt.Sprintf("with |z| beyond %s (mean %s, sd %s)", number(c.spec.K), sig(z.Mean), sig(sd))
	f.setScale(z.Mean, sd, lower, upper)
	f.match = withInf(func(x float64, _ int64) (bool, float64) { return z.Outside(x), z.Score(x) })
	f.calmLo, f.calmHi = calmBound(lower, z), calmBound(upper, z)
	if z.Outside(st.Min) || z.Outside(st.Max) {
		f.count = -1
	}
}

// calmBound is x, a threshold of z, moved towards the mean until z does
// not flag it (computed, mean ± k sd may fall a rounding beyond the
// cutoff), or the mean itself, which z never flags, if a few steps do not
// do. A NaN x stays NaN, which leaves the calm interval empty.
func calmBound(x float64, z outlier.ZScore) float64 {
	for range 8 {
		if !z.Outside(x) {
			return x
		}
		x = math.Nextafter(x, z.Mean)
	}
	return z.Mean
}

// tail fits the column's family (the best of its candidates by AIC, then
// BIC) to the values every candidate can produce, and flags the values
// whose tail probability is below alpha/(2n); a value a family cannot
// produce has probability 0.
func (c *extremesCheck) tail(sorted []float64, f *extFinding) {
	inside := sorted
	for _, fam := range c.families {
		ok, _ := fam.InSupport()
		if !slices.ContainsFunc(inside, func(x float64) bool { return !ok(x) }) {
			continue
		}
		var keep []float64
		for _, x := range inside {
			if ok(x) {
				keep = append(keep, x)
			}
		}
		inside = keep
	}
	if len(inside) == 0 {
		f.err = fmt.Errorf("no value lies in the support of %s", c.families[0])
		return
	}
	if out := len(sorted) - len(inside); out > 0 {
		f.notes = append(f.notes, fmt.Sprintf("%s values the family cannot produce, fitted without them", thousands(int64(out))))
	}
	best := dist.Rank(inside, c.families)[0]
	if best.Err != nil {
		f.err = fmt.Errorf("%s: %w", best.Family.Name(), best.Err)
		return
	}
	d := best.Dist
	t, err := outlier.NewTail(d, c.spec.Alpha, int(f.n))
	if err != nil {
		f.err = err
		return
	}
	a := c.spec.Alpha / (2 * float64(f.n))
	f.estimates = finite(d.Params())
	how := "fitted"
	switch {
	case best.K == 0:
		how = "given"
	case best.K < len(best.Family.Params()):
		how = "partly given"
	}
	f.fitted = fmt.Sprintf("with a tail probability below %s under %s (%s; alpha %s over %s values)", sig(a), distText(d), how,
		number(c.spec.Alpha), thousands(f.n))
	f.setScale(d.Quantile(0.5), math.NaN(), d.Quantile(a), d.Quantile(1-a))
	var density func(a, b float64) float64
	if best.Family.Kind() == dist.Continuous {
		density = func(a, b float64) float64 { return d.Prob((a + b) / 2) }
	} else {
		density = func(a, b float64) float64 { return (d.CDF(b) - d.CDF(a)) / (b - a) }
	}
	f.flagByRule(t, sorted, density)
}

// finite drops the entries of m that JSON cannot write.
func finite(m map[string]float64) map[string]float64 {
	for k, v := range m {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			delete(m, k)
		}
	}
	return m
}

// esd runs the generalized ESD test on the finite values, as kept; rows
// are their data rows and sorted the same values sorted. Its outliers are
// the values it removed up to the last step whose R exceeds λ, named by
// their rows.
func (c *extremesCheck) esd(values []float64, rows []int64, sorted []float64, f *extFinding) {
	n := len(values)
	r := min(c.spec.MaxOutliers, n-2)
	if r < c.spec.MaxOutliers {
		f.notes = append(f.notes, fmt.Sprintf("up to %d outliers looked for, the most %s values allow", r, thousands(int64(n))))
	}
	res, err := outlier.GeneralizedESD(values, r, c.spec.Alpha)
	if err != nil {
		f.err = err
		return
	}
	flagged := map[int64]float64{}
	for _, s := range res.Steps {
		f.ext.Steps = append(f.ext.Steps, report.ESDStep{Value: report.Number(s.Value), R: report.Number(s.R), Lambda: report.Number(s.Lambda)})
	}
	for _, s := range res.Steps[:res.Outliers] {
		flagged[rows[s.Index]] = s.R
	}
	mean, sd := meanSD(sorted)
	f.estimates = map[string]float64{"mean": mean, "sd": sd}
	f.fitted = fmt.Sprintf("outliers by the generalized ESD test (%d found, up to %d looked for, alpha %s)", res.Outliers, r,
		number(c.spec.Alpha))
	f.flagSteps(res.Steps[:res.Outliers], sorted, mean, sd, flagged)
}

// grubbs runs Grubbs' two-sided test on the finite values, as kept; rows
// and sorted as in esd.
func (c *extremesCheck) grubbs(values []float64, rows []int64, sorted []float64, f *extFinding) {
	g, err := outlier.Grubbs(values, c.spec.Alpha, outlier.TwoSided)
	if err != nil {
		f.err = err
		return
	}
	mean, sd := meanSD(sorted)
	n := int64(len(values))
	f.statistic = &report.Statistic{Name: "G", Value: report.Number(g.G), N: n}
	p := g.P
	f.pValue = &p
	f.estimates = map[string]float64{"mean": mean, "sd": sd, "critical": g.Critical}
	verdict := "no outlier"
	var steps []outlier.ESDStep
	flagged := map[int64]float64{}
	if g.Outlier {
		verdict = "an outlier"
		steps = []outlier.ESDStep{{Index: g.Index, Value: g.Value, R: g.G}}
		flagged[rows[g.Index]] = g.G
	}
	f.fitted = fmt.Sprintf("outliers by Grubbs' test: %s (G = %s, critical %s, p-value %s, alpha %s)", verdict, sig(g.G),
		sig(g.Critical), sig(g.P), number(c.spec.Alpha))
	f.flagSteps(steps, sorted, mean, sd, flagged)
}

// meanSD is the mean and sample sd of sorted values, for the report.
func meanSD(x []float64) (float64, float64) {
	z, err := outlier.NewZScore(x, 1)
	if err != nil {
		return math.NaN(), math.NaN()
	}
	return z.Mean, z.SD
}

// flagSteps records the values a test removed as outliers, with their
// rows: the least extreme on each side is that side's threshold.
func (f *extFinding) flagSteps(steps []outlier.ESDStep, sorted []float64, mean, sd float64, rows map[int64]float64) {
	lower, upper := math.Inf(-1), math.Inf(1)
	var lo, hi int64
	for _, s := range steps {
		if s.Value < mean {
			lo++
			lower = max(lower, s.Value)
		} else {
			hi++
			upper = min(upper, s.Value)
		}
	}
	f.setScale(mean, sd, lower, upper)
	if !math.IsInf(lower, 0) {
		f.estimates["lower"] = lower
	}
	if !math.IsInf(upper, 0) {
		f.estimates["upper"] = upper
	}
	f.settleSorted(sorted, lo, hi, nil, func(_ float64, row int64) (bool, float64) {
		score, ok := rows[row]
		return ok, score
	})
}

// result writes the finding as a result; count is known unless it is -1.
func (f *extFinding) result(c *extremesCheck) report.Result {
	r := c.rule
	if f.err != nil {
		return Failed(r, fmt.Errorf("%s: %w", c.spec.Method, f.err))
	}
	if f.skipped != "" {
		res := NewResult(r, math.NaN())
		res.Status, res.Verdict, res.Message = report.Skipped, report.Pass, f.skipped
		return res
	}
	measure := math.NaN()
	if f.count >= 0 {
		measure = share(f.count, f.n)
	}
	res := NewResult(r, measure)
	ext := f.ext
	ext.Below, ext.Above = f.below, f.above
	res.Extremes = &ext
	if len(f.estimates) > 0 {
		res.Estimates = finite(f.estimates)
	}
	res.Statistic, res.PValue = f.statistic, f.pValue
	switch {
	case f.n == 0:
		res.Message = f.fitted
	case f.count < 0:
		res.Message = fmt.Sprintf("values %s are counted in a second pass", f.fitted)
	default:
		res.Message = fmt.Sprintf("%s %s", countOf(f.count, f.n, "values"), f.fitted)
	}
	if len(f.notes) > 0 {
		res.Message += "; " + strings.Join(f.notes, "; ")
	}
	return res
}

// extremesLister is the second pass of an extremes rule: it lists the
// rows holding extreme values and, for zscore, counts them and the
// histogram.
type extremesLister struct {
	check        *extremesCheck
	found        *extFinding
	listing      Offenders
	below, above int64
	scratch      scratch
	// bins count the finite values over [lo, hi] (zscore).
	bins   []int64
	lo, hi float64
}

// Observe lists the batch's extreme values. Values between calmLo and
// calmHi are only binned. Without bins, the case of the methods that
// count in the first pass, the loop is one pair of comparisons per value,
// whose validity is looked up only when it lies outside them.
func (l *extremesLister) Observe(b *source.Batch) error {
	arr, err := l.check.col.in(b)
	if err != nil {
		return err
	}
	v := validOf(arr)
	calmLo, calmHi := l.found.calmLo, l.found.calmHi
	xs := numbers(arr, &l.scratch)
	if l.bins == nil {
		for i, x := range xs {
			if !(x >= calmLo && x <= calmHi) && v.at(i) {
				l.judge(b, i, x)
			}
		}
		return nil
	}
	for i, x := range xs {
		switch {
		case !v.at(i):
		case x >= calmLo && x <= calmHi:
			if l.bins != nil {
				l.bins[binOf(x, l.lo, l.hi, len(l.bins))]++
			}
		default:
			l.judge(b, i, x)
		}
	}
	return nil
}

// judge bins the value x of row i of batch b and lists it if it is
// extreme.
func (l *extremesLister) judge(b *source.Batch, i int, x float64) {
	if math.IsNaN(x) {
		return
	}
	if l.bins != nil && !math.IsInf(x, 0) {
		l.bins[binOf(x, l.lo, l.hi, len(l.bins))]++
	}
	row := b.Row(i)
	hit, score := l.found.match(x, row)
	if !hit {
		return
	}
	if math.IsInf(x, -1) || (!math.IsInf(x, 1) && l.found.low(x)) {
		l.below++
	} else {
		l.above++
	}
	l.listing.Add(score, row, func() report.Row { return RowAt(l.check.env, b, i, []int{l.check.col.index}) })
}

// Merge adds other's counts and listing to l.
func (l *extremesLister) Merge(other Accumulator) error {
	o, ok := other.(*extremesLister)
	if !ok || o.check != l.check {
		return errMerge(l.check.rule, l, other)
	}
	l.below += o.below
	l.above += o.above
	for i := range l.bins {
		l.bins[i] += o.bins[i]
	}
	l.listing.Merge(&o.listing)
	return nil
}

// Finish judges the counts of the second pass and lists the rows.
func (l *extremesLister) Finish() report.Result {
	f := *l.found
	f.count, f.below, f.above = l.listing.Count, l.below, l.above
	if l.bins != nil {
		h := &report.Histogram{Counts: l.bins}
		k := len(l.bins)
		for j := 0; j <= k; j++ {
			h.Edges = append(h.Edges, report.Number(l.lo+(l.hi-l.lo)*float64(j)/float64(k)))
		}
		h.Edges[k] = report.Number(l.hi)
		f.ext.Histogram = h
	}
	res := f.result(l.check)
	res.Offending = offending(f.count, &l.listing)
	return res
}
