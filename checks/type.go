package checks

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// typeCheck measures the share of a column's non-null cells that do not
// parse as its declared type: Invalid/Cells (0 when there are no cells).
// The reader does the parsing: a cell that fails is null in the batch and
// listed in Batch.Invalid, so a non-null cell is either a value or listed
// there. Binary inputs carry typed values and never have invalid cells.
type typeCheck struct {
	rule *rules.Rule
	env  *Env
	col  column
	want rules.Type
}

func newTypeCheck(r *rules.Rule, s rules.TypeSpec, env *Env) (Check, error) {
	c, err := bindOne(r, env, "type")
	if err != nil {
		return nil, err
	}
	if !carries(c.typ, s.Type) {
		return nil, fmt.Errorf("column %q holds %s in the data, not %s values", c.name, typeWords(c.typ), s.Type)
	}
	return &typeCheck{rule: r, env: env, col: c, want: s.Type}, nil
}

// carries reports whether values of Arrow type dt are values of the
// declared type t: integers for integer, any number for number, and so on.
func carries(dt arrow.DataType, t rules.Type) bool {
	cl := classOf(dt)
	switch t {
	case rules.TypeAny:
		return true
	case rules.TypeInteger:
		return cl == classInteger
	case rules.TypeNumber:
		return cl == classNumber || cl == classInteger
	case rules.TypeString:
		return cl == classString
	case rules.TypeBoolean:
		return cl == classBoolean
	case rules.TypeTimestamp:
		return dt.ID() == arrow.TIMESTAMP
	case rules.TypeDate:
		return dt.ID() == arrow.DATE32 || dt.ID() == arrow.DATE64
	}
	return false
}

// typeNouns says what a cell of each type must be, for messages.
var typeNouns = map[rules.Type]string{
	rules.TypeInteger:   "integers",
	rules.TypeNumber:    "numbers",
	rules.TypeString:    "strings",
	rules.TypeBoolean:   "booleans (true or false)",
	rules.TypeTimestamp: "RFC 3339 timestamps",
	rules.TypeDate:      "dates (YYYY-MM-DD)",
}

func (c *typeCheck) Rule() *rules.Rule { return c.rule }

func (c *typeCheck) NewAccumulator() Accumulator {
	return &TypeAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// TypeState is the sufficient statistic of the type rule: non-null cells
// (values plus cells that did not parse) and the cells that did not parse.
type TypeState struct {
	Cells   int64
	Invalid int64
}

// TypeAccumulator is one run of the type rule.
type TypeAccumulator struct {
	TypeState
	check   *typeCheck
	listing Offenders
}

// Observe counts the batch's non-null cells and the ones that did not
// parse, listing the first of those (every one scores 1) with their text.
func (a *TypeAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	a.Cells += int64(arr.Len() - arr.NullN())
	cols := []int{a.check.col.index}
	for _, cell := range b.Invalid[a.check.col.index] {
		if cell.Row < 0 || cell.Row >= arr.Len() || arr.IsValid(cell.Row) {
			return fmt.Errorf("column %q: batch lists row %d as not parsed but holds a value there", a.check.col.name, cell.Row)
		}
		a.Cells++
		a.Invalid++
		a.listing.Add(1, b.Row(cell.Row), func() report.Row { return RowAt(a.check.env, b, cell.Row, cols) })
	}
	return nil
}

// Merge adds other's counts and listing to a.
func (a *TypeAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*TypeAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Cells += o.Cells
	a.Invalid += o.Invalid
	a.listing.Merge(&o.listing)
	return nil
}

// Finish judges the share of cells that did not parse.
func (a *TypeAccumulator) Finish() report.Result {
	res := NewResult(a.check.rule, share(a.Invalid, a.Cells))
	noun, ok := typeNouns[a.check.want]
	if !ok {
		noun = "values of the column's type"
	}
	res.Message = fmt.Sprintf("%s fail to parse as %s", countOf(a.Invalid, a.Cells, "non-null cells"), noun)
	res.Offending = offending(a.Invalid, &a.listing)
	return res
}
