package report

import (
	"fmt"
	"strconv"
	"strings"
	"text/tabwriter"
)

// This file renders, for a person, what pair rules and segmented rules add
// to a result.

// pair prints what a pair rule found: the line and how rows are flagged,
// the sample, the cells of an association or the violating groups of a
// dependency.
func (p *printer) pair(res Result) {
	pr := res.Pair
	if l := pr.Line; l != nil && len(res.Columns) == 2 {
		p.printf("  line: %s = %s %s·%s (%s, scale %s, n = %s)\n", res.Columns[1], sig4(float64(l.Intercept)),
			signed(float64(l.Slope)), res.Columns[0], l.Fit, sig4(float64(l.Scale)), groupDigits(pr.N))
		if l.SlopeLow != nil && l.SlopeHigh != nil {
			p.printf("  the exact Theil-Sen slope lies in [%s, %s] with 95%% confidence (slopes of sampled pairs of points)\n",
				sig4(float64(*l.SlopeLow)), sig4(float64(*l.SlopeHigh)))
		}
		if l.Cutoff != nil {
			p.printf("  rows flagged: %s above %s\n", residualWords[l.Rule], sig4(float64(*l.Cutoff)))
		}
	}
	if pr.Sampled {
		p.printf("  fitted on a seeded sample of %s of %s pairs (seed %d)\n", groupDigits(pr.SampleSize), groupDigits(pr.N), pr.Seed)
	}
	if len(pr.Cells) > 0 {
		p.printf("  combinations furthest from independence:\n")
		var b strings.Builder
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "    %s\t%s\tobserved\texpected\tresidual\n", res.Columns[0], res.Columns[1])
		for _, c := range pr.Cells {
			fmt.Fprintf(tw, "    %s\t%s\t%s\t%s\t%s\n", c.A, c.B, groupDigits(c.Observed), sig4(float64(c.Expected)), sig4(float64(c.Residual)))
		}
		tw.Flush()
		p.printf("%s", b.String())
	}
	if len(pr.Violations) > 0 {
		p.printf("  values of %s seen with several values of %s, most rows first:\n", res.Columns[0], res.Columns[1])
		for _, v := range pr.Violations {
			vals := make([]string, len(v.Values))
			for i, vc := range v.Values {
				vals[i] = fmt.Sprintf("%s (%s)", strconv.Quote(vc.Value), groupDigits(vc.Rows))
			}
			p.printf("    %s: %s rows: %s\n", strconv.Quote(v.A), groupDigits(v.Rows), strings.Join(vals, ", "))
		}
		if rest := pr.ViolationCount - len(pr.Violations); rest > 0 {
			p.printf("    ... and %s more\n", groupDigits(int64(rest)))
		}
	}
}

var residualWords = map[string]string{
	"studentized":  "|studentized residual|",
	"cooks":        "Cook's distance",
	"standardized": "|residual| / robust scale",
}

// signed writes "+ 1.5" or "- 1.5".
func signed(v float64) string {
	if v < 0 {
		return "- " + sig4(-v)
	}
	return "+ " + sig4(v)
}

// segments prints the rows a segmented rule judged and its groups, worst
// first.
func (p *printer) segments(res Result) {
	s := res.Segments
	if len(s.By) == 0 || s.Counts == nil {
		return // the message says on which rows the rule was judged
	}
	if s.Where != "" {
		p.printf("  judged on %s of %s rows, where %s\n", groupDigits(s.Rows), groupDigits(s.RowsRead), s.Where)
	}
	p.printf("  groups by %s: %s (%d fail, %d warn, %d pass", strings.Join(s.By, ", "), groupDigits(int64(s.GroupCount)),
		s.Counts.Fail, s.Counts.Warn, s.Counts.Pass)
	if s.Counts.Error > 0 {
		p.printf(", %d could not be judged", s.Counts.Error)
	}
	p.printf("), worst first:\n")
	var b strings.Builder
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	for _, g := range s.Groups {
		keys := make([]string, len(s.By))
		for i, c := range s.By {
			keys[i] = c + "=" + formatValue(g.Key[c])
		}
		state := g.Verdict.String()
		measure := formatMeasure(res.Measure.Unit, float64(g.Measure))
		if g.Status != OK {
			state, measure = g.Status.String(), g.Error
		}
		rows := groupDigits(g.Rows) + " rows"
		if g.Rows == 1 {
			rows = "1 row"
		}
		fmt.Fprintf(tw, "    %s\t%s\t%s\t%s\t%s offending\n", strings.Join(keys, ", "), state, measure, rows, groupDigits(g.Offending))
	}
	tw.Flush()
	p.printf("%s", b.String())
	if rest := s.GroupCount - len(s.Groups); rest > 0 {
		p.printf("    ... and %s more\n", groupDigits(int64(rest)))
	}
}

// hasFitted reports whether any listed row carries a fitted value.
func hasFitted(rows []Row) bool {
	for _, r := range rows {
		if r.Fitted != nil {
			return true
		}
	}
	return false
}

// fittedText writes a row's fitted value, or "-".
func fittedText(f *Number) string {
	if f == nil {
		return "-"
	}
	return strconv.FormatFloat(float64(*f), 'g', 6, 64)
}
