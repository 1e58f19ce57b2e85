package report

import (
	"bytes"
	"encoding/xml"
	"strings"
	"testing"
)

func TestJUnitGolden(t *testing.T) {
	for _, tt := range []struct {
		name   string
		strict bool
	}{{"sample.junit.xml", false}, {"sample-strict.junit.xml", true}} {
		t.Run(tt.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := WriteJUnit(&b, sampleReport(), JUnitOptions{Strict: tt.strict}); err != nil {
				t.Fatal(err)
			}
			golden(t, tt.name, b.Bytes())
		})
	}
}

// junitDoc is what a CI system reads from the XML.
type junitDoc struct {
	XMLName xml.Name `xml:"testsuites"`
	Tests   int      `xml:"tests,attr"`
	Suites  []struct {
		Name     string `xml:"name,attr"`
		Tests    int    `xml:"tests,attr"`
		Failures int    `xml:"failures,attr"`
		Errors   int    `xml:"errors,attr"`
		Skipped  int    `xml:"skipped,attr"`
		Cases    []struct {
			Class   string `xml:"classname,attr"`
			Name    string `xml:"name,attr"`
			Failure *struct {
				Message string `xml:"message,attr"`
				Type    string `xml:"type,attr"`
				Text    string `xml:",chardata"`
			} `xml:"failure"`
			Error *struct {
				Message string `xml:"message,attr"`
			} `xml:"error"`
			Skipped   *struct{} `xml:"skipped"`
			SystemOut string    `xml:"system-out"`
		} `xml:"testcase"`
	} `xml:"testsuite"`
}

// TestJUnitRead reads the XML back as a CI system would and checks that
// counts, outcomes and texts match the report, with and without --strict.
func TestJUnitRead(t *testing.T) {
	tests := []struct {
		strict bool
		// outcome of each rule of sampleReport, in order: f failure,
		// e error, s skipped, o passed with output, p passed
		outcomes string
		failures int
	}{
		{false, "fpfopes", 2},
		{true, "fpffpes", 3},
	}
	for _, tt := range tests {
		var b bytes.Buffer
		rep := sampleReport()
		if err := WriteJUnit(&b, rep, JUnitOptions{Strict: tt.strict}); err != nil {
			t.Fatal(err)
		}
		var doc junitDoc
		if err := xml.Unmarshal(b.Bytes(), &doc); err != nil {
			t.Fatalf("strict %v: not well-formed XML: %v", tt.strict, err)
		}
		if len(doc.Suites) != 1 {
			t.Fatalf("strict %v: %d test suites, want 1", tt.strict, len(doc.Suites))
		}
		s := doc.Suites[0]
		if s.Name != rep.Policy.Name || s.Tests != len(rep.Results) || doc.Tests != s.Tests ||
			s.Failures != tt.failures || s.Errors != 1 || s.Skipped != 1 {
			t.Errorf("strict %v: suite %q tests %d failures %d errors %d skipped %d, want %q %d %d 1 1",
				tt.strict, s.Name, s.Tests, s.Failures, s.Errors, s.Skipped, rep.Policy.Name, len(rep.Results), tt.failures)
		}
		var got strings.Builder
		for i, c := range s.Cases {
			res := rep.Results[i]
			if c.Name != res.ID || c.Class != res.Check {
				t.Errorf("case %d is %s/%s, want %s/%s", i, c.Class, c.Name, res.Check, res.ID)
			}
			switch {
			case c.Failure != nil:
				got.WriteByte('f')
				if c.Failure.Message != res.Message || c.Failure.Type != res.Verdict.String() {
					t.Errorf("%s: failure %q of type %q, want %q of type %q", res.ID, c.Failure.Message, c.Failure.Type, res.Message, res.Verdict)
				}
				if !strings.Contains(c.Failure.Text, res.Message) || !strings.Contains(c.Failure.Text, res.Measure.Name) {
					t.Errorf("%s: failure text lacks the message or the measure:\n%s", res.ID, c.Failure.Text)
				}
			case c.Error != nil:
				got.WriteByte('e')
				if want := strings.ToValidUTF8(res.Error, ""); c.Error.Message != want {
					t.Errorf("%s: error %q, want %q", res.ID, c.Error.Message, want)
				}
			case c.Skipped != nil:
				got.WriteByte('s')
			case c.SystemOut != "":
				got.WriteByte('o')
				if !strings.Contains(c.SystemOut, res.Message) {
					t.Errorf("%s: output %q lacks the message", res.ID, c.SystemOut)
				}
			default:
				got.WriteByte('p')
			}
		}
		if got.String() != tt.outcomes {
			t.Errorf("strict %v: outcomes %s, want %s", tt.strict, got.String(), tt.outcomes)
		}
	}
}

