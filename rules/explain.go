package rules

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
)

// Explain writes the resolved rules of p as an aligned plain-text table,
// one rule a line in the policy's order: id, check, columns, measure,
// direction, warn and fail thresholds, and what the rule asks (spec).
// Shares are shown as percentages, open sides of an interval as -inf and
// +inf, bounds on time columns as times, and anything unset as "-".
func Explain(w io.Writer, p *Policy) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	noun := "rules"
	if len(p.Rules) == 1 {
		noun = "rule"
	}
	fmt.Fprintf(tw, "policy %s: %d %s\n", p.Name, len(p.Rules), noun)
	fmt.Fprintln(tw, "id\tcheck\tcolumns\tmeasure\tdirection\twarn\tfail\tspec")
	for _, r := range p.Rules {
		cols := "-"
		if len(r.Columns) > 0 {
			cols = strings.Join(r.Columns, ",")
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", r.ID, r.Kind, cols, r.Measure.Name,
			r.Tolerance.Direction, explainLimit(p, r, r.Tolerance.Warn), explainLimit(p, r, r.Tolerance.Fail), explainRule(r))
	}
	if err := tw.Flush(); err != nil {
		return fmt.Errorf("explain policy %s: %w", p.Name, err)
	}
	return nil
}

// explainLimit writes a threshold as its direction reads it.
func explainLimit(p *Policy, r *Rule, l *Limit) string {
	if l == nil {
		return "-"
	}
	switch r.Tolerance.Direction {
	case HigherIsWorse:
		return explainValue(p, r, l.Hi)
	case LowerIsWorse:
		return explainValue(p, r, l.Lo)
	}
	return "[" + explainValue(p, r, l.Lo) + ", " + explainValue(p, r, l.Hi) + "]"
}

// explainValue writes one value of rule r's measure.
func explainValue(p *Policy, r *Rule, v float64) string {
	switch {
	case math.IsInf(v, -1):
		return "-inf"
	case math.IsInf(v, 1):
		return "+inf"
	case r.Measure.Unit == UnitShare:
		return formatPercent(v)
	}
	if s, ok := r.Spec.(SummarySpec); ok && s.Stat.located() && len(r.Columns) == 1 {
		if c := p.Column(r.Columns[0]); c != nil && timed(c.Type) {
			return formatTime(v, c.Type)
		}
	}
	return formatNumber(v)
}

// explainRule writes what a rule asks of the data and on which rows.
func explainRule(r *Rule) string {
	spec := explainSpec(r)
	switch {
	case r.Segment == nil:
		return spec
	case spec == "-":
		return explainSegment(r.Segment)
	}
	return spec + " · " + explainSegment(r.Segment)
}

// explainSpec writes what a rule asks of the data, briefly.
func explainSpec(r *Rule) string {
	switch s := r.Spec.(type) {
	case TypeSpec:
		return s.Type.String()
	case BoundSpec:
		op := map[[2]bool]string{{true, false}: ">=", {true, true}: ">", {false, false}: "<=", {false, true}: "<"}
		return op[[2]bool{s.Bound == KindMinimum, s.Exclusive}] + " " + s.Text
	case EnumSpec:
		vals := make([]string, len(s.Values))
		for i, v := range s.Values {
			vals[i] = v
			if s.Numbers == nil {
				vals[i] = strconv.Quote(v)
			}
		}
		return "in [" + strings.Join(vals, ", ") + "]"
	case PatternSpec:
		return "matches " + s.Pattern
	case LengthSpec:
		if s.Bound == KindMinLength {
			return fmt.Sprintf("length >= %d", s.Length)
		}
		return fmt.Sprintf("length <= %d", s.Length)
	case RowSpec:
		return strings.Join(strings.Fields(s.Expr), " ")
	case ClosedSpec:
		return "only declared columns"
	case DistributionSpec:
		return explainDistribution(s)
	case ExtremesSpec:
		return explainExtremes(s)
	case JointSpec:
		return explainJoint(s)
	case DriftSpec:
		return explainDrift(s)
	case PairSpec:
		return explainPair(s)
	}
	return "-"
}
