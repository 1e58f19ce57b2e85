package checks

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks/baseline"
	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// driftSample is how many values of a numeric column a drift rule keeps
// for its two-sample measures: beyond it they run on a seeded uniform
// sample of that many rows (bottomk.Sample) (as the distribution rule, rules.DefaultSample).
const driftSample = rules.DefaultSample

// driftCategories is how many distinct values a drift rule counts on the
// data side; past it the rest are counted together (own choice).
const driftCategories = 100_000

// driftMoves is how many value ranges a drift result lists.
const driftMoves = 5

// driftCheck compares a column with a baseline file or a reference
// dataset, on one measure (see rules.DriftMeasure and package
// checks/baseline for the formulas).
type driftCheck struct {
	rule *rules.Rule
	spec rules.DriftSpec
	env  *Env
	col  column
	base driftBase
}

// driftBase is the side a drift rule compares with.
type driftBase struct {
	rows, nulls int64
	numbers     bool
	count       int64
	mean, std   float64
	lo, hi      float64           // smallest and largest value
	dist        baseline.Weighted // the sketch's values and weights, or the reference's values
	bins        []baseline.Bin
	shares      []float64 // of bins
	cats        map[string]int64
	other       int64 // values in categories not listed in cats
	exact       bool  // dist holds every value
}

func newDriftCheck(r *rules.Rule, s rules.DriftSpec, env *Env) (Check, error) {
	col, err := bindOne(r, env, "drift")
	if err != nil {
		return nil, err
	}
	numeric := col.class == classInteger || col.class == classNumber || col.class == classTime
	if !numeric && col.class != classString && col.class != classBoolean {
		return nil, fmt.Errorf("drift does not apply to column %q of type %s", col.name, typeWords(col.typ))
	}
	c := &driftCheck{rule: r, spec: s, env: env, col: col}
	if s.Baseline != "" {
		err = c.loadBaseline()
	} else {
		err = c.loadReference(numeric)
	}
	if err != nil {
		return nil, err
	}
	switch s.Measure {
	case rules.DriftKS, rules.DriftPSI, rules.DriftWasserstein, rules.DriftJensenShannon, rules.DriftLocation, rules.DriftScale:
		if !numeric || !c.base.numbers {
			return nil, fmt.Errorf("%s applies to numeric columns; column %q holds categories (use chi-square or new-categories)", s.Measure, col.name)
		}
	case rules.DriftChiSquare, rules.DriftNewCategories:
		if numeric || c.base.numbers {
			return nil, fmt.Errorf("%s applies to string and boolean columns; column %q holds numbers (use ks, psi or location)", s.Measure, col.name)
		}
	}
	return c, nil
}

// relative resolves a path written in the policy against its folder.
func (c *driftCheck) relative(p string) string {
	if filepath.IsAbs(p) || c.env.Policy == nil {
		return p
	}
	return filepath.Join(filepath.Dir(c.env.Policy.File), p)
}

func (c *driftCheck) loadBaseline() error {
	f, err := baseline.Read(c.relative(c.spec.Baseline))
	if err != nil {
		return err
	}
	bc := f.Column(c.col.name)
	if bc == nil {
		return fmt.Errorf("baseline %s has no column %q; remake it with assay baseline", c.spec.Baseline, c.col.name)
	}
	b := driftBase{rows: bc.Rows, nulls: bc.Nulls}
	if n := bc.Numbers; n != nil {
		b.numbers, b.count, b.mean, b.std = true, n.Count, n.Mean, n.Std
		b.dist, b.bins = n.Sketch.Weighted(), n.Bins
		b.lo, b.hi = n.Min, n.Max
	}
	if cc := bc.Categories; cc != nil {
		b.cats, b.other = map[string]int64{}, cc.Other
		for _, t := range cc.Top {
			b.cats[t.Value] = t.Count
		}
		b.count = b.rows - b.nulls
	}
	c.base = b
	c.base.finish()
	return nil
}

