package checks

import (
	"fmt"
	"slices"
	"strings"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// schemaCheck is a rule on which columns the data has (closed, required)
// rather than on its values: the answer is known once the data's columns
// are, when the check is compiled. Its measure is the number of columns
// found wanting.
type schemaCheck struct {
	rule  *rules.Rule
	found []string // the columns the rule counts, in data or policy order
	// none and some write the message when no column, or these, are found.
	none string
	some func(cols string, n int) string
}

func (c *schemaCheck) Rule() *rules.Rule { return c.rule }

func (c *schemaCheck) NewAccumulator() Accumulator {
	return &SchemaAccumulator{check: c, SchemaState: SchemaState{Columns: c.found}}
}

// SchemaState is the sufficient statistic of closed and required: the
// columns found wanting (undeclared, or absent). The measure is how many.
type SchemaState struct {
	Columns []string
}

// SchemaAccumulator is one run of closed or required.
type SchemaAccumulator struct {
	SchemaState
	check *schemaCheck
}

// Observe has nothing to learn from values.
func (a *SchemaAccumulator) Observe(*source.Batch) error { return nil }

// Merge checks that other is of the same check; both know the same columns.
func (a *SchemaAccumulator) Merge(other Accumulator) error {
	if o, ok := other.(*SchemaAccumulator); !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	return nil
}

// Finish judges the number of columns found.
func (a *SchemaAccumulator) Finish() report.Result {
	res := NewResult(a.check.rule, float64(len(a.Columns)))
	res.Message = a.check.none
	if len(a.Columns) > 0 {
		q := make([]string, len(a.Columns))
		for i, c := range a.Columns {
			q[i] = fmt.Sprintf("%q", c)
		}
		res.Message = a.check.some(strings.Join(q, ", "), len(a.Columns))
	}
	return res
}

// notIn lists the names that set does not hold, in order.
func notIn(names, set []string) []string {
	var out []string
	for _, n := range names {
		if !slices.Contains(set, n) {
			out = append(out, n)
		}
	}
	return out
}

// plural is "s" unless n is 1.
func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// isAre is "is" when n is 1, else "are".
func isAre(n int) string {
	if n == 1 {
		return "is"
	}
	return "are"
}
