package report

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
)

// markdownRows is how many offending rows the Markdown summary lists per
// rule.
const markdownRows = 5

// WriteMarkdown writes a compact summary of the report in GitHub-flavoured
// Markdown, for pull-request comments and CI job summaries: the verdict and
// counts, a table of the rules that did not pass with their measure and
// thresholds, the first offending rows of each, and the passing rules in a
// collapsed <details> list.
func WriteMarkdown(w io.Writer, r *Report) error {
	p := &printer{w: w}
	verdict := strings.ToUpper(r.Verdict.String())
	p.printf("### assay: %s · policy %s\n\n", verdict, mdText(r.Policy.Name))
	p.printf("**%s** · %s · %s rows from %s · %s", verdict, mdCounts(r.Counts), groupDigits(r.Rows),
		mdSources(r.Sources), mdCode(r.Policy.File))
	if h := r.Policy.Hash; h != "" {
		p.printf(" (%s)", mdCode(h[:min(len(h), len("sha256:")+12)]))
	}
	p.printf("\n\n")

	var open, passed []Result
	for _, res := range r.Results {
		if res.Status == OK && res.Verdict == Pass {
			passed = append(passed, res)
		} else {
			open = append(open, res)
		}
	}
	if len(open) > 0 {
		p.printf("| verdict | rule | measure | thresholds |\n| --- | --- | --- | --- |\n")
		for _, res := range open {
			measure, limits := mdMeasure(res), thresholds(res.Measure.Unit, res.Tolerance)
			switch res.Status {
			case Error:
				measure, limits = "could not run", res.Error
			case Skipped:
				measure, limits = "skipped", res.Message
			}
			p.printf("| %s | %s | %s | %s |\n", mdLabel(res), mdCode(res.ID), mdText(measure), mdText(limits))
		}
		for _, res := range open {
			if res.Status == OK {
				p.mdDetails(res)
			}
		}
	}
	if len(passed) > 0 {
		p.printf("\n<details><summary>%s passed</summary>\n\n", plural(len(passed), "rule"))
		for _, res := range passed {
			p.printf("- %s: %s (%s)\n", mdCode(res.ID), mdText(mdMeasure(res)),
				mdText(thresholds(res.Measure.Unit, res.Tolerance)))
		}
		p.printf("\n</details>\n")
	}
	return p.err
}

// mdDetails writes the message and the first offending rows of a rule that
// ran and did not pass.
func (p *printer) mdDetails(res Result) {
	p.printf("\n**%s %s**", mdLabel(res), mdCode(res.ID))
	if res.Message != "" {
		p.printf(": %s", mdText(res.Message))
	}
	p.printf("\n")
	off := res.Offending
	if off == nil || len(off.Rows) == 0 {
		return
	}
	rows := off.Rows[:min(len(off.Rows), markdownRows)]
	multi, lines := false, false
	for _, row := range rows {
		multi = multi || row.Source != ""
		lines = lines || row.Line > 0
	}
	head, align := []string{"row"}, []string{"---:"}
	if multi {
		head, align = append(head, "source"), append(align, "---")
	}
	if lines {
		head, align = append(head, "line"), append(align, "---:")
	}
	cols := valueColumns(res)
	for _, c := range cols {
		head, align = append(head, mdText(c)), append(align, "---")
	}
	head, align = append(head, "score"), append(align, "---:")
	p.printf("\n| %s |\n| %s |\n", strings.Join(head, " | "), strings.Join(align, " | "))
	for _, row := range rows {
		cells := []string{strconv.FormatInt(row.Row, 10)}
		if multi {
			cells = append(cells, mdText(row.Source))
		}
		if lines {
			line := "-"
			if row.Line > 0 {
				line = strconv.FormatInt(row.Line, 10)
			}
			cells = append(cells, line)
		}
		for _, c := range cols {
			cells = append(cells, mdText(formatValue(row.Values[c])))
		}
		cells = append(cells, strconv.FormatFloat(float64(row.Score), 'g', 6, 64))
		p.printf("| %s |\n", strings.Join(cells, " | "))
	}
	if rest := off.Count - int64(len(rows)); rest > 0 {
		p.printf("\n… and %s more\n", groupDigits(rest))
	}
}

// mdLabel is the verdict word of a result.
func mdLabel(res Result) string {
	switch res.Status {
	case Error:
		return "ERROR"
	case Skipped:
		return "skip"
	}
	return strings.ToUpper(res.Verdict.String())
}

func mdMeasure(res Result) string {
	return res.Measure.Name + " " + formatMeasure(res.Measure.Unit, float64(res.Measure.Value))
}

// mdCounts writes "6 fail, 1 warn, 5 pass", adding the rules that could
// not run or were skipped when there are any.
func mdCounts(c Counts) string {
	s := fmt.Sprintf("%d fail, %d warn, %d pass", c.Fail, c.Warn, c.Pass)
	if c.Error > 0 {
		s += fmt.Sprintf(", %d could not run", c.Error)
	}
	if c.Skipped > 0 {
		s += fmt.Sprintf(", %d skipped", c.Skipped)
	}
	return s
}

func mdSources(sources []Source) string {
	if len(sources) == 1 {
		return mdCode(sources[0].Path)
	}
	return sourceList(sources)
}

func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}

// mdCode writes s as a code span, or as escaped text when it holds a
// character a code span in a table cannot carry (a backtick, a pipe, a
// line break).
func mdCode(s string) string {
	if s == "" || strings.ContainsAny(s, "`|\r\n") || strings.TrimSpace(s) != s {
		return mdText(s)
	}
	return "`" + s + "`"
}

// mdText escapes s for Markdown text inside a table cell or a paragraph:
// line breaks and other control characters become spaces, and the
// characters that start emphasis, links, HTML, entities or a cell border
// are escaped with a backslash (CommonMark allows a backslash before any
// ASCII punctuation).
func mdText(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case unicode.IsControl(r):
			b.WriteByte(' ')
		case strings.ContainsRune("\\`*_[]<>|~&", r):
			b.WriteByte('\\')
			b.WriteRune(r)
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}
