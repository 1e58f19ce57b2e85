package report

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"
)

// TextOptions tune the terminal rendering.
type TextOptions struct {
	// Color adds ANSI colours to verdicts. Callers set it only for a
	// terminal and never when NO_COLOR is set.
	Color bool
}

// WriteText writes the report for a person at a terminal: a header, one line
// per rule with its verdict, measure and thresholds, then the offending rows
// of every rule that did not pass, and the overall verdict last.
func WriteText(w io.Writer, r *Report, o TextOptions) error {
	p := &printer{w: w, color: o.Color}
	p.printf("assay %s · policy %s (%s)\n", r.Tool.Version, r.Policy.Name, r.Policy.File)
	rows := "rows"
	if r.Rows == 1 {
		rows = "row"
	}
	p.printf("data: %s %s from %s\n\n", groupDigits(r.Rows), rows, sourceList(r.Sources))

	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, res := range r.Results {
		label := p.label(res)
		measure := res.Measure.Name + " " + formatMeasure(res.Measure.Unit, float64(res.Measure.Value))
		if res.Fit != nil {
			measure = res.Fit.Family + " · " + measure
		}
		limits := thresholds(res.Measure.Unit, res.Tolerance)
		switch res.Status {
		case Error:
			measure, limits = "could not run", res.Error
		case Skipped:
			measure, limits = "skipped", res.Message
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", label, res.ID, measure, limits)
	}
	if err := tw.Flush(); err != nil {
		return err
	}

	for _, res := range r.Results {
		if res.Status != OK || res.Verdict == Pass {
			continue
		}
		p.printf("\n%s %s", p.label(res), res.ID)
		if res.Message != "" {
			p.printf(": %s", res.Message)
		}
		p.printf("\n")
		if res.Fit != nil {
			p.fit(res)
		}
		if res.Extremes != nil {
			p.extremes(res)
		}
		if res.Joint != nil {
			p.joint(res)
		}
		if res.Pair != nil {
			p.pair(res)
		}
		if res.Segments != nil {
			p.segments(res)
		}
		if res.Offending != nil && len(res.Offending.Rows) > 0 {
			p.rows(res)
		}
	}
	p.printf("\nverdict: %s (%d pass, %d warn, %d fail", p.paint(r.Verdict, strings.ToUpper(r.Verdict.String())),
		r.Counts.Pass, r.Counts.Warn, r.Counts.Fail)
	if r.Counts.Error > 0 {
		p.printf(", %d could not run", r.Counts.Error)
	}
	if r.Counts.Skipped > 0 {
		p.printf(", %d skipped", r.Counts.Skipped)
	}
	p.printf(")\n")
	return p.err
}

type printer struct {
	w     io.Writer
	color bool
	err   error
}

func (p *printer) printf(format string, args ...any) {
	if p.err == nil {
		_, p.err = fmt.Fprintf(p.w, format, args...)
	}
}

// label is the fixed-width verdict word of a result; the word carries the
// meaning, colour only repeats it.
func (p *printer) label(res Result) string {
	switch res.Status {
	case Error:
		return p.paintCode("1;35", "ERROR")
	case Skipped:
		return p.paintCode("0;39", "skip ")
	}
	switch res.Verdict {
	case Fail:
		return p.paint(Fail, "FAIL ")
	case Warn:
		return p.paint(Warn, "WARN ")
	}
	return p.paint(Pass, "pass ")
}

func (p *printer) paint(v Verdict, s string) string {
	switch v {
	case Fail:
		return p.paintCode("1;31", s)
	case Warn:
		return p.paintCode("1;33", s)
	}
	return p.paintCode("0;32", s)
}

// paintCode wraps s in the ANSI colour code. Every code of a verdict label
// has four bytes (the default colour of "skip" too) because tabwriter counts
// the escape bytes as width: labels of equal byte length keep the columns of
// the rule lines aligned on a terminal.
func (p *printer) paintCode(code, s string) string {
	if !p.color {
		return s
	}
	return "\x1b[" + code + "m" + s + "\x1b[0m"
}

// rows prints the listed offending rows of res as an indented table.
func (p *printer) rows(res Result) {
	off := res.Offending
	multi := false
	for _, row := range off.Rows {
		if row.Source != "" {
			multi = true
		}
	}
	cols := valueColumns(res)
	var b strings.Builder
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', tabwriter.AlignRight)
	head := []string{"row"}
	if multi {
		head = append(head, "source")
	}
	head = append(head, "line")
	head = append(head, cols...)
	fitted := hasFitted(off.Rows)
	if fitted {
		head = append(head, "fitted")
	}
	head = append(head, "score")
	drivers := hasContributions(off.Rows)
	if drivers {
		head = append(head, "columns contributing most")
	}
	fmt.Fprintf(tw, "  %s\t\n", strings.Join(head, "\t"))
	for _, row := range off.Rows {
		cells := []string{strconv.FormatInt(row.Row, 10)}
		if multi {
			cells = append(cells, row.Source)
		}
		line := "-"
		if row.Line > 0 {
			line = strconv.FormatInt(row.Line, 10)
		}
		cells = append(cells, line)
		for _, c := range cols {
			cells = append(cells, terminalValue(row.Values[c]))
		}
		if fitted {
			cells = append(cells, fittedText(row.Fitted))
		}
		cells = append(cells, strconv.FormatFloat(float64(row.Score), 'g', 6, 64))
		if drivers {
			cells = append(cells, contributionText(row.Contributions))
		}
		fmt.Fprintf(tw, "  %s\t\n", strings.Join(cells, "\t"))
	}
	tw.Flush()
	p.printf("%s", b.String())
	if rest := off.Count - int64(len(off.Rows)); rest > 0 {
		p.printf("  ... and %s more\n", groupDigits(rest))
	}
}

// valueColumns lists the columns shown for offending rows: the rule's
// columns first, then any other column the rows carry, by name.
func valueColumns(res Result) []string {
	seen := map[string]bool{}
	var cols []string
	for _, c := range res.Columns {
		if !seen[c] {
			seen[c] = true
			cols = append(cols, c)
		}
	}
	var extra []string
	for _, row := range res.Offending.Rows {
		for k := range row.Values {
			if !seen[k] {
				seen[k] = true
				extra = append(extra, k)
			}
		}
	}
	slices.Sort(extra)
	return append(cols, extra...)
}

func formatValue(v any) string {
	switch x := v.(type) {
	case nil:
		return "(null)"
	case float64:
		return strconv.FormatFloat(x, 'g', -1, 64)
	case string:
		if x == "" {
			return `""`
		}
		return x
	}
	return fmt.Sprint(v)
}

// terminalValue is formatValue for a terminal table: text that would mislead
// or break the table is shown quoted, with Go escapes.
func terminalValue(v any) string {
	if s, ok := v.(string); ok && needsQuotes(s) {
		return strconv.Quote(s)
	}
	return formatValue(v)
}

// needsQuotes reports whether a text cell is shown quoted so that a person
// sees what it holds: empty, blank at either end (" 42" is not a number),
// spelling the null marker, starting with a quote, invalid UTF-8, or holding
// a character that does not print (a line break or a tab would break the
// table, an escape code would drive the terminal).
func needsQuotes(s string) bool {
	if s == "" || s == "(null)" || s[0] == '"' || strings.TrimSpace(s) != s || !utf8.ValidString(s) {
		return true
	}
	return strings.ContainsFunc(s, func(r rune) bool { return !strconv.IsPrint(r) })
}

// formatMeasure writes a measure value in its unit: shares as percentages,
// counts whole, values with up to six significant digits.
func formatMeasure(unit string, v float64) string {
	switch {
	case math.IsNaN(v):
		return "undefined"
	case math.IsInf(v, 1):
		return "+inf"
	case math.IsInf(v, -1):
		return "-inf"
	}
	switch unit {
	case "share":
		return formatPercent(v)
	case "count":
		return groupDigits(int64(v))
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

func formatPercent(v float64) string {
	pct := v * 100
	if pct != 0 && math.Abs(pct) < 0.01 {
		return strconv.FormatFloat(pct, 'g', 2, 64) + "%"
	}
	s := strconv.FormatFloat(pct, 'f', 2, 64)
	s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	return s + "%"
}

// thresholds writes a tolerance as "warn above 1% · fail above 5%".
func thresholds(unit string, t Tolerance) string {
	var parts []string
	for _, side := range []struct {
		name  string
		limit any
	}{{"warn", t.Warn}, {"fail", t.Fail}} {
		if side.limit == nil {
			continue
		}
		switch l := side.limit.(type) {
		case Number:
			word := "above"
			if t.Direction == "at least" {
				word = "below"
			}
			parts = append(parts, fmt.Sprintf("%s %s %s", side.name, word, formatMeasure(unit, float64(l))))
		case [2]Number:
			parts = append(parts, fmt.Sprintf("%s outside [%s, %s]", side.name,
				formatMeasure(unit, float64(l[0])), formatMeasure(unit, float64(l[1]))))
		}
	}
	if len(parts) == 0 {
		return "no threshold"
	}
	return strings.Join(parts, " · ")
}

func sourceList(sources []Source) string {
	switch len(sources) {
	case 0:
		return "no file"
	case 1:
		return sources[0].Path
	}
	return fmt.Sprintf("%d files", len(sources))
}

// groupDigits writes n with commas between groups of three digits.
func groupDigits(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	if neg {
		s = s[1:]
	}
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// paramSource says where a distribution result's parameters came from: the
// policy, the data, or both.
func paramSource(res Result) string {
	switch {
	case res.Fit.Estimated == 0:
		return "given"
	case res.Fit.Estimated < len(res.Estimates):
		return "partly given, the rest estimated by maximum likelihood"
	}
	return "estimated by maximum likelihood"
}

// fit prints what a distribution rule found: the family and its
// parameters, the test, the sample, the candidates and where the data
// exceed the fit.
func (p *printer) fit(res Result) {
	f := res.Fit
	if len(res.Estimates) > 0 {
		p.printf("  %s: %s (%s)\n", f.Family, estimates(res.Estimates), paramSource(res))
	}
	if res.Statistic != nil && res.PValue != nil {
		p.printf("  test: %s %s = %s, p-value %s, n = %s", f.Test, res.Statistic.Name, sig4(float64(res.Statistic.Value)),
			sig4(*res.PValue), groupDigits(res.Statistic.N))
		if f.DF > 0 {
			p.printf(", %d degrees of freedom", f.DF)
		}
		p.printf(" (%s", f.Method.Kind)
		if f.Method.Replicates > 0 {
			p.printf(", %s replicates, seed %d", groupDigits(int64(f.Method.Replicates)), f.Seed)
		}
		if f.Method.Conservative {
			p.printf(", conservative")
		}
		p.printf(": %s)\n", f.Method.Source)
	}
	if f.Sampled {
		p.printf("  sample of %s of %s values (seeded random sample, seed %d)\n", groupDigits(f.SampleSize), groupDigits(f.N), f.Seed)
	}
	if len(f.Candidates) > 1 {
		p.printf("  candidates, best first by AIC then BIC:\n")
		var b strings.Builder
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		for i, c := range f.Candidates {
			if c.Skipped != "" {
				fmt.Fprintf(tw, "    -\t%s\tskipped: %s\n", c.Family, c.Skipped)
				continue
			}
			fmt.Fprintf(tw, "    %d\t%s\tAIC %s\tBIC %s\tlog-likelihood %s\t%s\n", i+1, c.Family, fixed1(float64(c.AIC)),
				fixed1(float64(c.BIC)), fixed1(float64(c.LogLik)), estimates(c.Estimates))
		}
		tw.Flush()
		p.printf("%s", b.String())
	}
	if len(f.Regions) > 0 {
		p.printf("  where the data exceed the fit most:\n")
		var b strings.Builder
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
		for _, g := range f.Regions {
			count := groupDigits(g.Count) + " values"
			if f.Sampled {
				count = groupDigits(g.Count) + " in the sample"
			}
			fmt.Fprintf(tw, "    %s\t%s of values\t%s expected\t(%s)\n", regionText(g),
				formatPercent(float64(g.Observed)), formatPercent(float64(g.Expected)), count)
		}
		tw.Flush()
		p.printf("%s", b.String())
		switch {
		case res.Offending == nil || len(res.Offending.Rows) == 0:
		case len(f.Cells) > 0:
			p.printf("  rows there (score: the excess share of the row's cell):\n")
		default:
			p.printf("  rows there, most extreme first (score: -log10 of the value's two-sided tail probability):\n")
		}
	}
}

// estimates writes parameters in name order: "mean 3.132, sd 1.65".
func estimates(m map[string]float64) string {
	names := make([]string, 0, len(m))
	for k := range m {
		names = append(names, k)
	}
	slices.Sort(names)
	parts := make([]string, len(names))
	for i, k := range names {
		parts[i] = k + " " + sig4(m[k])
	}
	return strings.Join(parts, ", ")
}

// regionText writes a region: "1.017 to 2.924", "above 5.846", "up to 0",
// "3 to 6" (whole numbers), or a category.
func regionText(g Region) string {
	switch {
	case g.Label != "":
		return strconv.Quote(g.Label)
	case g.Lo != nil && g.Hi != nil && *g.Lo == *g.Hi:
		return sig4(float64(*g.Lo))
	case g.Lo != nil && g.Hi != nil:
		return sig4(float64(*g.Lo)) + " to " + sig4(float64(*g.Hi))
	case g.Lo != nil:
		return "above " + sig4(float64(*g.Lo))
	case g.Hi != nil:
		return "up to " + sig4(float64(*g.Hi))
	}
	return "everywhere"
}

// sig4 writes v with four significant digits.
func sig4(v float64) string {
	if math.IsNaN(v) {
		return "undefined"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// fixed1 writes v with one decimal.
func fixed1(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
