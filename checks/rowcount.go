package checks

import (
	"fmt"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// rowCountCheck measures the number of data rows, judged against the
// rule's bounds.
type rowCountCheck struct {
	rule *rules.Rule
}

func newRowCountCheck(r *rules.Rule, _ *Env) (Check, error) {
	return &rowCountCheck{rule: r}, nil
}

func (c *rowCountCheck) Rule() *rules.Rule { return c.rule }

func (c *rowCountCheck) NewAccumulator() Accumulator { return &RowCountAccumulator{check: c} }

// RowCountState is the sufficient statistic of table.rows.
type RowCountState struct {
	Rows int64
}

// RowCountAccumulator is one run of table.rows.
type RowCountAccumulator struct {
	RowCountState
	check *rowCountCheck
}

// Observe counts the batch's rows.
func (a *RowCountAccumulator) Observe(b *source.Batch) error {
	a.Rows += b.Record.NumRows()
	return nil
}

// Merge adds other's rows.
func (a *RowCountAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*RowCountAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Rows += o.Rows
	return nil
}

// Finish judges the row count.
func (a *RowCountAccumulator) Finish() report.Result {
	res := NewResult(a.check.rule, float64(a.Rows))
	res.Message = fmt.Sprintf("the data has %s rows", thousands(a.Rows))
	if a.Rows == 1 {
		res.Message = "the data has 1 row"
	}
	return res
}
