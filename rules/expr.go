package rules

import (
	"errors"
	"strings"

	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/builtin"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/parser"
	"go.yaml.in/yaml/v3"
)

// PosAt returns where rune offset i of the expression was written in the
// policy file: expr-lang reports its errors at such offsets
// (file.Location.From). It falls back to ExprPos when the offset is out of
// range or the expression could not be traced back to the file.
func (s RowSpec) PosAt(i int) Pos {
	if i >= 0 && i < len(s.at) {
		return s.at[i]
	}
	return s.ExprPos
}

// expressions parses every row expression for its syntax and records the
// columns it reads. Types are checked later, against the data.
func (r *resolver) expressions() {
	closed := r.closed()
	for _, p := range r.rules {
		if p.rule.Kind != KindRow || p.val == nil {
			continue
		}
		path := p.rule.ID
		if path == "" {
			path = "rows"
		}
		src, ok := r.text(path, p.val)
		if !ok {
			continue
		}
		spec, _ := p.rule.Spec.(RowSpec)
		r.locate(&spec, src, p.val)
		if strings.TrimSpace(src) == "" {
			r.fail(p.val, CodeBadExpr, path, "the expression is empty")
			continue
		}
		tree, ok := r.parseExpr(path, spec)
		if !ok {
			continue
		}
		cols := exprColumns(tree)
		if closed {
			for _, c := range cols {
				r.declared(path, c.name, spec.PosAt(c.at))
			}
		}
		if p.rule.Spec != nil {
			for _, c := range cols {
				p.rule.Columns = append(p.rule.Columns, c.name)
			}
			p.rule.Spec = spec
		}
	}
}

// locate sets spec's expression to src, written at n, with where each of
// its characters was written.
func (r *resolver) locate(spec *RowSpec, src string, n *yaml.Node) {
	spec.Expr, spec.at = src, r.trace(n)
	spec.ExprPos = r.pos(n)
	if len(spec.at) > 0 {
		spec.ExprPos = spec.at[0]
	}
}

// parseExpr parses spec's expression, reporting a syntax error at the
// place in the policy file it points at.
func (r *resolver) parseExpr(path string, spec RowSpec) (ast.Node, bool) {
	tree, err := parser.Parse(spec.Expr)
	if err != nil {
		var fe *file.Error
		msg, at := err.Error(), spec.ExprPos
		if errors.As(err, &fe) {
			msg, at = fe.Message, spec.PosAt(fe.From)
		}
		r.failAt(at, CodeBadExpr, path, "invalid expression: %s", msg)
		return nil, false
	}
	return tree.Node, true
}

// trace returns where each rune of scalar n's value, and the place just
// past its end, was written in the source, or nil when the value cannot be
// lined up with the source. It walks the source from the scalar's start,
// matching each rune of the value: indentation and line breaks that YAML
// folded away are skipped, a folded line break stands at the break, and
// quote escapes (a backslash escape, a doubled single quote) stand at
// their first character.
func (r *resolver) trace(n *yaml.Node) []Pos {
	lines := r.lines
	line, col := n.Line-1, n.Column-1 // 0-based; col counts runes
	switch n.Style {
	case yaml.SingleQuotedStyle, yaml.DoubleQuotedStyle:
		col++
	case yaml.LiteralStyle, yaml.FoldedStyle:
		line, col = line+1, 0
	}
	if line < 0 || line >= len(lines) {
		return nil
	}
	src := []rune(lines[line])
	// at returns the source rune under the cursor; '\n' at a line's end.
	at := func() (rune, bool) {
		if col < len(src) {
			return src[col], true
		}
		return '\n', line+1 < len(lines)
	}
	advance := func(k int) {
		for ; k > 0; k-- {
			switch {
			case col < len(src):
				col++
			case line+1 < len(lines):
				line, col = line+1, 0
				src = []rune(lines[line])
			default:
				return // the end of the file
			}
		}
	}
	pos := func() Pos { return Pos{File: r.file, Line: line + 1, Col: col + 1} }
	value := []rune(n.Value)
	out := make([]Pos, 0, len(value)+1)
	for i, v := range value {
		for {
			s, ok := at()
			if !ok {
				// The source ended: only a final line break YAML added
				// may remain.
				if strings.TrimSpace(string(value[i:])) != "" {
					return nil
				}
				for range value[i:] {
					out = append(out, pos())
				}
				return append(out, pos())
			}
			next := rune(0)
			if col+1 < len(src) {
				next = src[col+1]
			}
			switch {
			case n.Style == yaml.DoubleQuotedStyle && s == '\\' && next == 0:
				advance(1) // an escaped line break: no rune of the value
				continue
			case n.Style == yaml.DoubleQuotedStyle && s == '\\':
				out = append(out, pos())
				advance(escapeLen(next))
			case n.Style == yaml.SingleQuotedStyle && s == '\'' && next == '\'':
				out = append(out, pos())
				advance(2)
			case s == v:
				out = append(out, pos())
				advance(1)
			case (v == ' ' || v == '\n') && s == '\n':
				out = append(out, pos())
				advance(1)
			case s == ' ' || s == '\t' || s == '\n':
				advance(1)
				continue
			default:
				return nil
			}
			break
		}
	}
	return append(out, pos())
}