// loadReference reads the reference dataset's column in full.
func (c *driftCheck) loadReference(numeric bool) error {
	opts := source.Options{Types: map[string]arrow.DataType{c.col.name: c.col.typ}, Allocator: c.env.Mem}
	set, err := source.Open([]string{c.relative(c.spec.Reference)}, opts)
	if err != nil {
		return fmt.Errorf("reference: %w", err)
	}
	defer set.Close()
	side := newDriftSide(numeric)
	err = set.Scan(context.Background(), []string{c.col.name}, func(b *source.Batch) error {
		defer b.Release()
		side.observe(b, b.Record.Column(0))
		return nil
	})
	if err != nil {
		return fmt.Errorf("reference: %w", err)
	}
	b := driftBase{rows: side.Rows, nulls: side.Nulls, numbers: numeric, count: side.Count, mean: side.Mean,
		std: side.std(), cats: side.Cats, other: side.Other, exact: side.Sample == nil || side.Sample.Complete()}
	if numeric {
		b.dist = baseline.Unit(side.Sample.Values(0))
		if len(b.dist.X) > 0 {
			b.bins = baseline.QuantileBins(b.dist, baseline.Bins)
			b.lo, b.hi = b.dist.X[0], b.dist.X[len(b.dist.X)-1]
		}
	}
	c.base = b
	c.base.finish()
	return nil
}

func (b *driftBase) finish() {
	for _, bin := range b.bins {
		b.shares = append(b.shares, bin.Share)
	}
}

func (c *driftCheck) Rule() *rules.Rule { return c.rule }

func (c *driftCheck) NewAccumulator() Accumulator {
	return &DriftAccumulator{check: c, DriftSide: newDriftSide(c.base.numbers)}
}

// DriftSide is the sufficient statistic of one side of a drift rule: row
// and null counts, the moments (Welford), a seeded uniform sample of the
// values of a numeric column (keyed by data-row number, seed
// rules.DefaultSeed), and the counts of a text column's values.
type DriftSide struct {
	Rows, Nulls, Count int64
	Mean, M2           float64
	Sample             *bottomk.Sample
	Cats               map[string]int64
	Other              int64 // values past driftCategories distinct ones
	// keys holds every key of Cats under itself: values are counted under
	// the copy Cats keeps, never under the batch's text (see observe).
	keys map[string]string
}

func newDriftSide(numeric bool) DriftSide {
	if numeric {
		s, _ := bottomk.New(driftSample, 1, rules.DefaultSeed) // the sizes are valid
		return DriftSide{Sample: s}
	}
	return DriftSide{Cats: map[string]int64{}, keys: map[string]string{}}
}

// observe adds the values of arr, the drift column of batch b.
func (s *DriftSide) observe(b *source.Batch, arr arrow.Array) {
	s.Rows += int64(arr.Len())
	for i := range arr.Len() {
		if arr.IsNull(i) {
			s.Nulls++
			continue
		}
		if s.Sample == nil {
			s.Count++
			// v points into the batch: a Go map assignment stores its
			// string key anew, so counting under v would keep the text
			// of the last batch each category came from alive.
			v := baseline.Text(arr, i)
			if k, ok := s.keys[v]; ok {
				s.Cats[k]++
			} else if len(s.Cats) < driftCategories {
				k := strings.Clone(v)
				s.keys[k] = k
				s.Cats[k] = 1
			} else {
				s.Other++
			}
			continue
		}
		x := baseline.Number(arr, i)
		if math.IsNaN(x) || math.IsInf(x, 0) {
			continue
		}
		s.Count++
		d := x - s.Mean
		s.Mean += d / float64(s.Count)
		s.M2 += d * (x - s.Mean)
		s.Sample.Offer(b.Row(i), []float64{x})
	}
}

func (s *DriftSide) std() float64 {
	if s.Count < 2 {
		return math.NaN()
	}
	return math.Sqrt(s.M2 / float64(s.Count-1))
}

// DriftAccumulator is one run of a drift rule.
type DriftAccumulator struct {
	DriftSide
	check *driftCheck
}

func (a *DriftAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	a.observe(b, arr)
	return nil
}

// Merge folds another run's side in: moments by Chan, Golub & LeVeque
// (1979), samples by bottomk.Sample.Merge, counts by sum.
func (a *DriftAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*DriftAccumulator)
	if !ok || o.check != a.check {
		return fmt.Errorf("rule %s: cannot merge a %T", a.check.rule.ID, other)
	}
	a.Rows += o.Rows
	a.Nulls += o.Nulls
	if n := a.Count + o.Count; n > 0 {
		d := o.Mean - a.Mean
		a.M2 += o.M2 + d*d*float64(a.Count)*float64(o.Count)/float64(n)
		a.Mean += d * float64(o.Count) / float64(n)
		a.Count = n
	}
	if a.Sample != nil {
		return a.Sample.Merge(o.Sample)
	}
	for k, v := range o.Cats {
		if kept, ok := a.keys[k]; ok {
			a.Cats[kept] += v
		} else if len(a.Cats) < driftCategories {
			a.keys[k] = k
			a.Cats[k] = v
		} else {
			a.Other += v
		}
	}
	a.Other += o.Other
	return nil
}

