package checks

import (
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// nullsCheck measures the share of rows whose value in one column is
// missing: Nulls/Rows (0 for no rows). A cell that was written but did not
// parse as the column's type is not missing (it is null in the batch and
// listed in Batch.Invalid); the type rule counts it.
type nullsCheck struct {
	rule *rules.Rule
	env  *Env
	col  column
}

func newNullsCheck(r *rules.Rule, env *Env) (Check, error) {
	c, err := bindOne(r, env, "nulls")
	if err != nil {
		return nil, err
	}
	return &nullsCheck{rule: r, env: env, col: c}, nil
}

func (c *nullsCheck) Rule() *rules.Rule { return c.rule }

func (c *nullsCheck) NewAccumulator() Accumulator {
	return &NullsAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// NullsState is the sufficient statistic of the nulls rule: rows seen and
// rows whose value is missing.
type NullsState struct {
	Rows  int64
	Nulls int64
}

// NullsAccumulator is one run of the nulls rule.
type NullsAccumulator struct {
	NullsState
	check   *nullsCheck
	listing Offenders
}

// Observe counts the batch's rows and its missing values, listing the
// first rows with a missing value (every one scores 1).
func (a *NullsAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	a.Rows += int64(arr.Len())
	if arr.NullN() == 0 {
		return nil
	}
	invalid := invalidRows(b, a.check.col.index)
	cols := []int{a.check.col.index}
	v := validOf(arr)
	for i := range arr.Len() {
		if v.at(i) || invalid[i] {
			continue
		}
		a.Nulls++
		a.listing.Add(1, b.Row(i), func() report.Row { return RowAt(a.check.env, b, i, cols) })
	}
	return nil
}

// invalidRows is the set of rows of b whose cell in column col did not
// parse; nil when there are none.
func invalidRows(b *source.Batch, col int) map[int]bool {
	cells := b.Invalid[col]
	if len(cells) == 0 {
		return nil
	}
	m := make(map[int]bool, len(cells))
	for _, c := range cells {
		m[c.Row] = true
	}
	return m
}

// Merge adds other's counts and listing to a.
func (a *NullsAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*NullsAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Rows += o.Rows
	a.Nulls += o.Nulls
	a.listing.Merge(&o.listing)
	return nil
}

// Finish judges the share of missing values.
func (a *NullsAccumulator) Finish() report.Result {
	res := NewResult(a.check.rule, share(a.Nulls, a.Rows))
	res.Message = countOf(a.Nulls, a.Rows, "rows") + " are missing a value"
	res.Offending = offending(a.Nulls, &a.listing)
	return res
}