// escapeLen is the length in the source of a double-quoted YAML escape
// whose letter is c.
func escapeLen(c rune) int {
	switch c {
	case 'x':
		return 4
	case 'u':
		return 6
	case 'U':
		return 10
	}
	return 2
}

// exprColumn is a column an expression reads, and the rune offset of its
// first use.
type exprColumn struct {
	name string
	at   int
}

// exprColumns lists the names an expression reads as data columns, unique,
// in order of first use: its free identifiers and $env["name"] lookups.
// Function names, expr-lang's builtins and variables bound by let are not
// columns; predicate bodies (all, map, ...) reach their element through #
// and .field, which are not columns either.
func exprColumns(root ast.Node) []exprColumn {
	var out []exprColumn
	add := func(name string, n ast.Node) {
		for _, c := range out {
			if c.name == name {
				return
			}
		}
		out = append(out, exprColumn{name: name, at: n.Location().From})
	}
	var walk func(n ast.Node, bound map[string]bool)
	walkAll := func(bound map[string]bool, nodes ...ast.Node) {
		for _, n := range nodes {
			walk(n, bound)
		}
	}
	walk = func(n ast.Node, bound map[string]bool) {
		switch n := n.(type) {
		case nil:
		case *ast.IdentifierNode:
			if _, isBuiltin := builtin.Index[n.Value]; !bound[n.Value] && !isBuiltin && n.Value != "$env" {
				add(n.Value, n)
			}
		case *ast.MemberNode:
			if id, ok := n.Node.(*ast.IdentifierNode); ok && id.Value == "$env" {
				if s, ok := n.Property.(*ast.StringNode); ok {
					add(s.Value, id)
					return
				}
			}
			walkAll(bound, n.Node, n.Property)
		case *ast.CallNode:
			if _, named := n.Callee.(*ast.IdentifierNode); !named {
				walk(n.Callee, bound)
			}
			walkAll(bound, n.Arguments...)
		case *ast.VariableDeclaratorNode:
			walk(n.Value, bound)
			inner := map[string]bool{n.Name: true}
			for k := range bound {
				inner[k] = true
			}
			walk(n.Expr, inner)
		case *ast.UnaryNode:
			walkAll(bound, n.Node)
		case *ast.BinaryNode:
			walkAll(bound, n.Left, n.Right)
		case *ast.ChainNode:
			walkAll(bound, n.Node)
		case *ast.SliceNode:
			walkAll(bound, n.Node, n.From, n.To)
		case *ast.BuiltinNode:
			walkAll(bound, n.Arguments...)
		case *ast.PredicateNode:
			walkAll(bound, n.Node)
		case *ast.SequenceNode:
			walkAll(bound, n.Nodes...)
		case *ast.ConditionalNode:
			walkAll(bound, n.Cond, n.Exp1, n.Exp2)
		case *ast.ArrayNode:
			walkAll(bound, n.Nodes...)
		case *ast.MapNode:
			walkAll(bound, n.Pairs...)
		case *ast.PairNode:
			walkAll(bound, n.Key, n.Value)
		}
	}
	walk(root, map[string]bool{})
	return out
}
