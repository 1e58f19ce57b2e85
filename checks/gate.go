package checks

import (
	"github.com/assay-project/assay/checks/rowexpr"
	"github.com/assay-project/assay/engine/source"
)

// RowJudge is implemented by the accumulators of row-level rules, the rules
// that judge rows one by one: type, nulls, the value constraints (minimum,
// maximum and their exclusive forms, enum, pattern, minLength, maxLength)
// and row expressions on each row alone, unique and key against the
// duplicated values the earlier passes found. A gate uses them to split the
// data into the rows that break no such rule and the rows that break some.
//
// After the last pass the engine may feed every batch once more to Reject,
// which sets bad[i] for each row i of b that the rule counts as offending
// (it never clears an entry): exactly the rows its result counts, whatever
// the tolerance, so a rule that passes with a few offending rows still
// rejects those rows. Reject leaves the accumulator's counts as they were.
type RowJudge interface {
	Reject(b *source.Batch, bad []bool) error
}

// Reject marks the rows whose cell did not parse as the column's type.
func (a *TypeAccumulator) Reject(b *source.Batch, bad []bool) error {
	if _, err := a.check.col.in(b); err != nil {
		return err
	}
	for _, cell := range b.Invalid[a.check.col.index] {
		bad[cell.Row] = true
	}
	return nil
}

// Reject marks the rows whose value is missing (and not merely unparsed).
func (a *NullsAccumulator) Reject(b *source.Batch, bad []bool) error {
	arr, err := a.check.col.in(b)
	if err != nil || arr.NullN() == 0 {
		return err
	}
	invalid := invalidRows(b, a.check.col.index)
	v := validOf(arr)
	for i := range arr.Len() {
		if !v.at(i) && !invalid[i] {
			bad[i] = true
		}
	}
	return nil
}

// Reject marks the rows whose value breaks the rule.
func (a *ValueAccumulator) Reject(b *source.Batch, bad []bool) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	a.check.scan(arr, &a.scratch, func(i int, _ float64) { bad[i] = true })
	return nil
}

// Reject marks the rows on which the expression is false; a row where it
// read a null is not rejected, as it is not counted.
func (a *RowAccumulator) Reject(b *source.Batch, bad []bool) error {
	if a.eval == nil {
		a.eval = a.check.prog.NewEvaluator()
	}
	n := int(b.Record.NumRows())
	if cap(a.truth) < n {
		a.truth, a.gap = make([]rowexpr.Truth, n), make([]float64, n)
	}
	truth := a.truth[:n]
	if err := a.eval.Eval(b.Record, truth, nil); err != nil {
		return err
	}
	for i, t := range truth {
		if t == rowexpr.False {
			bad[i] = true
		}
	}
	return nil
}

// Reject marks every row of a duplicated value (or key combination), the
// first of each group as well as the others: the rule cannot tell which of
// them is the right one.
func (a *DuplicateAccumulator) Reject(b *source.Batch, bad []bool) error {
	return a.eachSuspect(b, func(i int, key []byte) {
		if g := a.groups[string(key)]; g != nil && g.count > 1 {
			bad[i] = true
		}
	})
}
