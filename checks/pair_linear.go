package checks

import (
	"fmt"
	"math"
	"strconv"

	"github.com/assay-project/assay/checks/relate"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// linearCheck judges a linear relation y = a + b·x between two numeric
// columns, on the rows where both hold a finite value.
//
// First pass. The bivariate moments stream and merge (relate.Moments:
// Welford's update per batch, Chan, Golub & LeVeque's pairwise merge,
// Pébay's co-moment), which is all that Pearson's r, its t test, the
// least-squares line and R² need. A robust fit (theil-sen, huber) needs
// the pairs themselves: they are kept up to the rule's sample size, beyond
// it a seeded uniform sample of that size (rows of smallest key, see
// pairSample), and the result says so. A seeded sample of 500 pairs is
// kept for a scatter plot.
//
// Measures. correlation is Pearson's r, p-value its two-sided t test
// (both always of least squares); r2 is R² of the least-squares line;
// slope and intercept are those of the rule's fit.
//
// Residuals (second pass). The line is fitted after the first pass; the
// second pass scores every row and flags those above the cutoff:
//
//   - studentized (least squares): |t|, the externally studentized
//     residual, from the line's n, x̄ and Sxx alone (relate.Line.Diagnose:
//     leverage h = 1/n + (x - x̄)²/Sxx); the default cutoff is the
//     Bonferroni critical value t_{1-0.05/(2n)}(n-3) (Cook & Weisberg
//     1982), so clean normal data of any size flag a row with probability
//     at most 5%.
//   - cooks (least squares): Cook's distance D; default cutoff the median
//     of F(2, n-2), Cook's (1977) own reference.
//   - standardized (robust fits): |e|/s, e the residual from the robust
//     line and s its scale median|e|/0.6745 (relate.RobustLine); default
//     cutoff the same Bonferroni value, a slightly conservative stand-in
//     for the normal quantile z_{1-0.05/(2n)} (equal to it in the limit).
//     A few bad rows pull the least-squares line towards them and inflate
//     s, so that none stands out (masking); the robust line and scale
//     resist them (Rousseeuw & Leroy 1987, Robust Regression and Outlier
//     Detection, ch. 1).
//
// The measure is the share of judged rows flagged; flagged rows are listed
// by score, worst first, with both values and the fitted value. Rows that
// |t| or D provably cannot flag (near x̄, with a small residual; see
// calmRegion) are counted as judged without computing their score.
type linearCheck struct {
	rule  *rules.Rule
	env   *Env
	x, y  column
	spec  rules.PairSpec
	keeps bool // a robust fit needs the pairs
}

func newLinearCheck(r *rules.Rule, s rules.PairSpec, env *Env, x, y column) (Check, error) {
	c := &linearCheck{rule: r, env: env, x: x, y: y, spec: s}
	switch s.Fit {
	case rules.FitTheilSen, rules.FitHuber:
		c.keeps = true
		if s.Sample < 1 {
			return nil, fmt.Errorf("sample size %d is below 1", s.Sample)
		}
	case rules.FitOLS, "":
	default:
		return nil, fmt.Errorf("unknown fit %q", s.Fit)
	}
	switch s.Residual {
	case rules.ResidualStudentized, rules.ResidualCooks, rules.ResidualStandardized, "":
	default:
		return nil, fmt.Errorf("unknown residual rule %q", s.Residual)
	}
	return c, nil
}

func (c *linearCheck) Rule() *rules.Rule { return c.rule }

func (c *linearCheck) NewAccumulator() Accumulator { return &LinearAccumulator{check: c} }

// LinearState is the sufficient statistic of a linear rule's least-squares
// measures: the bivariate moments of the judged rows, and the rows left out
// for a NaN or infinite value.
type LinearState struct {
	Moments   relate.Moments
	NonFinite int64
}

// LinearAccumulator is the first pass of a linear rule.
type LinearAccumulator struct {
	LinearState
	check  *linearCheck
	rows   pairRows
	points *pairSample // for a plot
	kept   *pairSample // for a robust fit
	fit    *linearFit  // once made
}

// Observe adds the batch's pairs.
func (a *LinearAccumulator) Observe(b *source.Batch) error {
	if err := a.rows.read(a.check.x, a.check.y, b); err != nil {
		return err
	}
	a.NonFinite = a.rows.NonFinite
	if len(a.rows.X) == 0 {
		return nil
	}
	a.Moments.AddAll(a.rows.X, a.rows.Y)
	seed := a.check.spec.Seed
	if err := offer(&a.points, plotPoints, seed, b, a.rows.Rows, a.rows.X, a.rows.Y); err != nil || !a.check.keeps {
		return err
	}
	return offer(&a.kept, a.check.spec.Sample, seed, b, a.rows.Rows, a.rows.X, a.rows.Y)
}

// Merge folds other's moments and samples into a.
func (a *LinearAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*LinearAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Moments.Merge(o.Moments)
	a.NonFinite += o.NonFinite
	a.rows.NonFinite = a.NonFinite
	var err error
	if a.points, err = mergeSample(a.points, o.points); err != nil {
		return err
	}
	a.kept, err = mergeSample(a.kept, o.kept)
	return err
}

// linearFit is the line a rule judges by: least squares, or a robust
// line fitted on the kept pairs.
type linearFit struct {
	ols    relate.Line
	olsErr error
	// robust is set for theil-sen and huber fits; err says why the rule's
	// line could not be fitted.
	robust   *relate.RobustLine
	theil    *relate.TheilSenFit
	huber    *relate.HuberFit
	err      error
	sampled  bool
	kept     int64
	fitLabel string
}

// fitted fits the rule's line once.
func (a *LinearAccumulator) fitted() *linearFit {
	if a.fit != nil {
		return a.fit
	}
	f := &linearFit{fitLabel: string(rules.FitOLS)}
	f.ols, f.olsErr = a.Moments.Line()
	f.err = f.olsErr
	if a.check.keeps {
		f.fitLabel = string(a.check.spec.Fit)
		xs, ys := a.kept.values()
		f.sampled, f.kept = a.kept.sampled(), int64(len(xs))
		switch a.check.spec.Fit {
		case rules.FitTheilSen:
			t, err := relate.TheilSen(xs, ys, relate.TheilSenOptions{Seed: a.check.spec.Seed})
			f.theil, f.robust, f.err = &t, &t.RobustLine, err
		case rules.FitHuber:
			h, err := relate.Huber(xs, ys, relate.HuberOptions{})
			f.huber, f.robust, f.err = &h, &h.RobustLine, err
		}
	}
	a.fit = f
	return f
}

// line returns the rule's line: intercept, slope and scale.
func (f *linearFit) line() (a, b, s float64) {
	if f.robust != nil {
		return f.robust.Intercept, f.robust.Slope, f.robust.Scale
	}
	return f.ols.Intercept, f.ols.Slope, f.ols.ResidualSD
}

// Finish judges the rule's measure; a residuals rule lists its rows only
// after a second pass.
func (a *LinearAccumulator) Finish() report.Result {
	c := a.check
	f := a.fitted()
	r := c.rule
	var (
		v   = math.NaN()
		msg string
		res report.Result
	)
	switch c.spec.Measure {
	case rules.PairCorrelation, rules.PairPValue:
		t, err := a.Moments.PearsonTest()
		if err != nil {
			msg = "no correlation: " + err.Error()
			break
		}
		v = t.Estimate
		if c.spec.Measure == rules.PairPValue {
			v = t.PValue
		}
		res = NewResult(r, v)
		res.Statistic = &report.Statistic{Name: t.Statistic.Name, Value: report.Number(t.Statistic.Value), N: t.N}
		p := t.PValue
		res.PValue = &p
		msg = fmt.Sprintf("Pearson's r = %s on %s pairs, two-sided p-value %s", sig4(t.Estimate), thousands(t.N), sig4(t.PValue))
	case rules.PairR2:
		if f.olsErr != nil {
			msg = "no least-squares line: " + f.olsErr.Error()
			break
		}
		v = f.ols.RSquared
	case rules.PairSlope, rules.PairIntercept:
		if f.err != nil {
			msg = "no " + f.fitLabel + " line: " + f.err.Error()
			break
		}
		ic, sl, _ := f.line()
		v = sl
		if c.spec.Measure == rules.PairIntercept {
			v = ic
		}
	case rules.PairResiduals:
		msg = "no residuals: "
		if f.err != nil {
			msg += f.err.Error()
		} else {
			msg += "the data could not be read a second time"
		}
	}
	if res.ID == "" {
		res = NewResult(r, v)
	}
	if msg == "" && f.err == nil {
		msg = a.lineText(f)
	}
	res.Message = joinMessage(msg, nonFinite(a.NonFinite))
	res.Pair = a.pairReport(f)
	if f.err == nil {
		ic, sl, _ := f.line()
		res.Estimates = map[string]float64{"intercept": ic, "slope": sl}
		if f.olsErr == nil {
			res.Estimates["r2"] = f.ols.RSquared
		}
	}
	return res
}

// lineText writes the fitted line: "theil-sen line heater_kwh = 52.1 -
// 1.93·outside_temp_c on 1,000 pairs".
func (a *LinearAccumulator) lineText(f *linearFit) string {
	ic, sl, _ := f.line()
	sign, mag := "+", sl
	if sl < 0 {
		sign, mag = "-", -sl
	}
	n := a.Moments.N
	how := ""
	if f.sampled {
		how = fmt.Sprintf(" (fitted on a sample of %s)", thousands(f.kept))
	}
	return fmt.Sprintf("%s line %s = %s %s %s·%s on %s pairs%s", f.fitLabel, a.check.y.name, sig4(ic), sign, sig4(mag),
		a.check.x.name, thousands(n), how)
}

// pairReport is what a linear rule found, for reports and plots.
func (a *LinearAccumulator) pairReport(f *linearFit) *report.Pair {
	p := &report.Pair{Relation: string(rules.RelationLinear), N: a.Moments.N, Points: a.points.points()}
	if a.check.keeps {
		p.Sampled, p.SampleSize, p.Seed = f.sampled, f.kept, a.check.spec.Seed
	}
	if f.err != nil {
		return p
	}
	ic, sl, s := f.line()
	p.Line = &report.Line{Fit: f.fitLabel, Intercept: report.Number(ic), Slope: report.Number(sl), Scale: report.Number(s)}
	if t := f.theil; t != nil && t.Sampled {
		lo, hi := report.Number(t.SlopeLow), report.Number(t.SlopeHigh)
		p.Line.SlopeLow, p.Line.SlopeHigh = &lo, &hi
	}
	return p
}

// SecondPass returns the lister of a residuals rule's flagged rows, or nil
// for the other measures and when no line could be fitted.
func (a *LinearAccumulator) SecondPass() Accumulator {
	c := a.check
	if c.spec.Measure != rules.PairResiduals {
		return nil
	}
	f := a.fitted()
	if f.err != nil {
		return nil
	}
	cut := c.spec.Cutoff
	n := a.Moments.N
	if cut == 0 {
		if c.spec.Residual == rules.ResidualCooks {
			cut = relate.CooksCutoff(n)
		} else {
			cut = relate.BonferroniCutoff(defaultAlpha, n)
		}
	}
	if math.IsNaN(cut) {
		f.err = fmt.Errorf("%s pairs are too few for the default cutoff of %s residuals", thousands(n), c.spec.Residual)
		return nil
	}
	l := &linearLister{first: a, fit: f, cutoff: cut, listing: Offenders{Limit: c.env.MaxRowsListed}, calmE: -1}
	if c.spec.Residual != rules.ResidualStandardized {
		l.calmDX, l.calmE = calmRegion(&f.ols, c.spec.Residual == rules.ResidualCooks, cut)
	}
	return l
}

// calmRegion returns the rows of a least-squares line that a cutoff on
// Cook's distance (cooks) or on |t| cannot flag: those with |x - x̄| <=
// dxMax and a residual |e| <= e0 (relate's CalmCooks and CalmStudentized,
// exact), e0 = -1 when there are none. dxMax is 8 standard deviations of x
// (population), or a leverage of 1/n + 1/4 below 256 rows: almost every row
// of a data set lies within it, and its leverage, at most 1/n + 64/n, makes
// e0 hardly smaller than at x̄. Rows outside are scored.
func calmRegion(line *relate.Line, cooks bool, cutoff float64) (dxMax, e0 float64) {
	dxMax = math.Sqrt(line.Sxx * min(64/float64(line.N), 0.25))
	if cooks {
		return dxMax, line.CalmCooks(dxMax, cutoff)
	}
	return dxMax, line.CalmStudentized(dxMax, cutoff)
}

// defaultAlpha is the level of the Bonferroni outlier test behind the
// default cutoffs of studentized and standardized residuals (common
// practice).
const defaultAlpha = 0.05

// linearLister is the second pass of a residuals rule: it scores each row
// against the fitted line and lists those above the cutoff.
//
// A least-squares rule does not score the rows that cannot be flagged:
// those with |x - x̄| <= calmDX and a residual |e| <= calmE (see
// calmRegion); calmE is -1 when there are none.
type linearLister struct {
	first         *LinearAccumulator
	fit           *linearFit
	cutoff        float64
	calmDX, calmE float64
	rows          pairRows
	judged        int64
	flagged       int64
	listing       Offenders
}

// Observe scores the batch's rows.
func (l *linearLister) Observe(b *source.Batch) error {
	c := l.first.check
	if err := l.rows.read(c.x, c.y, b); err != nil {
		return err
	}
	l.judged += int64(len(l.rows.X))
	xs, ys := l.rows.X, l.rows.Y[:len(l.rows.X)]
	if c.spec.Residual == rules.ResidualStandardized {
		for k, x := range xs {
			l.judge(b, k, x, math.Abs(l.fit.robust.Standardized(x, ys[k])))
		}
		return nil
	}
	line := &l.fit.ols
	cooks := c.spec.Residual == rules.ResidualCooks
	calmDX, calmE := l.calmDX, l.calmE
	for k, x := range xs {
		dx, e := line.Residual(x, ys[k])
		if math.Abs(dx) <= calmDX && math.Abs(e) <= calmE {
			continue
		}
		var score float64
		if cooks {
			score = line.CooksDistance(dx, e)
		} else {
			score = line.AbsStudentized(dx, e)
		}
		l.judge(b, k, x, score)
	}
	return nil
}

// judge counts and lists pair k of the batch, whose x is x, when its
// score is above the cutoff. A score is |t|, D or |e|/s, NaN where it is undefined
// (a row of leverage 1), which is never above.
func (l *linearLister) judge(b *source.Batch, k int, x, score float64) {
	if !(score > l.cutoff) {
		return
	}
	c := l.first.check
	l.flagged++
	i := l.rows.row(k)
	l.listing.Add(score, b.Row(i), func() report.Row {
		ic, sl, _ := l.fit.line()
		row := pairRow(c.env, b, i, c.x, c.y)
		fit := report.Number(ic + sl*x)
		row.Fitted = &fit
		return row
	})
}

// Merge adds other's counts and listing to l.
func (l *linearLister) Merge(other Accumulator) error {
	o, ok := other.(*linearLister)
	if !ok || o.first.check != l.first.check {
		return errMerge(l.first.check.rule, l, other)
	}
	l.judged += o.judged
	l.flagged += o.flagged
	l.listing.Merge(&o.listing)
	return nil
}

// Finish judges the share of rows flagged.
func (l *linearLister) Finish() report.Result {
	a := l.first
	c := a.check
	res := NewResult(c.rule, share(l.flagged, l.judged))
	what := map[rules.ResidualRule]string{
		rules.ResidualStudentized:  "|studentized residual|",
		rules.ResidualCooks:        "Cook's distance",
		rules.ResidualStandardized: "|standardized residual|",
	}[c.spec.Residual]
	res.Message = joinMessage(fmt.Sprintf("%s have %s above %s from the %s", countOf(l.flagged, l.judged, "rows"), what,
		strconv.FormatFloat(l.cutoff, 'g', 4, 64), a.lineText(l.fit)), nonFinite(a.NonFinite))
	res.Offending = offending(l.flagged, &l.listing)
	res.Pair = a.pairReport(l.fit)
	if res.Pair.Line != nil {
		cut := report.Number(l.cutoff)
		res.Pair.Line.Rule, res.Pair.Line.Cutoff = string(c.spec.Residual), &cut
	}
	ic, sl, s := l.fit.line()
	res.Estimates = map[string]float64{"intercept": ic, "slope": sl, "scale": s, "cutoff": l.cutoff}
	return res
}
