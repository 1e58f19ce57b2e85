package checks

import (
	"fmt"
	"math"

	"github.com/assay-project/assay/checks/relate"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// rankCheck judges a monotonic relation by a rank correlation: Spearman's
// rho (relate.SpearmanTest) or Kendall's tau-b (relate.KendallTest), with
// the two-sided test of no association as R's cor.test computes it. The
// measure is the coefficient or the test's p-value.
//
// Ranks need every pair at once: the pairs with both values finite are
// kept up to the rule's sample size, beyond it a seeded uniform sample of
// that size (rows of smallest key, see pairSample), and the result says
// so. Spearman's rho is an O(n log n) sort, Kendall's tau-b Knight's
// O(n log n) merge sort.
type rankCheck struct {
	rule *rules.Rule
	env  *Env
	x, y column
	spec rules.PairSpec
}

func (c *rankCheck) Rule() *rules.Rule { return c.rule }

func (c *rankCheck) NewAccumulator() Accumulator { return &RankAccumulator{check: c} }

// RankAccumulator is one run of a monotonic rule: the pairs judged and a
// sample of them.
type RankAccumulator struct {
	// N counts the pairs with both values finite; NonFinite the rows left
	// out for a NaN or infinite value.
	N, NonFinite int64
	check        *rankCheck
	rows         pairRows
	kept         *pairSample
}

// Observe offers the batch's pairs to the sample.
func (a *RankAccumulator) Observe(b *source.Batch) error {
	if err := a.rows.read(a.check.x, a.check.y, b); err != nil {
		return err
	}
	a.NonFinite = a.rows.NonFinite
	if len(a.rows.X) == 0 {
		return nil
	}
	a.N += int64(len(a.rows.X))
	return offer(&a.kept, a.check.spec.Sample, a.check.spec.Seed, b, a.rows.Rows, a.rows.X, a.rows.Y)
}

// Merge folds other's counts and sample into a.
func (a *RankAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*RankAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.N += o.N
	a.NonFinite += o.NonFinite
	a.rows.NonFinite = a.NonFinite
	var err error
	a.kept, err = mergeSample(a.kept, o.kept)
	return err
}

// Finish computes the coefficient and its test on the kept pairs.
func (a *RankAccumulator) Finish() report.Result {
	c := a.check
	xs, ys := a.kept.values()
	test := relate.SpearmanTest
	if c.spec.Coefficient == rules.CoefKendall {
		test = relate.KendallTest
	}
	pair := &report.Pair{Relation: string(rules.RelationMonotonic), N: a.N, Sampled: a.kept.sampled(),
		SampleSize: int64(len(xs)), Seed: c.spec.Seed}
	pair.Points = plotSample(xs, ys, c.spec.Seed)
	t, err := test(xs, ys)
	if err != nil {
		res := NewResult(c.rule, math.NaN())
		res.Message = joinMessage("no rank correlation: "+err.Error(), nonFinite(a.NonFinite))
		res.Pair = pair
		return res
	}
	v := t.Estimate
	if c.spec.Measure == rules.PairPValue {
		v = t.PValue
	}
	res := NewResult(c.rule, v)
	res.Statistic = &report.Statistic{Name: t.Statistic.Name, Value: report.Number(t.Statistic.Value), N: t.N}
	p := t.PValue
	res.PValue = &p
	res.Estimates = map[string]float64{coefficientKey[c.spec.Coefficient]: t.Estimate}
	msg := fmt.Sprintf("%s = %s on %s pairs, two-sided p-value %s (%s)", coefficientWord[c.spec.Coefficient], sig4(t.Estimate),
		thousands(t.N), sig4(t.PValue), t.PMethod)
	if pair.Sampled {
		msg += fmt.Sprintf("; a seeded sample of %s of %s pairs", thousands(pair.SampleSize), thousands(a.N))
	}
	res.Message = joinMessage(msg, nonFinite(a.NonFinite))
	res.Pair = pair
	return res
}

var (
	coefficientKey  = map[rules.Coefficient]string{rules.CoefSpearman: "rho", rules.CoefKendall: "tau_b"}
	coefficientWord = map[rules.Coefficient]string{rules.CoefSpearman: "Spearman's rho", rules.CoefKendall: "Kendall's tau-b"}
)

// plotSample returns a seeded uniform sample of at most plotPoints of the
// pairs, for a plot.
func plotSample(xs, ys []float64, seed uint64) *report.Points {
	s, err := newPairSample(plotPoints, seed)
	if err != nil || len(xs) == 0 {
		return nil
	}
	s.add(0, nil, xs, ys) // the pairs' places in the sample stand for rows
	return s.points()
}
