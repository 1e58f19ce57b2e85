package checks

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/checks/outlier"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// jointCheck flags rows whose values, taken together, lie far from the
// joint pattern of two or more numeric columns, by the squared
// Mahalanobis distance
//
//	d²(x) = (x − μ)ᵀ Σ⁻¹ (x − μ)
//
// from a center μ and a covariance Σ estimated on the whole data. A row
// is flagged when d² exceeds the chi-square quantile of the rule with p
// degrees of freedom (p the number of columns), the distribution of d²
// for p-variate normal rows and known (or consistently estimated)
// parameters. The measure is the share of the judged rows flagged; rows
// with a missing (or NaN, or infinite) value in any of the columns are
// not judged, and are counted.
//
// First pass. Classical: the count, mean vector and co-moment matrix of
// the judged rows are streamed (outlier.CoMoments: each batch summarised
// by two passes, batches and accumulators merged by the pairwise update
// of Chan, Golub & LeVeque 1979 in the co-moment form of Pébay 2008);
// memory O(p²). Robust: the judged rows are kept, up to the rule's sample
// size; beyond it a seeded uniform sample of that many rows is kept
// instead (bottomk.Sample: the rows of smallest key, a hash of the seed
// and the data-row number), on which the estimate rests.
//
// Finish. Classical: the mean and sample covariance (outlier.Classical's
// estimate). Robust: outlier.FastMCD (Rousseeuw & Van Driessen 1999,
// seeded) with its reweighting step and the consistency factor of Croux
// & Haesbroeck (1999), as robustbase's covMcd computes them without its
// small-sample correction.
//
// Second pass. Every judged row's d² is computed against the estimate;
// rows beyond the cutoff are counted exactly and the worst listed, each
// with the contribution of every column to its distance
// (Scatter.Contributions), largest first. A seeded sample of at most
// maxQQSample distances gives the report's quantile plot against the
// chi-square distribution.
type jointCheck struct {
	rule   *rules.Rule
	env    *Env
	cols   []column
	spec   rules.JointSpec
	cutoff float64
}

// maxQQSample bounds the distances kept for the report's plot.
const maxQQSample = 10_000

// plotSeed is xor-ed into the rule's seed for the plot's sample of rows,
// so that it is not drawn from the rows the robust estimate rests on.
const plotSeed = 0x706c6f74 // "plot"

func newJointCheck(r *rules.Rule, s rules.JointSpec, env *Env) (Check, error) {
	p := len(r.Columns)
	if p < 2 {
		return nil, fmt.Errorf("a joint rule needs two or more columns, the rule names %d", p)
	}
	c := &jointCheck{rule: r, env: env, spec: s}
	for _, name := range r.Columns {
		col, err := bindColumn(env, name)
		if err != nil {
			return nil, err
		}
		if col.class != classInteger && col.class != classNumber {
			return nil, fmt.Errorf("column %q holds %s; joint applies to integers and numbers", name, typeWords(col.typ))
		}
		c.cols = append(c.cols, col)
	}
	switch {
	case s.Method != rules.JointMahalanobis:
		return nil, fmt.Errorf("unknown joint method %q", s.Method)
	case !(s.Quantile > 0 && s.Quantile < 1):
		return nil, fmt.Errorf("quantile is %v, want 0 < quantile < 1", s.Quantile)
	case s.Robust && s.Sample < p+2:
		return nil, fmt.Errorf("a sample of %d rows is too small for a robust estimate over %d columns", s.Sample, p)
	}
	c.cutoff = outlier.Cutoff(p, s.Quantile)
	return c, nil
}

func (c *jointCheck) Rule() *rules.Rule { return c.rule }

// NewAccumulators returns n accumulators of one run whose samples
// (robust) share a bound (bottomk.Bound).
func (c *jointCheck) NewAccumulators(n int) []Accumulator {
	as := make([]Accumulator, n)
	var b *bottomk.Bound
	if c.spec.Robust {
		b = bottomk.NewBound(c.spec.Sample)
	}
	for i := range as {
		a := c.NewAccumulator().(*JointAccumulator)
		if b != nil {
			a.Sample.Share(b)
		}
		as[i] = a
	}
	return as
}

