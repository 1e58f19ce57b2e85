package checks

import (
	"math"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// Judge returns the verdict of measure v under tolerance t: fail when the
// fail limit does not allow v, else warn when the warn limit does not, else
// pass. An undefined measure (NaN) fails when any limit is set: a rule that
// cannot be measured has not been met.
func Judge(t rules.Tolerance, v float64) report.Verdict {
	switch {
	case t.Fail != nil && !t.Fail.Allows(v):
		return report.Fail
	case t.Warn != nil && !t.Warn.Allows(v):
		if t.Fail == nil && math.IsNaN(v) {
			return report.Fail
		}
		return report.Warn
	}
	return report.Pass
}

// NewResult starts the result of rule r with measure value v, judged.
func NewResult(r *rules.Rule, v float64) report.Result {
	return report.Result{
		ID:        r.ID,
		Check:     string(r.Kind),
		Columns:   r.Columns,
		Status:    report.OK,
		Verdict:   Judge(r.Tolerance, v),
		Measure:   report.Measure{Name: r.Measure.Name, Value: report.Number(v), Unit: unitName(r.Measure.Unit)},
		Tolerance: ToleranceReport(r.Tolerance),
		Policy:    r.Pos.String(),
	}
}

// Failed is the result of a rule that could not run.
func Failed(r *rules.Rule, err error) report.Result {
	res := NewResult(r, math.NaN())
	res.Status = report.Error
	res.Verdict = report.Pass
	res.Error = err.Error()
	return res
}

func unitName(u rules.Unit) string {
	switch u {
	case rules.UnitShare:
		return "share"
	case rules.UnitCount:
		return "count"
	}
	return "value"
}

// ToleranceReport writes a tolerance the way the report shows it.
func ToleranceReport(t rules.Tolerance) report.Tolerance {
	side := func(l *rules.Limit) any {
		if l == nil {
			return nil
		}
		switch t.Direction {
		case rules.HigherIsWorse:
			return report.Number(l.Hi)
		case rules.LowerIsWorse:
			return report.Number(l.Lo)
		}
		return [2]report.Number{report.Number(l.Lo), report.Number(l.Hi)}
	}
	return report.Tolerance{Direction: t.Direction.String(), Warn: side(t.Warn), Fail: side(t.Fail)}
}