// TestJUnitRows checks that a failure lists the offending rows with their
// values (markup escaped, control characters left out) and says how many
// there are in all.
func TestJUnitRows(t *testing.T) {
	var b bytes.Buffer
	if err := WriteJUnit(&b, sampleReport(), JUnitOptions{}); err != nil {
		t.Fatal(err)
	}
	var doc junitDoc
	if err := xml.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	text := doc.Suites[0].Cases[0].Failure.Text
	for _, want := range []string{"4 in all", "day2.csv", "6017", "P<1>", "a|b", "(null)", "fail above 0%", "policies/soil.yaml:27:3"} {
		if !strings.Contains(text, want) {
			t.Errorf("failure text lacks %q:\n%s", want, text)
		}
	}
	if strings.Contains(text, "\x01") {
		t.Errorf("failure text keeps a control character:\n%q", text)
	}
}

func TestXMLEscape(t *testing.T) {
	tests := []struct {
		in, attr, text string
	}{
		{"plain", "plain", "plain"},
		{`a<b>&"c"`, "a&lt;b&gt;&amp;&quot;c&quot;", `a&lt;b&gt;&amp;"c"`},
		{"l1\nl2\tx\r", "l1&#10;l2&#9;x&#13;", "l1\nl2\tx&#13;"},
		{"nul\x00bell\x07esc\x1b", "nulbellesc", "nulbellesc"},
		{"bad\xffutf8\xc3", "badutf8", "badutf8"},
		{"ok é ü 😀", "ok é ü 😀", "ok é ü 😀"},
		{"\ufffe\uffff\ufffd", "\ufffd", "\ufffd"},
		{"]]>", "]]&gt;", "]]&gt;"},
	}
	for _, tt := range tests {
		if got := xmlAttr(tt.in); got != tt.attr {
			t.Errorf("xmlAttr(%q) = %q, want %q", tt.in, got, tt.attr)
		}
		if got := xmlText(tt.in); got != tt.text {
			t.Errorf("xmlText(%q) = %q, want %q", tt.in, got, tt.text)
		}
	}
}

// FuzzXMLEscape checks that any text, escaped, reads back from a document
// as itself less the characters XML cannot hold.
func FuzzXMLEscape(f *testing.F) {
	for _, s := range []string{"a<b", "x\x00y", "\xff\xfe", "l1\nl2\r\n", `"'&`, "\ufffe"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		doc := `<a v="` + xmlAttr(s) + `">` + xmlText(s) + `</a>`
		var got struct {
			V    string `xml:"v,attr"`
			Text string `xml:",chardata"`
		}
		if err := xml.Unmarshal([]byte(doc), &got); err != nil {
			t.Fatalf("escaped %q does not parse: %v\n%s", s, err, doc)
		}
		var want strings.Builder
		for _, r := range strings.ToValidUTF8(s, "") {
			if xmlChar(r) {
				want.WriteRune(r)
			}
		}
		if got.V != want.String() {
			t.Errorf("attribute of %q reads back as %q, want %q", s, got.V, want.String())
		}
		if got.Text != want.String() {
			t.Errorf("text of %q reads back as %q, want %q", s, got.Text, want.String())
		}
	})
}