// Finish computes the measure and judges it.
func (a *DriftAccumulator) Finish() report.Result {
	c := a.check
	b := &c.base
	d := &report.Drift{Against: "baseline", Source: c.spec.Baseline, BaseRows: b.rows, Rows: a.Rows}
	if c.spec.Reference != "" {
		d.Against, d.Source = "reference", c.spec.Reference
	}
	var (
		v     float64
		p     *float64
		stat  *report.Statistic
		words []string
	)
	if a.Sample != nil {
		cur := baseline.Unit(a.Sample.Values(0))
		d.Exact = b.exact && a.Sample.Complete()
		shares := baseline.Shares(b.bins, cur.X)
		sd := a.std()
		switch c.spec.Measure {
		case rules.DriftKS:
			v = baseline.KS2(b.dist, cur)
			pv := baseline.KS2PValue(v, b.count, a.Count)
			how := "asymptotic"
			if !d.Exact {
				how = "asymptotic, one side a sketch or sample"
			} else if exact, ok := baseline.KS2ExactPValue(v, b.count, a.Count); ok {
				pv, how = exact, "exact"
			}
			p = &pv
			stat = &report.Statistic{Name: "D", Value: report.Number(v), N: a.Count}
			words = append(words, fmt.Sprintf("p-value %.3g (%s)", pv, how))
		case rules.DriftPSI:
			v = baseline.PSI(b.shares, shares)
		case rules.DriftJensenShannon:
			v = baseline.JensenShannon(b.shares, shares)
		case rules.DriftWasserstein:
			v = baseline.Wasserstein1(b.dist, cur) / b.std
			stat = &report.Statistic{Name: "W1", Value: report.Number(v * b.std), N: a.Count}
		case rules.DriftLocation:
			v = math.Abs(a.Mean-b.mean) / b.std
			words = append(words, fmt.Sprintf("mean %s, baseline %s", fmtNum(a.Mean), fmtNum(b.mean)))
		case rules.DriftScale:
			v = math.Abs(math.Log(sd / b.std))
			words = append(words, fmt.Sprintf("std %s, baseline %s", fmtNum(sd), fmtNum(b.std)))
		case rules.DriftNullShare:
			v = nullShareChange(a.DriftSide, b)
		}
		if len(b.bins) > 0 && len(cur.X) > 0 {
			for _, m := range baseline.Moves(b.bins, b.shares, shares, driftMoves) {
				d.Moves = append(d.Moves, report.DriftMove{Lower: report.Number(m.Lower), Upper: report.Number(m.Upper),
					BaseShare: report.Number(m.Base), Share: report.Number(m.Cur)})
			}
			d.Histogram = driftHistogram(b, cur.X)
			m := d.Moves[0]
			words = append(words, fmt.Sprintf("most moved: (%s, %s] held %s of the baseline, now %s",
				fmtNum(float64(m.Lower)), fmtNum(float64(m.Upper)), fmtPct(float64(m.BaseShare)), fmtPct(float64(m.Share))))
		}
		if k, ok := baseline.PowerOfTen(sd / b.std); ok {
			d.Units = "x" + strings.TrimSuffix(fmtNum(math.Pow(10, float64(k))), ".0")
			words = append(words, fmt.Sprintf("std %s times the baseline's: likely change of units", d.Units))
		}
	} else {
		d.Exact = b.exact || b.other == 0
		newCats, vanished := categoryChanges(a.Cats, b.cats)
		d.NewCategories, d.Vanished = newCats, vanished
		switch c.spec.Measure {
		case rules.DriftChiSquare:
			h, err := chiSquareCategories(a.DriftSide, b)
			if err != nil {
				return Failed(c.rule, err)
			}
			v = h.PValue
			p = &h.PValue
			stat = &report.Statistic{Name: fmt.Sprintf("chi-square (df %d)", h.DF), Value: report.Number(h.Statistic), N: a.Count}
		case rules.DriftNewCategories:
			var n int64
			for _, nc := range newCats {
				n += nc.Count
			}
			if a.Count > 0 {
				v = float64(n) / float64(a.Count)
			}
			if b.other > 0 {
				words = append(words, fmt.Sprintf("the baseline lists its top %d categories; %d of its values are in others, which may include these", len(b.cats), b.other))
			}
		case rules.DriftNullShare:
			v = nullShareChange(a.DriftSide, b)
		}
		if len(newCats) > 0 {
			var list []string
			for _, nc := range newCats[:min(5, len(newCats))] {
				list = append(list, fmt.Sprintf("%q (%d rows)", nc.Value, nc.Count))
			}
			words = append(words, fmt.Sprintf("%d new categories: %s", len(newCats), strings.Join(list, ", ")))
		}
		if len(vanished) > 0 {
			words = append(words, fmt.Sprintf("%d categories vanished", len(vanished)))
		}
	}
	if c.spec.Measure == rules.DriftNullShare {
		words = append(words, fmt.Sprintf("null share %s, baseline %s", fmtPct(share(a.Nulls, a.Rows)), fmtPct(share(b.nulls, b.rows))))
	}
	res := NewResult(c.rule, v)
	res.PValue, res.Statistic, res.Drift = p, stat, d
	res.Message = strings.Join(words, "; ")
	return res
}