func (c *jointCheck) NewAccumulator() Accumulator {
	a := &JointAccumulator{check: c}
	p := len(c.cols)
	if c.spec.Robust {
		// The sizes were checked when the rule was compiled.
		a.Sample, _ = bottomk.New(c.spec.Sample, p, c.spec.Seed)
	} else {
		a.Moments = outlier.NewCoMoments(p)
	}
	return a
}

// JointState is the first-pass state of a joint rule.
type JointState struct {
	N       int64 // rows judged: a finite value in every column
	Skipped int64 // rows with a missing or non-finite value in some column
	// Moments are the count, mean and co-moments of the judged rows
	// (classical); Sample a uniform sample of them (robust).
	Moments *outlier.CoMoments
	Sample  *bottomk.Sample
}

// JointAccumulator is the first pass of a joint rule.
type JointAccumulator struct {
	JointState
	check *jointCheck
	rows  jointRows
	found *jointFinding
}

// jointRows reads a batch's columns as float64 and finds its judged rows,
// those with a finite value in every column.
type jointRows struct {
	scratch []scratch
	// cols holds each column's values (float64 ones in place), null
	// slots with arbitrary values; valid their validity.
	cols  [][]float64
	valid []valid
	// Rows are the judged rows' places in the batch, or nil when every
	// row is judged (All).
	Rows []int
	All  bool
	// N is the number of rows in the batch, Judged the number judged.
	N, Judged int
	rows      []int     // Rows' buffer
	bad       []uint8   // 1 for the rows not judged
	flat      []float64 // the judged rows, one after the other (gather)
	judged    [][]float64
}

// read reads the batch's columns and finds the judged rows.
func (j *jointRows) read(c *jointCheck, b *source.Batch) error {
	nulls, err := j.load(c, b)
	if err != nil {
		return err
	}
	j.judge(nulls, nil)
	return nil
}

// load reads the batch's columns as float64 and their validity, and
// reports whether any holds a null.
func (j *jointRows) load(c *jointCheck, b *source.Batch) (nulls bool, err error) {
	p := len(c.cols)
	if j.cols == nil {
		j.scratch, j.cols, j.judged = make([]scratch, p), make([][]float64, p), make([][]float64, p)
	}
	n := int(b.Record.NumRows())
	j.valid = j.valid[:0]
	for k, col := range c.cols {
		arr, err := col.in(b)
		if err != nil {
			return false, err
		}
		j.cols[k] = asFloats(col, arr, &j.scratch[k])[:n]
		j.valid = append(j.valid, validOf(arr))
		nulls = nulls || arr.NullN() > 0
	}
	j.N = n
	return nulls, nil
}

// judge finds the judged rows of the loaded batch; nulls says whether a
// column holds a null. d2, when not nil, holds a squared distance per row
// of the batch (null slots' included) from a Scatter whose distances show
// non-finite values (outlier.Scatter.ShowsNonFinite): a row with a finite
// distance is then known to hold finite values, and only the rows with a
// non-finite one are checked value by value; without it every column is.
func (j *jointRows) judge(nulls bool, d2 []float64) {
	n := j.N
	if !nulls && (d2 != nil && columnsFinite(d2) || d2 == nil && columnsFinite(j.cols...)) {
		j.All, j.Rows, j.Judged = true, nil, n
		return
	}
	// Mark the rows with a null or a non-finite value (bad[i] = 1),
	// then list the others, without a branch per row.
	bad := slices.Grow(j.bad[:0], n)[:n]
	clear(bad)
	for _, vk := range j.valid {
		if vk.bits != nil {
			markNulls(bad, vk)
		}
	}
	switch {
	case d2 != nil:
		if !columnsFinite(d2) {
			for i, d := range d2 {
				if !isFinite(d) && !j.finiteAt(i) {
					bad[i] = 1
				}
			}
		}
	default:
		for _, v := range j.cols {
			if !columnsFinite(v) {
				for i, x := range v {
					if !isFinite(x) {
						bad[i] = 1
					}
				}
			}
		}
	}
	j.bad = bad
	rows := slices.Grow(j.rows[:0], n)[:n]
	m := 0
	for i, out := range bad {
		rows[m] = i
		m += int(1 - out)
	}
	rows = rows[:m]
	j.rows = rows
	j.All, j.Rows, j.Judged = false, rows, len(rows)
}

