package report

import (
	"bytes"
	"regexp"
	"testing"
)

// TestTextColorKeepsColumns renders the sample report (every verdict and
// status) with and without colour: once the escape codes are removed the two
// must be the same text, so colour never shifts the columns of the rule lines.
func TestTextColorKeepsColumns(t *testing.T) {
	var plain, colored bytes.Buffer
	if err := WriteText(&plain, sampleReport(), TextOptions{}); err != nil {
		t.Fatal(err)
	}
	if err := WriteText(&colored, sampleReport(), TextOptions{Color: true}); err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(colored.Bytes(), []byte("\x1b[")) {
		t.Fatal("colour asked for, but the text has no escape code")
	}
	stripped := regexp.MustCompile("\x1b\\[[0-9;]*m").ReplaceAll(colored.Bytes(), nil)
	got := bytes.Split(stripped, []byte("\n"))
	want := bytes.Split(plain.Bytes(), []byte("\n"))
	if len(got) != len(want) {
		t.Fatalf("coloured text has %d lines, plain text %d", len(got), len(want))
	}
	for i := range got {
		if !bytes.Equal(got[i], want[i]) {
			t.Errorf("line %d, coloured without its codes:\n%q\nplain:\n%q", i+1, got[i], want[i])
		}
	}
}

// TestTextDataLine checks the line saying how much data was read, in the
// singular and the plural.
func TestTextDataLine(t *testing.T) {
	tests := []struct {
		rows    int64
		sources []Source
		want    string
	}{
		{0, nil, "data: 0 rows from no file\n"},
		{1, []Source{{Path: "a.csv"}}, "data: 1 row from a.csv\n"},
		{12345, []Source{{Path: "a.csv"}, {Path: "b.csv"}}, "data: 12,345 rows from 2 files\n"},
	}
	for _, tt := range tests {
		rep := &Report{Rows: tt.rows, Sources: tt.sources, Verdict: Pass}
		var b bytes.Buffer
		if err := WriteText(&b, rep, TextOptions{}); err != nil {
			t.Fatal(err)
		}
		if !bytes.Contains(b.Bytes(), []byte("\n"+tt.want)) {
			t.Errorf("%d rows: got\n%s\nwant a line %q", tt.rows, b.String(), tt.want)
		}
	}
}

// TestTerminalValue checks how cells are shown in the text table of
// offending rows: text that would mislead or break the table is quoted.
func TestTerminalValue(t *testing.T) {
	tests := []struct {
		in   any
		want string
	}{
		{nil, "(null)"},
		{"(null)", `"(null)"`},
		{"", `""`},
		{"H-021", "H-021"},
		{"été", "été"},
		{"two words", "two words"},
		{" 42", `" 42"`},
		{"42 ", `"42 "`},
		{"x\r\ny", `"x\r\ny"`},
		{"a\tb", `"a\tb"`},
		{"\x1b[31mred", `"\x1b[31mred"`},
		{"\xff", `"\xff"`},
		{`"quoted"`, `"\"quoted\""`},
		{1.5, "1.5"},
		{int64(7), "7"},
	}
	for _, tt := range tests {
		if got := terminalValue(tt.in); got != tt.want {
			t.Errorf("terminalValue(%q) = %s, want %s", tt.in, got, tt.want)
		}
	}
}
