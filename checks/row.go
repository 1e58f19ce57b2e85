package checks

import (
	"errors"
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks/rowexpr"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// rowCheck measures the share of rows for which a row expression is false:
// False/Rows (0 for no rows). A row where the expression read a null and
// could not decide is not false (it is counted in Rows, not in Evaluated),
// as with an SQL CHECK constraint; package rowexpr states the semantics.
//
// Each false row is listed with a score: when the expression is a single
// comparison of numbers or instants (a <= b, ts < d, x == 0; not !=), how
// far it is from holding, |left − right| (in seconds for instants), so the
// worst violations are listed first; otherwise 1.
type rowCheck struct {
	rule *rules.Rule
	env  *Env
	prog *rowexpr.Program
	cols []int // the columns the rule reads, indices in env.Schema, for listings
}

func newRowCheck(r *rules.Rule, s rules.RowSpec, env *Env) (Check, error) {
	types := make(map[string]arrow.DataType, len(r.Columns))
	cols := make([]int, 0, len(r.Columns))
	for _, name := range r.Columns {
		c, err := bindColumn(env, name)
		if err != nil {
			return nil, err
		}
		types[name] = c.typ
		cols = append(cols, c.index)
	}
	prog, err := rowexpr.Compile(s.Expr, types)
	if err != nil {
		var e *rowexpr.Error
		if errors.As(err, &e) {
			return nil, &ExprError{Spec: s, Err: e}
		}
		return nil, err
	}
	return &rowCheck{rule: r, env: env, prog: prog, cols: cols}, nil
}

// ExprError is a row expression that does not compile against the data's
// column types.
type ExprError struct {
	Spec rules.RowSpec
	Err  *rowexpr.Error
}

// ExprLineCol returns where the problem is inside the expression text:
// 1-based line and column (in characters), or 0, 0 when it concerns the
// whole expression.
func (e *ExprError) ExprLineCol() (line, col int) { return e.Err.Line, e.Err.Col }

// Pos returns where the problem is in the policy file: the character the
// expression error points at, or the start of the expression when it
// concerns the whole of it.
func (e *ExprError) Pos() rules.Pos {
	if e.Err.Line == 0 {
		return e.Spec.ExprPos
	}
	return e.Spec.PosAt(e.Err.Offset)
}

func (e *ExprError) Error() string {
	switch {
	case e.Err.Line == 0:
		return "expression: " + e.Err.Msg
	case e.Pos().Line == 0:
		return fmt.Sprintf("expression, at %d:%d of it: %s", e.Err.Line, e.Err.Col, e.Err.Msg)
	}
	return fmt.Sprintf("expression, at %s: %s", e.Pos(), e.Err.Msg)
}

func (e *ExprError) Unwrap() error { return e.Err }

func (c *rowCheck) Rule() *rules.Rule { return c.rule }

func (c *rowCheck) NewAccumulator() Accumulator {
	return &RowAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// RowState is the sufficient statistic of a row rule: rows seen, rows on
// which the expression was decided (true or false), and rows on which it
// was false.
type RowState struct {
	Rows      int64
	Evaluated int64
	False     int64
}

// RowAccumulator is one run of a row rule.
type RowAccumulator struct {
	RowState
	check   *rowCheck
	listing Offenders
	eval    *rowexpr.Evaluator // made on the first batch
	truth   []rowexpr.Truth
	gap     []float64
}

// Observe evaluates the expression on every row of the batch and lists
// the false ones. With the batch's dictionary codes, what the expression
// says of a string column alone is computed once per dictionary entry
// (rowexpr.Evaluator.EvalCodes).
func (a *RowAccumulator) Observe(b *source.Batch) error {
	if a.eval == nil {
		a.eval = a.check.prog.NewEvaluator()
	}
	n := int(b.Record.NumRows())
	if cap(a.truth) < n {
		a.truth = make([]rowexpr.Truth, n)
	}
	truth, gap := a.truth[:n], []float64(nil)
	if a.check.prog.Measured() { // else every false row scores 1
		if cap(a.gap) < n {
			a.gap = make([]float64, n)
		}
		gap = a.gap[:n]
	}
	if err := a.eval.EvalCodes(b.Record, b.Codes, truth, gap); err != nil {
		a.eval.Release()
		return err
	}
	a.Rows += int64(n)
	for i, t := range truth {
		if t == rowexpr.Unknown {
			continue
		}
		a.Evaluated++
		if t == rowexpr.False {
			a.False++
			score := 1.0
			if gap != nil {
				score = gap[i]
			}
			a.listing.Add(score, b.Row(i), func() report.Row { return RowAt(a.check.env, b, i, a.check.cols) })
		}
	}
	return nil
}

// Merge adds other's counts and listing to a, and drops the dictionaries
// other's evaluator holds (rowexpr.Evaluator.Release).
func (a *RowAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*RowAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Rows += o.Rows
	a.Evaluated += o.Evaluated
	a.False += o.False
	a.listing.Merge(&o.listing)
	if o.eval != nil {
		o.eval.Release()
	}
	return nil
}

// Finish judges the share of rows on which the expression is false. It
// drops the dictionaries the accumulator's evaluator holds.
func (a *RowAccumulator) Finish() report.Result {
	if a.eval != nil {
		a.eval.Release()
	}
	res := NewResult(a.check.rule, share(a.False, a.Rows))
	res.Message = countOf(a.False, a.Rows, "rows") + " break the rule"
	if skipped := a.Rows - a.Evaluated; skipped > 0 {
		res.Message += fmt.Sprintf("; %s read a null and are not counted", countOf(skipped, a.Rows, "rows"))
	}
	res.Offending = offending(a.False, &a.listing)
	return res
}