// finiteAt reports whether every column's value at place i is finite.
func (j *jointRows) finiteAt(i int) bool {
	for _, v := range j.cols {
		if !isFinite(v[i]) {
			return false
		}
	}
	return true
}

// columnsFinite reports whether every value of cols is finite: whether
// the sums of x - x, +0 for a finite x and NaN otherwise, are 0 (four of
// them, so that the additions do not wait on one another).
func columnsFinite(cols ...[]float64) bool {
	var s0, s1, s2, s3 float64
	for _, v := range cols {
		for ; len(v) >= 4; v = v[4:] {
			s0 += v[0] - v[0]
			s1 += v[1] - v[1]
			s2 += v[2] - v[2]
			s3 += v[3] - v[3]
		}
		for _, x := range v {
			s0 += x - x
		}
	}
	return s0+s1+s2+s3 == 0
}

// markNulls sets bad[i] to 1 where v says row i is null, skipping the
// bitmap's bytes of eight values.
func markNulls(bad []uint8, v valid) {
	n := len(bad)
	for i := 0; i < n; {
		pos := v.offset + i
		if pos&7 == 0 && i+8 <= n && v.bits[pos>>3] == 0xff {
			i += 8
			continue
		}
		bad[i] |= ^v.bits[pos>>3] >> (pos & 7) & 1
		i++
	}
}

// row returns the place in the batch of judged row k.
func (j *jointRows) row(k int) int {
	if j.All {
		return k
	}
	return j.Rows[k]
}

// values writes the values of the row at place i of the batch into dst.
func (j *jointRows) values(i int, dst []float64) []float64 {
	dst = dst[:0]
	for _, v := range j.cols {
		dst = append(dst, v[i])
	}
	return dst
}

// gather returns the judged rows' values one row after the other (p per
// row), as a bottomk.Sample takes them. Three columns (the bench policy's
// joint rule) are written a row at a time, into one stream of stores;
// others a column at a time.
func (j *jointRows) gather() []float64 {
	p := len(j.cols)
	flat := slices.Grow(j.flat[:0], p*j.Judged)[:p*j.Judged]
	j.flat = flat
	if j.Judged == 0 {
		return flat
	}
	if p == 3 {
		x0, x1, x2 := j.cols[0], j.cols[1], j.cols[2]
		if j.All {
			x0, x1, x2 = x0[:j.Judged], x1[:j.Judged], x2[:j.Judged]
			for t := range x0 {
				row := flat[3*t : 3*t+3 : 3*t+3]
				row[0], row[1], row[2] = x0[t], x1[t], x2[t]
			}
			return flat
		}
		for t, i := range j.Rows {
			row := flat[3*t : 3*t+3 : 3*t+3]
			row[0], row[1], row[2] = x0[i], x1[i], x2[i]
		}
		return flat
	}
	for c, v := range j.cols {
		dst := flat[c:]
		if j.All {
			for t, x := range v {
				dst[t*p] = x
			}
			continue
		}
		for t, i := range j.Rows {
			dst[t*p] = v[i]
		}
	}
	return flat
}

// columns returns the judged rows' values by column: the columns
// themselves when every row is judged.
func (j *jointRows) columns() [][]float64 {
	if j.All {
		return j.cols
	}
	for k, v := range j.cols {
		out := slices.Grow(j.judged[k][:0], len(j.Rows))
		for _, i := range j.Rows {
			out = append(out, v[i])
		}
		j.judged[k] = out
	}
	return j.judged
}