// SecondPass lists the rows whose category the baseline does not have,
// for a new-categories rule that found any; nil otherwise.
func (a *DriftAccumulator) SecondPass() Accumulator {
	if a.check.spec.Measure != rules.DriftNewCategories || a.Sample != nil {
		return nil
	}
	res := a.Finish()
	if len(res.Drift.NewCategories) == 0 {
		return nil
	}
	return &driftLister{first: a, result: res, listing: Offenders{Limit: a.check.env.MaxRowsListed}}
}

// driftLister lists the rows of new categories in a second pass.
type driftLister struct {
	first   *DriftAccumulator
	result  report.Result
	listing Offenders
}

func (l *driftLister) Observe(b *source.Batch) error {
	c := l.first.check
	arr, err := c.col.in(b)
	if err != nil {
		return err
	}
	cols := []int{c.col.index}
	for i := range arr.Len() {
		if arr.IsNull(i) {
			continue
		}
		if _, ok := c.base.cats[baseline.Text(arr, i)]; !ok {
			l.listing.Add(1, b.Row(i), func() report.Row { return RowAt(c.env, b, i, cols) })
		}
	}
	return nil
}

func (l *driftLister) Merge(other Accumulator) error {
	o, ok := other.(*driftLister)
	if !ok {
		return fmt.Errorf("rule %s: cannot merge a %T", l.first.check.rule.ID, other)
	}
	l.listing.Merge(&o.listing)
	return nil
}

func (l *driftLister) Finish() report.Result {
	res := l.result
	res.Offending = l.listing.Report()
	return res
}

// nullShareChange is |null share of the data - null share of the base|.
func nullShareChange(s DriftSide, b *driftBase) float64 {
	return math.Abs(share(s.Nulls, s.Rows) - share(b.nulls, b.rows))
}

// categoryChanges returns the data's categories the base does not list
// and the base's categories the data lacks, most frequent first.
func categoryChanges(cur, base map[string]int64) (added, vanished []report.DriftCategory) {
	for v, n := range cur {
		if _, ok := base[v]; !ok {
			added = append(added, report.DriftCategory{Value: v, Count: n})
		}
	}
	for v, n := range base {
		if _, ok := cur[v]; !ok {
			vanished = append(vanished, report.DriftCategory{Value: v, Count: n})
		}
	}
	order := func(a, b report.DriftCategory) int {
		if a.Count != b.Count {
			return cmp.Compare(b.Count, a.Count)
		}
		return cmp.Compare(a.Value, b.Value)
	}
	slices.SortFunc(added, order)
	slices.SortFunc(vanished, order)
	return added, vanished
}

// chiSquareCategories tests homogeneity over the base's listed
// categories, plus one cell for everything else (the base's other values
// and the data's categories the base does not list) when it is not empty.
func chiSquareCategories(s DriftSide, b *driftBase) (baseline.Homogeneity, error) {
	keys := make([]string, 0, len(b.cats))
	for k := range b.cats {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	var base, cur []int64
	restCur := s.Other
	for k, n := range s.Cats {
		if _, ok := b.cats[k]; !ok {
			restCur += n
		}
	}
	for _, k := range keys {
		base = append(base, b.cats[k])
		cur = append(cur, s.Cats[k])
	}
	if b.other > 0 || restCur > 0 {
		base = append(base, b.other)
		cur = append(cur, restCur)
	}
	return baseline.ChiSquareHomogeneity(base, cur)
}

func fmtNum(x float64) string { return fmt.Sprintf("%.4g", x) }

func fmtPct(x float64) string { return fmt.Sprintf("%.2f%%", 100*x) }
