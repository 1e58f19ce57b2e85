package checks

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/assay-project/assay/checks/relate"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// maxCells is how many cells of an association a result reports.
const maxCells = 10

// associationCheck judges the association of two categorical columns (text,
// whole numbers or booleans, compared as text) on the rows where both hold
// a value: Pearson's chi-square test of independence without continuity
// correction and Cramér's V (relate.Table.Independence, as R's chisq.test
// with correct = FALSE). The measure is V, or the test's p-value. Memory
// grows with the combinations of values that occur.
type associationCheck struct{ categoryPair }

// categoryPair is a rule on two columns compared as texts.
type categoryPair struct {
	rule *rules.Rule
	env  *Env
	a, b column
}

func (c *categoryPair) Rule() *rules.Rule { return c.rule }

func (c *associationCheck) NewAccumulator() Accumulator {
	return &AssociationAccumulator{check: c, texts: textPairs{intern: map[string]string{}}}
}

// AssociationAccumulator is one run of an association rule: the
// contingency table of the two columns.
type AssociationAccumulator struct {
	Table relate.Table
	check *associationCheck
	texts textPairs
}

// Observe counts the batch's combinations.
func (a *AssociationAccumulator) Observe(b *source.Batch) error {
	return a.texts.each(a.check.a, a.check.b, b, func(_ int, x, y string) { a.Table.Add(x, y) })
}

// Merge adds other's counts to a.
func (a *AssociationAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*AssociationAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Table.Merge(o.Table)
	return nil
}

// Finish tests independence and judges V or the p-value.
func (a *AssociationAccumulator) Finish() report.Result {
	c := a.check
	var n int64
	for _, k := range a.Table.Counts {
		n += k
	}
	pair := &report.Pair{Relation: string(rules.RelationAssociation), N: n}
	as, err := a.Table.Independence()
	if err != nil {
		res := NewResult(c.rule, math.NaN())
		res.Message = "no association to measure: " + err.Error()
		res.Pair = pair
		return res
	}
	v := as.V
	if c.rule.Spec.(rules.PairSpec).Measure == rules.PairPValue {
		v = as.PValue
	}
	res := NewResult(c.rule, v)
	res.Statistic = &report.Statistic{Name: "X-squared", Value: report.Number(as.ChiSquare), N: as.N}
	p := as.PValue
	res.PValue = &p
	res.Estimates = map[string]float64{"cramers_v": as.V, "cramers_v_corrected": as.VCorrected, "df": float64(as.DF),
		"min_expected": as.MinExpected}
	res.Message = fmt.Sprintf("Cramér's V = %s (bias-corrected %s), chi-square %s on %d degrees of freedom, p-value %s, over %d×%d values of %s",
		sig4(as.V), sig4(as.VCorrected), sig4(as.ChiSquare), as.DF, sig4(as.PValue), as.Rows, as.Cols, thousands(n)+" rows")
	if as.MinExpected < 5 {
		res.Message += fmt.Sprintf("; the p-value is rough: the smallest expected count is %s, below 5 (Cochran 1954)", sig4(as.MinExpected))
	}
	pair.Cells = departures(a.Table, as.N)
	res.Pair = pair
	return res
}

// departures returns the cells of table t (of n rows) whose counts depart
// most from independence, by |Pearson residual| (O - E)/sqrt(E), E =
// (row total)(column total)/n, empty cells included; at most maxCells.
func departures(t relate.Table, n int64) []report.PairCell {
	rows, cols := map[string]int64{}, map[string]int64{}
	for cell, k := range t.Counts {
		rows[cell.A] += k
		cols[cell.B] += k
	}
	var out []report.PairCell
	for a, ra := range rows {
		for b, cb := range cols {
			o := t.Counts[relate.Cell{A: a, B: b}]
			e := float64(ra) * float64(cb) / float64(n)
			out = append(out, report.PairCell{A: a, B: b, Observed: o, Expected: report.Number(e),
				Residual: report.Number((float64(o) - e) / math.Sqrt(e))})
		}
	}
	slices.SortFunc(out, func(x, y report.PairCell) int {
		return cmp.Or(cmp.Compare(math.Abs(float64(y.Residual)), math.Abs(float64(x.Residual))),
			strings.Compare(x.A, y.A), strings.Compare(x.B, y.B))
	})
	return out[:min(len(out), maxCells)]
}

// dependencyCheck judges that the first column determines the second:
// each value of A goes with one value of B, on the rows where both hold a
// value (relate.Dependency). Values are compared as text (see cellTexts).
// The measure is the share of those rows in violating groups, every row
// of such a group counted, since which value is right is not known. A
// second pass lists the rows of violating groups, a row scored by how
// rare its B is in its group, 1 - (rows with its B)/(rows of the group),
// so the odd ones out come first; the result lists the groups with their
// values of B. Memory grows with the distinct values of A.
type dependencyCheck struct{ categoryPair }

func (c *dependencyCheck) NewAccumulator() Accumulator {
	return &DependencyAccumulator{check: c, texts: textPairs{intern: map[string]string{}}}
}