// offerRows offers the judged rows of batch b to sample s, p values each
// from vals (judged row k holds vals[k*p : (k+1)*p]). When b's rows are
// consecutive data rows, each run of consecutive judged rows is offered
// at once (bottomk's OfferRun, the sample's fast path): a sample is a
// function of the rows offered, not of how they were offered.
func offerRows(s *bottomk.Sample, b *source.Batch, j *jointRows, vals []float64) {
	p := s.P()
	if b.Rows != nil {
		for k := range j.Judged {
			s.Offer(b.Rows[j.row(k)], vals[k*p:(k+1)*p])
		}
		return
	}
	if j.All {
		s.OfferRun(b.FirstRow, vals)
		return
	}
	rows := j.Rows
	for lo := 0; lo < len(rows); {
		hi := runEnd(rows, lo)
		s.OfferRun(b.FirstRow+int64(rows[lo]), vals[lo*p:hi*p])
		lo = hi
	}
}

// runEnd returns the end of the run of consecutive places that starts at
// rows[lo]: the least hi > lo with rows[hi] != rows[hi-1]+1, or
// len(rows). The places increase strictly, so rows[lo+d] = rows[lo]+d
// exactly when rows[lo], ..., rows[lo+d] are consecutive; a galloping
// search (Bentley & Yao 1976, "An almost optimal algorithm for unbounded
// searching", Inf. Proc. Letters 5) finds the end in O(log(hi-lo)) steps
// instead of hi-lo.
func runEnd(rows []int, lo int) int {
	// rows[lo : lo+in+1] are consecutive; at lo+out the run has ended
	// (or rows have).
	in, step := 0, 1
	for lo+step < len(rows) && rows[lo+step] == rows[lo]+step {
		in, step = step, 2*step
	}
	out := min(step, len(rows)-lo)
	for out-in > 1 {
		mid := in + (out-in)/2
		if rows[lo+mid] == rows[lo]+mid {
			in = mid
		} else {
			out = mid
		}
	}
	return lo + out
}

// Observe adds the batch's judged rows to the moments or the sample.
func (a *JointAccumulator) Observe(b *source.Batch) error {
	if err := a.rows.read(a.check, b); err != nil {
		return err
	}
	a.N += int64(a.rows.Judged)
	a.Skipped += int64(a.rows.N - a.rows.Judged)
	if a.rows.Judged == 0 {
		return nil
	}
	if a.Sample != nil {
		offerRows(a.Sample, b, &a.rows, a.rows.gather())
		return nil
	}
	return a.Moments.AddColumns(a.rows.columns())
}

// Merge folds other's counts and moments or sample into a.
func (a *JointAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*JointAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.N += o.N
	a.Skipped += o.Skipped
	if a.Moments != nil {
		return a.Moments.Merge(o.Moments)
	}
	return a.Sample.Merge(o.Sample)
}

// Finish estimates the center and covariance; rows are judged only in the
// second pass.
func (a *JointAccumulator) Finish() report.Result {
	return a.finding().result(a.check, -1, nil, nil)
}

// SecondPass returns the accumulator that judges every row against the
// estimate, or nil when there is none.
func (a *JointAccumulator) SecondPass() Accumulator {
	f := a.finding()
	if f.scatter == nil {
		return nil
	}
	return &jointJudge{check: a.check, found: f, listing: Offenders{Limit: a.check.env.MaxRowsListed}}
}

func (a *JointAccumulator) finding() *jointFinding {
	if a.found == nil {
		a.found = a.check.estimate(&a.JointState)
	}
	return a.found
}

// jointFinding is the estimate a joint rule made from its first pass.
type jointFinding struct {
	st      JointState
	scatter *outlier.Scatter // nil when the rule cannot judge rows
	joint   report.Joint
	about   string // how the estimate was made
	skipped string // why no estimate could be made
	err     error
}

