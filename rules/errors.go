package rules

import (
	"encoding/json"
	"fmt"
	"sort"
	"strings"
)

// Code names a kind of policy problem. Codes are stable: programs and tests
// may match on them.
type Code string

// Problems a policy can have.
const (
	CodeSyntax        Code = "syntax"         // the file is not valid YAML
	CodeEmpty         Code = "empty"          // the file, or the policy, holds nothing to check
	CodeUnknownKey    Code = "unknown-key"    // a key the policy language does not define
	CodeDuplicate     Code = "duplicate"      // a key, column, rule, list item or enum value written twice
	CodeMissing       Code = "missing"        // a key that must be written is absent
	CodeWrongKind     Code = "wrong-kind"     // e.g. a text where a number is needed, a list where a mapping is
	CodeBadValue      Code = "bad-value"      // a value of the right kind that is not allowed there
	CodeUnknownType   Code = "unknown-type"   // a column type the language does not define
	CodeUnknownStat   Code = "unknown-stat"   // a summary statistic the language does not define
	CodeUnknownFamily Code = "unknown-family" // a distribution family the language does not define
	CodeTolerance     Code = "bad-tolerance"  // a malformed share, a share outside [0, 1], warn beyond fail
	CodeEmptyRange    Code = "empty-range"    // bounds no value can meet: minimum above maximum and the like
	CodeMixedEnum     Code = "mixed-enum"     // enum values of different kinds
	CodeBadPattern    Code = "bad-pattern"    // a pattern that is not valid RE2
	CodeBadExpr       Code = "bad-expr"       // a row expression with a syntax error
	CodeNotApplicable Code = "not-applicable" // a rule that cannot apply to the column's declared type
	CodeUndeclared    Code = "undeclared"     // a column used but not declared in a closed policy
)

// Error is one problem in a policy file.
type Error struct {
	Code    Code
	Pos     Pos
	Path    string // where in the policy, e.g. "columns.weight_kg" or a rule id
	Message string
	Hint    string // e.g. `did you mean "maximum"?`; may be empty
	Source  string // the text of line Pos.Line; empty when unknown
}

// Error writes the problem on one line:
// file:line:col: path: message (hint).
func (e *Error) Error() string {
	var b strings.Builder
	if at := e.Pos.String(); at != "" {
		b.WriteString(at)
		b.WriteString(": ")
	}
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Message)
	if e.Hint != "" {
		b.WriteString(" (")
		b.WriteString(e.Hint)
		b.WriteString(")")
	}
	return b.String()
}

// Snippet returns the source line of the problem and, below it, a caret
// under its column; "" when the source line is unknown.
func (e *Error) Snippet() string {
	if e.Source == "" {
		return ""
	}
	line := strings.TrimRight(e.Source, " \t")
	gutter := fmt.Sprintf("%5d | ", e.Pos.Line)
	s := gutter + line
	if e.Pos.Col > 0 {
		var pad strings.Builder
		for i, r := range []rune(e.Source) {
			if i >= e.Pos.Col-1 {
				break
			}
			if r == '\t' {
				pad.WriteRune('\t')
			} else {
				pad.WriteRune(' ')
			}
		}
		s += "\n" + strings.Repeat(" ", len(gutter)-2) + "| " + pad.String() + "^"
	}
	return s
}

// MarshalJSON writes the problem as a flat object for the JSON report.
func (e *Error) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		Code    Code   `json:"code"`
		File    string `json:"file"`
		Line    int    `json:"line"`
		Col     int    `json:"col"`
		Path    string `json:"path,omitempty"`
		Message string `json:"message"`
		Hint    string `json:"hint,omitempty"`
		Source  string `json:"source,omitempty"`
	}{e.Code, e.Pos.File, e.Pos.Line, e.Pos.Col, e.Path, e.Message, e.Hint, e.Source})
}

// ErrorsShown is how many problems ErrorList's messages list before
// "and N more".
const ErrorsShown = 20

// ErrorList is every problem found in one policy, sorted by position. Parse
// returns one as its error; use errors.As to reach it.
type ErrorList []*Error

// Error lists the first ErrorsShown problems, one a line, and counts the
// rest.
func (l ErrorList) Error() string { return l.format(false) }

// Detail is Error with each problem's source line and a caret under it.
func (l ErrorList) Detail() string { return l.format(true) }

func (l ErrorList) format(snippets bool) string {
	n := min(len(l), ErrorsShown)
	lines := make([]string, 0, n+1)
	for _, e := range l[:n] {
		s := e.Error()
		if sn := e.Snippet(); snippets && sn != "" {
			s += "\n" + sn
		}
		lines = append(lines, s)
	}
	if len(l) > n {
		lines = append(lines, fmt.Sprintf("and %d more problems (%d in all)", len(l)-n, len(l)))
	}
	return strings.Join(lines, "\n")
}

// sortErrors orders problems by position, keeping the order found among
// problems at the same place.
func sortErrors(l ErrorList) {
	sort.SliceStable(l, func(i, j int) bool {
		a, b := l[i].Pos, l[j].Pos
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Col < b.Col
	})
}
