package checks

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// valueCheck is a rule that each value of one column meets or breaks on its
// own: minimum, maximum and their exclusive forms, enum, pattern, minLength
// and maxLength. Its measure is the share of the column's non-null,
// well-typed values that break it. (Cells that did not parse are null in
// the batch; the type rule counts them.)
type valueCheck struct {
	rule *rules.Rule
	env  *Env
	col  column
	// scan calls hit for every non-null value of a that breaks the rule,
	// with its row index in a and its score (how far off it is, higher is
	// worse). s holds scratch buffers of the run.
	scan func(a arrow.Array, s *scratch, hit func(i int, score float64))
	// breaks says what breaking values do, for the message: "are above 150".
	breaks string
}

// scratch holds an accumulator's reusable buffers for widening narrow
// Arrow arrays.
type scratch struct {
	ints   []int64
	floats []float64
}

func (c *valueCheck) Rule() *rules.Rule { return c.rule }

func (c *valueCheck) NewAccumulator() Accumulator {
	return &ValueAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// ValueState is the sufficient statistic of the rules on single values:
// the non-null values seen and how many of them break the rule. The
// measure is Breaking/Values (0 when Values is 0).
type ValueState struct {
	Values   int64
	Breaking int64
}

// ValueAccumulator is one run of a rule on single values.
type ValueAccumulator struct {
	ValueState
	check   *valueCheck
	listing Offenders
	scratch scratch
}

// Observe counts the batch's non-null values of the column and the ones
// that break the rule, keeping the worst for the listing.
func (a *ValueAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	a.Values += int64(arr.Len() - arr.NullN())
	cols := []int{a.check.col.index}
	a.check.scan(arr, &a.scratch, func(i int, score float64) {
		a.Breaking++
		a.listing.Add(score, b.Row(i), func() report.Row { return RowAt(a.check.env, b, i, cols) })
	})
	return nil
}

// Merge adds other's counts and listing to a.
func (a *ValueAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*ValueAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Values += o.Values
	a.Breaking += o.Breaking
	a.listing.Merge(&o.listing)
	return nil
}

// Finish judges the share of breaking values.
func (a *ValueAccumulator) Finish() report.Result {
	res := NewResult(a.check.rule, share(a.Breaking, a.Values))
	res.Message = fmt.Sprintf("%s %s", countOf(a.Breaking, a.Values, "values"), a.check.breaks)
	res.Offending = offending(a.Breaking, &a.listing)
	return res
}