// estimate makes the classical or robust estimate of the first pass's
// rows.
func (c *jointCheck) estimate(st *JointState) *jointFinding {
	p := len(c.cols)
	f := &jointFinding{st: *st}
	f.joint = report.Joint{Method: string(c.spec.Method), Estimator: "classical", N: st.N, Skipped: st.Skipped, DF: p,
		Quantile: report.Number(c.spec.Quantile), Cutoff: report.Number(c.cutoff), Seed: c.spec.Seed}
	if c.spec.Robust {
		f.joint.Estimator = "fast-mcd"
	}
	need := int64(p + 1)
	if c.spec.Robust {
		need = int64(p + 2)
	}
	switch {
	case st.N == 0:
		return f
	case st.N < need:
		f.skipped = fmt.Sprintf("%s needs at least %d rows with a value in every column, the data have %d", f.joint.Estimator, need, st.N)
		return f
	}
	var s outlier.Scatter
	if c.spec.Robust {
		cols := keyOrderColumns(st.Sample)
		mcd, err := outlier.FastMCD(cols, outlier.MCDOptions{}, rand.New(rand.NewPCG(c.spec.Seed, 0x6d6364)))
		if err != nil {
			f.err = err
			return f
		}
		s = mcd.Final
		factor := report.Number(mcd.Factor)
		f.joint.Subset, f.joint.Kept, f.joint.Factor = mcd.H, mcd.Kept, &factor
		f.joint.SampleSize = int64(len(cols[0]))
		f.joint.Sampled = f.joint.SampleSize < st.N
		f.about = fmt.Sprintf("the robust center and covariance (FAST-MCD, reweighted: %s of %s rows kept)",
			thousands(int64(mcd.Kept)), thousands(f.joint.SampleSize))
		if f.joint.Sampled {
			f.about += fmt.Sprintf(", estimated on a seeded sample of %s of the %s rows", thousands(f.joint.SampleSize), thousands(st.N))
		}
	} else {
		var err error
		if s, err = st.Moments.Scatter(); err != nil {
			f.err = err
			return f
		}
		f.about = "the mean and sample covariance"
	}
	f.scatter = &s
	for j := range p {
		f.joint.Center = append(f.joint.Center, report.Number(s.Center[j]))
		row := make([]report.Number, p)
		for k := range p {
			row[k] = report.Number(s.Cov.At(j, k))
		}
		f.joint.Covariance = append(f.joint.Covariance, row)
	}
	return f
}

// result writes the finding as a result, with count rows beyond the
// cutoff (-1 when not yet counted), the listing and the plotted sample of
// distances.
func (f *jointFinding) result(c *jointCheck, count int64, listing *Offenders, d2 []float64) report.Result {
	r := c.rule
	switch {
	case f.err != nil:
		return Failed(r, fmt.Errorf("%s: %w", f.joint.Estimator, f.err))
	case f.skipped != "":
		res := NewResult(r, math.NaN())
		res.Status, res.Verdict, res.Message = report.Skipped, report.Pass, f.skipped
		return res
	}
	measure := math.NaN()
	if count >= 0 || f.st.N == 0 {
		measure = share(max(count, 0), f.st.N)
	}
	res := NewResult(r, measure)
	j := f.joint
	res.Joint = &j
	cut := fmt.Sprintf("beyond the squared Mahalanobis distance %s (chi-square %s quantile, %d degrees of freedom) from %s",
		sig(c.cutoff), number(c.spec.Quantile), len(c.cols), f.about)
	switch {
	case f.st.N == 0:
		res.Message = "no row has a value in every column"
	case count < 0:
		res.Message = "rows " + cut + " are counted in a second pass"
	default:
		res.Message = countOf(count, f.st.N, "rows") + " lie " + cut
	}
	if f.st.Skipped > 0 {
		res.Message += fmt.Sprintf("; %s rows with a missing or non-finite value not judged", thousands(f.st.Skipped))
	}
	if f.scatter != nil {
		res.Estimates = map[string]float64{"cutoff": c.cutoff}
		for k, col := range c.cols {
			res.Estimates["center."+col.name] = f.scatter.Center[k]
		}
		res.Estimates = finite(res.Estimates)
	}
	if len(d2) > 0 {
		j.QQ = chiSquareQQ(d2, len(c.cols))
	}
	if listing != nil {
		res.Offending = offending(count, listing)
	}
	return res
}

