package report

import (
	"fmt"
	"strings"
)

// pair adds what a pair rule found: the relation, the rows judged and the
// sample, the fitted line, and the tables of an association's cells or of
// the values a determines rule found with several partners.
func (v *ruleView) pair(res Result) {
	pr := res.Pair
	v.Facts = append(v.Facts, fact{"relation", pr.Relation})
	judged := groupDigits(pr.N) + " rows with both values"
	if pr.Sampled {
		judged += fmt.Sprintf("; fitted on a seeded sample of %s (seed %d)", groupDigits(pr.SampleSize), pr.Seed)
	}
	v.Facts = append(v.Facts, fact{"judged", judged})
	if l := pr.Line; l != nil && len(res.Columns) >= 2 {
		line := fmt.Sprintf("%s = %s + %s × %s (%s), residual scale %s", res.Columns[1], sig4(float64(l.Intercept)),
			sig4(float64(l.Slope)), res.Columns[0], l.Fit, sig4(float64(l.Scale)))
		if l.SlopeLow != nil && l.SlopeHigh != nil {
			line += fmt.Sprintf("; slope between %s and %s (95%%, from sampled pairs)", sig4(float64(*l.SlopeLow)), sig4(float64(*l.SlopeHigh)))
		}
		v.Facts = append(v.Facts, fact{"line", line})
		if l.Rule != "" && l.Cutoff != nil {
			v.Facts = append(v.Facts, fact{"flags rows", l.Rule + " residual score above " + sig4(float64(*l.Cutoff))})
		}
	}
	if len(pr.Cells) > 0 && len(res.Columns) >= 2 {
		t := &table{
			Caption: "Cells furthest from independence",
			Head:    []string{res.Columns[0], res.Columns[1], "rows", "expected", "Pearson residual"},
			Num:     []bool{false, false, true, true, true},
		}
		for _, c := range pr.Cells {
			t.Rows = append(t.Rows, []string{c.A, c.B, groupDigits(c.Observed), sig4(float64(c.Expected)), sig4(float64(c.Residual))})
		}
		v.Tables = append(v.Tables, t)
	}
	if len(pr.Violations) > 0 && len(res.Columns) >= 2 {
		t := &table{
			Caption: fmt.Sprintf("Values of %s seen with several values of %s", res.Columns[0], res.Columns[1]),
			Head:    []string{res.Columns[0], "rows", res.Columns[1] + " (rows)"},
			Num:     []bool{false, true, false},
		}
		for _, vi := range pr.Violations {
			parts := make([]string, len(vi.Values))
			for i, vc := range vi.Values {
				parts[i] = vc.Value + " (" + groupDigits(vc.Rows) + ")"
			}
			t.Rows = append(t.Rows, []string{vi.A, groupDigits(vi.Rows), strings.Join(parts, ", ")})
		}
		if rest := pr.ViolationCount - len(pr.Violations); rest > 0 {
			t.Note = fmt.Sprintf("… and %s more", groupDigits(int64(rest)))
		}
		v.Tables = append(v.Tables, t)
	}
}

// segments adds on which rows a rule was judged and, for a rule by
// groups, the groups, worst first.
func (v *ruleView) segments(res Result) {
	s := res.Segments
	if s.Where != "" {
		v.Facts = append(v.Facts, fact{"where", s.Where})
	}
	v.Facts = append(v.Facts, fact{"rows judged", fmt.Sprintf("%s of %s read", groupDigits(s.Rows), groupDigits(s.RowsRead))})
	if len(s.By) == 0 {
		return
	}
	groups := fmt.Sprintf("%s groups by %s", groupDigits(int64(s.GroupCount)), strings.Join(s.By, ", "))
	if c := s.Counts; c != nil {
		groups += fmt.Sprintf(": %d fail, %d warn, %d pass", c.Fail, c.Warn, c.Pass)
		if c.Error > 0 {
			groups += fmt.Sprintf(", %d could not run", c.Error)
		}
		if c.Skipped > 0 {
			groups += fmt.Sprintf(", %d skipped", c.Skipped)
		}
	}
	v.Facts = append(v.Facts, fact{"groups", groups})
	if len(s.Groups) == 0 {
		return
	}
	t := &table{Caption: "Groups, worst first"}
	t.Head, t.Num = append([]string{}, s.By...), make([]bool, len(s.By))
	t.Head = append(t.Head, "verdict", "rows", "measure", "offending", "note")
	t.Num = append(t.Num, false, true, true, true, false)
	for _, g := range s.Groups {
		row := make([]string, 0, len(t.Head))
		for _, b := range s.By {
			row = append(row, formatValue(g.Key[b]))
		}
		verdict, note := strings.ToUpper(g.Verdict.String()), g.Message
		if g.Status != OK {
			verdict, note = statusBadge(g.Status).Word, g.Error+g.Message
		}
		row = append(row, verdict, groupDigits(g.Rows), formatMeasure(res.Measure.Unit, float64(g.Measure)),
			groupDigits(g.Offending), note)
		if len(g.Estimates) > 0 {
			row[len(row)-1] = strings.TrimSpace(note + " " + estimates(g.Estimates))
		}
		t.Rows = append(t.Rows, row)
	}
	v.Tables = append(v.Tables, t)
}
