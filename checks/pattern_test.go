package checks

import (
	"reflect"
	"regexp"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

func TestPattern(t *testing.T) {
	mem := checkedMem(t)
	vals := []any{"H-001", "h-002", "xH-003y", nil, "H-0004", ""}
	tests := []struct {
		name    string
		typ     arrow.DataType
		pattern string
		rows    []int64
		msg     string
	}{
		{"anchored", tString, "^H-[0-9]{3}$", []int64{2, 3, 5, 6}, "4 of 5 values (80%) fail to match ^H-[0-9]{3}$"},
		{"unanchored as in JSON Schema", tString, "H-[0-9]{3}", []int64{2, 6}, "2 of 5 values (40%) fail to match H-[0-9]{3}"},
		{"large strings", arrow.BinaryTypes.LargeString, "^H", []int64{2, 3, 6}, "3 of 5 values (60%) fail to match ^H"},
		{"string views", arrow.BinaryTypes.StringView, "^H", []int64{2, 3, 6}, "3 of 5 values (60%) fail to match ^H"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := newBatch(t, mem, 1, col{"id", tc.typ, vals})
			release(t, b)
			spec := rules.PatternSpec{Pattern: tc.pattern, Regexp: regexp.MustCompile(tc.pattern)}
			res := run(t, compile(t, newRule(spec, atMost(0), "id"), envOf(b, 10)), b)
			count, rows, _ := listed(res)
			if count != int64(len(tc.rows)) || !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("offending %d %v, want %v", count, rows, tc.rows)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
		})
	}
}

// TestFixedWidth: the patterns of fixed ASCII width are recognised and
// match as the regular expression does; the others are left to it.
func TestFixedWidth(t *testing.T) {
	inputs := []string{"", "D-1234", "D-123", "D-12345", "d-1234", "D-12a4", "D-１２３４", "D-\xff234", "xD-1234", "D-1234\n",
		"AB", "ab", "aB", "a", "-", "]", "\x00", "é", "H-001", "D_1234", "D-0000", "D-9999"}
	for _, tc := range []struct {
		pattern string
		fixed   bool
	}{
		{`^D-[0-9]{4}$`, true},
		{`\AD-\d{4}\z`, true},
		{`^(D)-[0-9]{2}(?:[0-9]{2})$`, true},
		{`^[A-Za-z]{2}$`, true},
		{`^(?i:[a-b])[a-z]$`, true},
		{`^$`, true},
		{`^[^0-9]$`, false},      // the complement holds non-ASCII characters
		{`^(?i)ab$`, false},      // folded literals
		{`^.$`, false},           // any character, of any width
		{`^D-[0-9]{4}`, false},   // open at the end
		{`D-[0-9]{4}$`, false},   // open at the start
		{`^D-[0-9]+$`, false},    // not of fixed width
		{`^a|b$`, false},         // alternation
		{`^é$`, false},           // a non-ASCII literal
		{`(?m)^D-\d{4}$`, false}, // line anchors
	} {
		t.Run(tc.pattern, func(t *testing.T) {
			re := regexp.MustCompile(tc.pattern)
			fw, ok := fixedWidthOf(re)
			if ok != tc.fixed {
				t.Fatalf("fixed width %v, want %v", ok, tc.fixed)
			}
			if !ok {
				return
			}
			for _, s := range inputs {
				if got, want := fw.match(s), re.MatchString(s); got != want {
					t.Errorf("%q: match %v, regexp says %v", s, got, want)
				}
			}
		})
	}
}

// FuzzFixedWidth: wherever a pattern has a fixed-width form, it matches
// every string as the regular expression does.
func FuzzFixedWidth(f *testing.F) {
	for _, s := range []string{`^D-[0-9]{4}$`, `^[A-Z]{2}-\d\d$`, `^(x)y?$`, `^[\x00-\x7f]$`, `^\x7f[\n]$`} {
		f.Add(s, "D-1234")
		f.Add(s, "XY-12")
		f.Add(s, "x\x7f\n\xc3\xa9")
	}
	f.Fuzz(func(t *testing.T, pattern, s string) {
		re, err := regexp.Compile(pattern)
		if err != nil {
			return
		}
		fw, ok := fixedWidthOf(re)
		if !ok {
			return
		}
		if got, want := fw.match(s), re.MatchString(s); got != want {
			t.Errorf("%q on %q: match %v, regexp says %v", pattern, s, got, want)
		}
	})
}
