package report

import (
	"bytes"
	"strings"
	"testing"
)

func TestMarkdownGolden(t *testing.T) {
	var b bytes.Buffer
	if err := WriteMarkdown(&b, sampleReport()); err != nil {
		t.Fatal(err)
	}
	golden(t, "sample.md", b.Bytes())
}

// TestMarkdownShape checks the parts of the summary against the report:
// one table row per rule that did not pass, a row table for each that ran,
// and every passing rule in the collapsed list.
func TestMarkdownShape(t *testing.T) {
	rep := sampleReport()
	var b bytes.Buffer
	if err := WriteMarkdown(&b, rep); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	summary, passing, ok := strings.Cut(out, "<details>")
	if !ok {
		t.Fatalf("no <details> section:\n%s", out)
	}
	if !strings.HasPrefix(out, "### assay: FAIL") || !strings.Contains(out, "2 fail, 1 warn, 2 pass, 1 could not run, 1 skipped") {
		t.Errorf("verdict line or counts missing:\n%s", out)
	}
	for _, res := range rep.Results {
		row := "| " + mdLabel(res) + " | `" + res.ID + "` |"
		ran := res.Status == OK
		if got, want := strings.Contains(summary, row), !(ran && res.Verdict == Pass); got != want {
			t.Errorf("%s: table row present %v, want %v", res.ID, got, want)
		}
		if got, want := strings.Contains(passing, "`"+res.ID+"`"), ran && res.Verdict == Pass; got != want {
			t.Errorf("%s: in the passing list %v, want %v", res.ID, got, want)
		}
	}
	for _, want := range []string{
		"| 6017 | day2.csv | 18 | P\\<1\\> | 10 | 2 |", // markup escaped
		"| 30 | day1.csv | 31 | a\\|b  | (null) | 2 |", // pipe escaped, control character a space
		"… and 1,542 more",
		"<details><summary>2 rules passed</summary>",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("summary lacks %q:\n%s", want, out)
		}
	}
	if n := strings.Count(out, "| row |"); n != 3 {
		t.Errorf("%d row tables, want 3 (the failures and the warning)", n)
	}
}

func TestMarkdownEscape(t *testing.T) {
	tests := []struct{ in, text, code string }{
		{"plain", "plain", "`plain`"},
		{"a|b", `a\|b`, `a\|b`},
		{"*x* _y_ <b> [l](u) ~s~ &amp; `c`", `\*x\* \_y\_ \<b\> \[l\](u) \~s\~ \&amp; \` + "`c\\`", `\*x\* \_y\_ \<b\> \[l\](u) \~s\~ \&amp; \` + "`c\\`"},
		{"line\nbreak\r\tx", "line break  x", "line break  x"},
		{" padded ", " padded ", " padded "},
		{"", "", ""},
		{"columns.a_b.max", `columns.a\_b.max`, "`columns.a_b.max`"},
	}
	for _, tt := range tests {
		if got := mdText(tt.in); got != tt.text {
			t.Errorf("mdText(%q) = %q, want %q", tt.in, got, tt.text)
		}
		if got := mdCode(tt.in); got != tt.code {
			t.Errorf("mdCode(%q) = %q, want %q", tt.in, got, tt.code)
		}
	}
}

// TestMarkdownAllPass checks the summary of a run where every rule passed:
// no table of problems, only the collapsed list.
func TestMarkdownAllPass(t *testing.T) {
	rep := sampleReport()
	var kept []Result
	for _, res := range rep.Results {
		if res.Status == OK && res.Verdict == Pass {
			kept = append(kept, res)
		}
	}
	rep.Results, rep.Verdict, rep.Counts = kept, Pass, Counts{Pass: len(kept)}
	var b bytes.Buffer
	if err := WriteMarkdown(&b, rep); err != nil {
		t.Fatal(err)
	}
	out := b.String()
	if strings.Contains(out, "| verdict |") || !strings.HasPrefix(out, "### assay: PASS") || !strings.Contains(out, "2 rules passed") {
		t.Errorf("summary of a passing run:\n%s", out)
	}
}