// DependencyAccumulator is the first pass of a determines rule.
type DependencyAccumulator struct {
	Dependency relate.Dependency
	check      *dependencyCheck
	texts      textPairs
	found      *relate.DependencyResult
}

// Observe counts the batch's pairs of values.
func (a *DependencyAccumulator) Observe(b *source.Batch) error {
	return a.texts.each(a.check.a, a.check.b, b, func(_ int, x, y string) { a.Dependency.Add(x, y) })
}

// Merge adds other's counts to a.
func (a *DependencyAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*DependencyAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Dependency.Merge(o.Dependency)
	return nil
}

func (a *DependencyAccumulator) result() relate.DependencyResult {
	if a.found == nil {
		r := a.Dependency.Result()
		a.found = &r
	}
	return *a.found
}

// Finish judges the share of rows in violating groups; rows are listed
// after a second pass.
func (a *DependencyAccumulator) Finish() report.Result {
	return a.report(nil)
}

func (a *DependencyAccumulator) report(listing *Offenders) report.Result {
	c := a.check
	d := a.result()
	res := NewResult(c.rule, d.Share)
	groups := "values"
	if len(d.Violations) == 1 {
		groups = "value"
	}
	res.Message = fmt.Sprintf("%s belong to %d %s of %s seen with several values of %s (of %s distinct)",
		countOf(d.ViolatingRows, d.Rows, "rows with both values"), len(d.Violations), groups, c.a.name, c.b.name, thousands(int64(d.Groups)))
	pair := &report.Pair{Relation: string(rules.RelationDetermines), N: d.Rows, ViolationCount: len(d.Violations)}
	for _, v := range d.Violations[:min(len(d.Violations), max(c.env.MaxRowsListed, 0))] {
		rv := report.Violation{A: v.A, Rows: v.Rows}
		for _, vc := range v.Values {
			rv.Values = append(rv.Values, report.ValueCount{Value: vc.B, Rows: vc.Rows})
		}
		pair.Violations = append(pair.Violations, rv)
	}
	res.Pair = pair
	if listing != nil {
		res.Offending = offending(d.ViolatingRows, listing)
	}
	return res
}

// SecondPass returns the lister of the violating groups' rows, or nil
// when A determines B.
func (a *DependencyAccumulator) SecondPass() Accumulator {
	d := a.result()
	if d.ViolatingRows == 0 {
		return nil
	}
	share := make(map[string]map[string]float64, len(d.Violations))
	for _, v := range d.Violations {
		m := make(map[string]float64, len(v.Values))
		for _, vc := range v.Values {
			m[vc.B] = float64(vc.Rows) / float64(v.Rows)
		}
		share[v.A] = m
	}
	return &dependencyLister{first: a, share: share,
		listing: Offenders{Limit: a.check.env.MaxRowsListed}}
}

// dependencyLister is the second pass of a determines rule.
type dependencyLister struct {
	first   *DependencyAccumulator
	share   map[string]map[string]float64 // violating A -> B -> share of the group's rows
	texts   textPairs
	listing Offenders
}

// Observe lists the batch's rows of violating groups.
func (l *dependencyLister) Observe(b *source.Batch) error {
	c := l.first.check
	return l.texts.each(c.a, c.b, b, func(i int, x, y string) {
		m, ok := l.share[x]
		if !ok {
			return
		}
		l.listing.Add(1-m[y], b.Row(i), func() report.Row { return pairRow(c.env, b, i, c.a, c.b) })
	})
}

// Merge adds other's listing to l.
func (l *dependencyLister) Merge(other Accumulator) error {
	o, ok := other.(*dependencyLister)
	if !ok || o.first.check != l.first.check {
		return errMerge(l.first.check.rule, l, other)
	}
	l.listing.Merge(&o.listing)
	return nil
}

// Finish adds the listed rows to the first pass's result.
func (l *dependencyLister) Finish() report.Result { return l.first.report(&l.listing) }

// textPairs reads the rows of a batch where two columns both hold a
// value, as texts (see cellTexts). With an intern map the texts handed on
// are interned copies, safe to keep after the batch is released; without,
// they may point into the batch.
type textPairs struct {
	intern map[string]string
	first  []string
	has    []bool
	sa, sb scratch
}

// each calls f with each row of b where both columns hold a value.
func (t *textPairs) each(ca, cb column, b *source.Batch, f func(i int, a, b string)) error {
	aa, ab, err := bothIn(ca, cb, b)
	if err != nil {
		return err
	}
	n := aa.Len()
	t.first = slices.Grow(t.first[:0], n)[:n]
	t.has = slices.Grow(t.has[:0], n)[:n]
	clear(t.has)
	cellTexts(ca, aa, &t.sa, func(i int, s string) { t.first[i], t.has[i] = t.keep(s), true })
	cellTexts(cb, ab, &t.sb, func(i int, s string) {
		if t.has[i] {
			f(i, t.first[i], t.keep(s))
		}
	})
	return nil
}

// keep returns an interned copy of s.
func (t *textPairs) keep(s string) string {
	if t.intern == nil {
		return s
	}
	if k, ok := t.intern[s]; ok {
		return k
	}
	k := strings.Clone(s)
	t.intern[k] = k
	return k
}
