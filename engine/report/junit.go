package report

import (
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"
)

// JUnitOptions tune the JUnit rendering.
type JUnitOptions struct {
	// Strict reports a warning as a failure, as --strict counts it in the
	// exit code.
	Strict bool
}

// junitRows is how many offending rows a failure's text lists.
const junitRows = 10

// WriteJUnit writes the report as JUnit XML, the test-result format most CI
// systems display: one <testsuite> for the policy and one <testcase> per
// rule, classname the check kind and name the rule id.
//
// A failing rule has a <failure> whose message is the result's message and
// whose text adds the measure, the thresholds and the first offending rows.
// A warning passes, with a <system-out> saying so (a <failure> of type
// "warn" when o.Strict). A rule that could not run has an <error>, a rule
// that did not apply is <skipped/>. Test cases carry no time: rules are
// evaluated together in the same passes over the data, so only the suite's
// time is known. Text that XML 1.0 cannot hold (control characters,
// invalid UTF-8) is left out.
func WriteJUnit(w io.Writer, r *Report, o JUnitOptions) error {
	var failures int
	for _, res := range r.Results {
		if failed(res, o.Strict) {
			failures++
		}
	}
	x := &xmlWriter{w: w}
	x.raw(`<?xml version="1.0" encoding="UTF-8"?>` + "\n")
	counts := fmt.Sprintf(`tests="%d" failures="%d" errors="%d" skipped="%d" time="%s"`,
		len(r.Results), failures, r.Counts.Error, r.Counts.Skipped, strconv.FormatFloat(r.Duration, 'f', 3, 64))
	x.raw(`<testsuites name="` + xmlAttr(r.Tool.Name) + `" ` + counts + ">\n")
	x.raw(`  <testsuite name="` + xmlAttr(r.Policy.Name) + `" ` + counts)
	if !r.Started.IsZero() {
		x.raw(` timestamp="` + r.Started.UTC().Format("2006-01-02T15:04:05") + `"`)
	}
	x.raw(">\n    <properties>\n")
	props := [][2]string{
		{"verdict", r.Verdict.String()},
		{"policy.file", r.Policy.File},
		{"policy.hash", r.Policy.Hash},
		{"rows", strconv.FormatInt(r.Rows, 10)},
	}
	for _, s := range r.Sources {
		props = append(props, [2]string{"source", s.Path})
	}
	props = append(props, [2]string{"tool", strings.TrimSpace(r.Tool.Name + " " + r.Tool.Version)})
	for _, p := range props {
		x.raw(`      <property name="` + xmlAttr(p[0]) + `" value="` + xmlAttr(p[1]) + "\"/>\n")
	}
	x.raw("    </properties>\n")
	for _, res := range r.Results {
		x.testcase(res, o.Strict)
	}
	x.raw("  </testsuite>\n</testsuites>\n")
	return x.err
}

// failed reports whether a result counts as a JUnit failure.
func failed(res Result, strict bool) bool {
	return res.Status == OK && (res.Verdict == Fail || strict && res.Verdict == Warn)
}

type xmlWriter struct {
	w   io.Writer
	err error
}

func (x *xmlWriter) raw(s string) {
	if x.err == nil {
		_, x.err = io.WriteString(x.w, s)
	}
}

func (x *xmlWriter) testcase(res Result, strict bool) {
	x.raw(`    <testcase classname="` + xmlAttr(res.Check) + `" name="` + xmlAttr(res.ID) + `"`)
	switch {
	case res.Status == Error:
		x.raw(">\n      <error message=\"" + xmlAttr(res.Error) + "\" type=\"error\">" +
			xmlText("rule "+res.ID+" could not run: "+res.Error+where(res)) + "</error>\n    </testcase>\n")
	case res.Status == Skipped:
		x.raw(">\n      <skipped message=\"" + xmlAttr(res.Message) + "\"/>\n    </testcase>\n")
	case failed(res, strict):
		x.raw(">\n      <failure message=\"" + xmlAttr(summary(res)) + "\" type=\"" + res.Verdict.String() + "\">" +
			xmlText(details(res, junitRows)) + "</failure>\n    </testcase>\n")
	case res.Verdict == Warn:
		x.raw(">\n      <system-out>" + xmlText("warning (passes unless --strict): "+details(res, junitRows)) +
			"</system-out>\n    </testcase>\n")
	default:
		x.raw("/>\n")
	}
}

// summary is the one-line account of a result: its message, or its measure
// when it has none.
func summary(res Result) string {
	if res.Message != "" {
		return res.Message
	}
	return measureText(res)
}

// measureText writes "null share 12.5% (warn above 10% · fail above 30%)".
func measureText(res Result) string {
	return res.Measure.Name + " " + formatMeasure(res.Measure.Unit, float64(res.Measure.Value)) +
		" (" + thresholds(res.Measure.Unit, res.Tolerance) + ")"
}

// details is the account of a rule that did not pass: message, measure and
// thresholds, where the rule is in the policy, and up to most offending
// rows as a table.
func details(res Result, most int) string {
	var b strings.Builder
	if res.Message != "" {
		b.WriteString(res.Message + "\n")
	}
	b.WriteString(measureText(res) + where(res) + "\n")
	if res.Offending != nil && len(res.Offending.Rows) > 0 {
		first := res
		off := *res.Offending
		off.Rows = off.Rows[:min(len(off.Rows), most)]
		first.Offending = &off
		fmt.Fprintf(&b, "offending rows (%s in all, worst first):\n", groupDigits(off.Count))
		p := &printer{w: &b}
		p.rows(first)
	}
	return b.String()
}

// where names the rule's place in the policy, when known.
func where(res Result) string {
	if res.Policy == "" {
		return ""
	}
	return "; rule at " + res.Policy
}

// xmlAttr escapes s for an XML attribute value in double quotes. Line breaks
// and tabs are written as character references, so that they survive
// attribute-value normalisation.
func xmlAttr(s string) string {
	return xmlEscape(s, true)
}

// xmlText escapes s for XML character data.
func xmlText(s string) string {
	return xmlEscape(s, false)
}

// xmlEscape escapes the markup characters of s and leaves out what XML 1.0
// does not allow in a document: control characters other than tab, line
// feed and carriage return, surrogates, U+FFFE and U+FFFF, and bytes that
// are not UTF-8 (XML 1.0, 5th edition, section 2.2, production Char).
func xmlEscape(s string, inAttr bool) string {
	var b strings.Builder
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == utf8.RuneError && size == 1, !xmlChar(r):
			// left out
		case r == '&':
			b.WriteString("&amp;")
		case r == '<':
			b.WriteString("&lt;")
		case r == '>':
			b.WriteString("&gt;")
		case r == '"' && inAttr:
			b.WriteString("&quot;")
		case r == '\r':
			b.WriteString("&#13;")
		case (r == '\n' || r == '\t') && inAttr:
			fmt.Fprintf(&b, "&#%d;", r)
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// xmlChar reports whether r is a character XML 1.0 allows.
func xmlChar(r rune) bool {
	switch {
	case r == '\t' || r == '\n' || r == '\r':
		return true
	case r < 0x20:
		return false
	case r <= 0xD7FF:
		return true
	case r < 0xE000:
		return false
	case r <= 0xFFFD:
		return true
	}
	return r >= 0x10000 && r <= 0x10FFFF
}