// chiSquareQQ pairs, at up to maxQQ probabilities p = (i + 1/2)/m, the
// sample quantile of the squared distances d2 (sorted here) with the
// chi-square quantile with df degrees of freedom.
func chiSquareQQ(d2 []float64, df int) *report.QQ {
	slices.Sort(d2)
	m := min(maxQQ, len(d2))
	q := &report.QQ{Fitted: make([]report.Number, m), Sample: make([]report.Number, m)}
	for i := range m {
		p := (float64(i) + 0.5) / float64(m)
		k := min(len(d2)-1, max(0, int(math.Ceil(p*float64(len(d2))))-1))
		q.Sample[i] = report.Number(d2[k])
		q.Fitted[i] = report.Number(outlier.Cutoff(df, p))
	}
	return q
}

// jointJudge is the second pass of a joint rule: it computes every judged
// row's squared distance, counts and lists those beyond the cutoff, and
// samples the distances for the plot.
type jointJudge struct {
	check   *jointCheck
	found   *jointFinding
	listing Offenders
	rows    jointRows
	plot    *bottomk.Sample
	d2      []float64 // the batch's judged rows' squared distances
	all     []float64 // every row's of the batch (see jointRows.judge)
}

// Observe judges the batch's rows.
func (l *jointJudge) Observe(b *source.Batch) error {
	c := l.check
	nulls, err := l.rows.load(c, b)
	if err != nil {
		return err
	}
	if l.plot == nil {
		if l.plot, err = bottomk.New(maxQQSample, 1, c.spec.Seed^plotSeed); err != nil {
			return err
		}
	}
	s := l.found.scatter
	var all []float64
	if s.ShowsNonFinite() {
		// Every row's distance, in one loop without row indices, tells
		// most rows' values finite on the way (jointRows.judge).
		l.all = s.DistancesAt(l.rows.cols, nil, l.all)
		all = l.all
	}
	l.rows.judge(nulls, all)
	if l.rows.Judged == 0 {
		return nil
	}
	d2 := l.distances(s, all)
	offerRows(l.plot, b, &l.rows, d2)
	for k, d2 := range d2 {
		if !(d2 > c.cutoff) {
			continue
		}
		i := l.rows.row(k)
		l.listing.Add(d2, b.Row(i), func() report.Row {
			idx := make([]int, len(c.cols))
			for k, col := range c.cols {
				idx[k] = col.index
			}
			row := RowAt(c.env, b, i, idx)
			row.Contributions = contributions(c, s.Contributions(l.rows.values(i, nil)))
			return row
		})
	}
	return nil
}

// distances returns the judged rows' squared distances, in judged-row
// order: taken from all (every row's) when set, else computed.
func (l *jointJudge) distances(s *outlier.Scatter, all []float64) []float64 {
	switch {
	case all != nil && l.rows.All:
		return all
	case all != nil:
		l.d2 = slices.Grow(l.d2[:0], l.rows.Judged)[:l.rows.Judged]
		for k, i := range l.rows.Rows {
			l.d2[k] = all[i]
		}
	case l.rows.All:
		l.d2 = s.DistancesAt(l.rows.cols, nil, l.d2)
	default:
		l.d2 = s.DistancesAt(l.rows.cols, l.rows.Rows, l.d2)
	}
	return l.d2
}

// contributions names and ranks a row's contributions to its distance.
func contributions(c *jointCheck, v []float64) []report.Contribution {
	e := outlier.RowExtreme{Contrib: v}
	out := make([]report.Contribution, 0, len(v))
	for _, k := range e.Ranked() {
		out = append(out, report.Contribution{Column: c.cols[k].name, Value: report.Number(v[k])})
	}
	return out
}

// Merge adds other's listing and sampled distances to l.
func (l *jointJudge) Merge(other Accumulator) error {
	o, ok := other.(*jointJudge)
	if !ok || o.check != l.check {
		return errMerge(l.check.rule, l, other)
	}
	l.listing.Merge(&o.listing)
	switch {
	case o.plot == nil:
	case l.plot == nil:
		l.plot = o.plot
	default:
		return l.plot.Merge(o.plot)
	}
	return nil
}

// Finish judges the share of rows beyond the cutoff.
func (l *jointJudge) Finish() report.Result {
	var d2 []float64
	if l.plot != nil {
		d2 = l.plot.Values(0)
	}
	return l.found.result(l.check, l.listing.Count, &l.listing, d2)
}
