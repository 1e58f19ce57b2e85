package rules

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/expr-lang/expr/parser"
)

func TestExprColumns(t *testing.T) {
	cases := []struct {
		expr string
		want string // columns, space-separated
	}{
		{"a > b", "a b"},
		{"a + a * b > a", "a b"},
		{"len(name) > 3", "name"},
		{"max(a, b) > min(c) and abs(d) < 1", "a b c d"},
		{"let x = a; x > b", "a b"},
		{"(let y = 1; y) + y > 0", "y"}, // the second y is outside the let
		{"let a = a + 1; a > 0", "a"},   // the value of a let reads the outer a
		{"all(items, .price > limit)", "items limit"},
		{"any(items, # > 0) || none(xs, {# == z})", "items xs z"},
		{"count(items, #index > n) > 0", "items n"},
		{`$env["col with space"] > 1 && $env.plain == 2`, "col with space plain"},
		{"foo(a) > 0", "a"}, // a function is not a column
		{"a.b > 0", "a"},
		{"a[b] > 0 and c[1:k] != nil", "a b c k"},
		{"upper(s) == 'X' and s matches '^a'", "s"},
		{"x in [a, b] or x not in 1..n", "x a b n"},
		{"a ? b : c", "a b c"},
		{"if a { b } else { c }", "a b c"},
		{"a ?? b", "a b"},
		{"{k: a}.k > 0", "a"},
		{"a?.b != nil", "a"},
		{"a | upper() == b", "a b"},
		{"true", ""},
		{"1 + 2 == 3", ""},
		{"été > 0", "été"},
	}
	for _, c := range cases {
		tree, err := parser.Parse(c.expr)
		if err != nil {
			t.Errorf("%s: %v", c.expr, err)
			continue
		}
		var got []string
		for _, col := range exprColumns(tree.Node) {
			got = append(got, col.name)
		}
		if strings.Join(got, " ") != c.want {
			t.Errorf("%s: got %q, want %q", c.expr, got, c.want)
		}
	}
}

// TestExprTrace checks, for every row rule of every good fixture, that
// each column the expression reads is traced to where the policy file
// spells it: the file's text at PosAt(offset) starts with the column's
// name (or with $env for a lookup).
func TestExprTrace(t *testing.T) {
	files, _ := filepath.Glob("testdata/good/*.yaml")
	checked := 0
	for _, f := range files {
		r := resolve(f, mustRead(t, f), "")
		if len(r.errs) > 0 {
			t.Fatalf("%s: %v", f, r.errorList())
		}
		lines := strings.Split(string(r.src), "\n")
		for _, p := range r.p.Rules {
			spec, ok := p.Spec.(RowSpec)
			if !ok {
				continue
			}
			if len(spec.at) != len([]rune(spec.Expr))+1 {
				t.Errorf("%s: %s: traced %d runes of %d", f, p.ID, len(spec.at), len([]rune(spec.Expr)))
				continue
			}
			tree, err := parser.Parse(spec.Expr)
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range exprColumns(tree.Node) {
				at := spec.PosAt(c.at)
				text := string([]rune(lines[at.Line-1])[at.Col-1:])
				if !strings.HasPrefix(text, c.name) && !strings.HasPrefix(text, "$env") {
					t.Errorf("%s: %s: column %s traced to %s, where the file has %q", f, p.ID, c.name, at, text)
				}
				checked++
			}
		}
	}
	if checked < 20 {
		t.Errorf("only %d columns traced; the fixtures lost their expressions", checked)
	}
}

func TestExprTraceStyles(t *testing.T) {
	cases := []struct {
		name, yaml string
		offset     int // rune offset in the expression
		line, col  int
	}{
		{"plain", "expr: a > b", 4, 1, 11},
		{"single quotes with a doubled quote", "expr: 'x == ''q'' && b'", 12, 1, 22},
		{"double quotes with escapes", `expr: "s == \"\u00e9\" && b"`, 12, 1, 27},
		{"double quotes, tab escape", `expr: "s == \"\t\" || b"`, 12, 1, 23},
		{"literal block, indented line", "expr: |\n  a > 0 &&\n    b < 1\n", 11, 3, 5},
		{"folded block", "expr: >\n  a > 0 and\n  b < 1\n", 10, 3, 3},
		{"plain over lines", "expr: a > 0\n  && b < 1\n", 9, 2, 6},
		{"double quotes over lines", "expr: \"a > 0\n  && b\"\n", 9, 2, 6},
		{"end of expression", "expr: a > b", 5, 1, 12},
		{"out of range falls back to the start", "expr: a > b", 99, 1, 7},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := "policy: p\nrows:\n  - name: r\n    " + strings.ReplaceAll(c.yaml, "\n", "\n    ")
			p, err := Parse("trace.yaml", []byte(src))
			if err != nil {
				t.Fatal(err)
			}
			spec := p.Rules[0].Spec.(RowSpec)
			got := spec.PosAt(c.offset)
			if got.Line != c.line+3 || got.Col != c.col+4 {
				t.Errorf("expr %q: rune %d at %d:%d, want %d:%d", spec.Expr, c.offset, got.Line, got.Col, c.line+3, c.col+4)
			}
		})
	}
}

func TestExprTraceGivesUp(t *testing.T) {
	// A tag in front of the scalar is not part of its value: the trace
	// cannot line the value up and positions fall back to the expression.
	p, err := Parse("tag.yaml", []byte("policy: p\nrows:\n  - name: r\n    expr: !!str a > b\n"))
	if err != nil {
		t.Fatal(err)
	}
	spec := p.Rules[0].Spec.(RowSpec)
	if spec.at != nil || spec.PosAt(4) != spec.ExprPos || spec.ExprPos.Line != 4 {
		t.Errorf("traced %v; PosAt(4) = %v, ExprPos %v", spec.at, spec.PosAt(4), spec.ExprPos)
	}
}

func mustRead(tb testing.TB, path string) []byte {
	tb.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		tb.Fatal(err)
	}
	return b
}
