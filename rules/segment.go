package rules

import (
	"fmt"
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"
)

// This file resolves segments: `where`, which narrows a rule to the rows
// on which an expression holds, and `by`, which runs it once per group of
// rows sharing the values of some columns. A column's by and where apply
// to every rule of the column but its type rule (a cell that does not
// parse is null, which a filter on the column would hide); a pair's to
// every rule of the pair; a joint rule's to it.

// DefaultGroupLimit is the most groups a rule with `by` may form before
// it stops with an error: each group holds its own copy of what the rule
// keeps (a few counters for a share, every value for a median), so the
// limit bounds memory. A policy raises it with by: {columns: [...],
// limit: N}.
const DefaultGroupLimit = 10_000

// Segment narrows a rule to the rows where Where holds and runs it per
// group of rows with equal values of the By columns. Either may be unset.
type Segment struct {
	// By lists the grouping columns in the order written; nil for none.
	By []string
	// Limit is the most groups allowed (DefaultGroupLimit unless written).
	Limit int
	// Where is the row filter: an expr-lang expression that must be true
	// for a row to be judged (false or unknown leaves it out); nil for
	// none. Its Name is "where".
	Where *RowSpec
	// WhereColumns lists the columns the expression reads.
	WhereColumns []string
}

// Reads lists the data columns rule r reads: its own, then its segment's
// grouping columns and those its where expression reads, each once.
func (r *Rule) Reads() []string {
	if r.Segment == nil {
		return r.Columns
	}
	out := slices.Clone(r.Columns)
	for _, c := range append(slices.Clone(r.Segment.By), r.Segment.WhereColumns...) {
		if !slices.Contains(out, c) {
			out = append(out, c)
		}
	}
	return out
}

// segDraft is a segment while it resolves: the nodes written.
type segDraft struct {
	by, where *yaml.Node
	seg       *Segment // resolved; nil until then or on a problem
}

// resolveSegments resolves every segment written and gives it to the rules
// it applies to.
func (r *resolver) resolveSegments() {
	for _, c := range r.cols {
		if c.seg == nil {
			continue
		}
		own := []string{r.column(c).Name}
		c.seg.seg = r.segment(c.path, c.seg, own)
	}
	for _, d := range r.pairs {
		if d.seg == nil {
			continue
		}
		var own []string
		if len(d.rules) > 0 {
			own = d.rules[0].rule.Columns
		}
		d.seg.seg = r.segment(d.path, d.seg, own)
	}
	used := map[*segDraft]bool{}
	for _, p := range r.rules {
		var d *segDraft
		switch {
		case p.col != nil && p.rule.Kind != KindType:
			d = p.col.seg
		case p.pair != nil:
			d = p.pair.seg
		case p.joint != nil:
			by, where := p.joint.keys.get("by"), p.joint.keys.get("where")
			if by != nil || where != nil {
				d = &segDraft{by: by, where: where}
				d.seg = r.segment(p.rule.ID, d, p.rule.Columns)
			}
		}
		if d != nil && d.seg != nil {
			p.rule.Segment = d.seg
			used[d] = true
		}
	}
	for _, c := range r.cols {
		if d := c.seg; d != nil && d.seg != nil && !used[d] {
			at := d.by
			if at == nil {
				at = d.where
			}
			r.fail(at, CodeNotApplicable, c.path, "by and where apply to the column's rules, and it has none but type").Hint =
				"add the rules to judge per group, or drop by and where"
		}
	}
}

// segment resolves the by and where of a rule on the columns own.
func (r *resolver) segment(path string, d *segDraft, own []string) *Segment {
	s := &Segment{Limit: DefaultGroupLimit}
	ok := true
	if d.by != nil {
		s.By, s.Limit, ok = r.by(path+".by", d.by, own)
	}
	if d.where != nil {
		spec, cols, good := r.where(path+".where", d.where)
		ok = ok && good
		s.Where, s.WhereColumns = spec, cols
	}
	if !ok {
		return nil
	}
	return s
}

// by reads the grouping columns: a list, or the long form {columns: [...],
// limit: n}. A rule's own column cannot group it.
func (r *resolver) by(path string, n *yaml.Node, own []string) ([]string, int, bool) {
	limit := DefaultGroupLimit
	list := n
	if n.Kind == yaml.MappingNode {
		fs := r.fields(path, n, []string{"columns", "limit"}, nil)
		if list = fs.get("columns"); list == nil {
			r.fail(n, CodeMissing, path, `missing key "columns"`).Hint = "the long form is {columns: [...], limit: n}"
			return nil, 0, false
		}
		if l := fs.get("limit"); l != nil {
			v, ok := r.count(path+".limit", l)
			if !ok {
				return nil, 0, false
			}
			if v < 1 {
				r.fail(l, CodeBadValue, path+".limit", "a limit of 0 groups leaves nothing to judge")
				return nil, 0, false
			}
			limit = v
		}
	}
	cols, nodes, ok := r.columnList(path, list)
	if !ok {
		return nil, 0, false
	}
	for i, c := range cols {
		if slices.Contains(own, c) {
			r.fail(nodes[i], CodeBadValue, path, "column %q is the rule's own; it cannot group itself", c).Hint =
				"group by another column"
			ok = false
			continue
		}
		if r.closed() {
			r.declared(path, c, r.pos(nodes[i]))
		}
	}
	return cols, limit, ok
}

// where reads a row filter: its syntax, positions and the columns it
// reads. Its types are checked later, against the data.
func (r *resolver) where(path string, n *yaml.Node) (*RowSpec, []string, bool) {
	src, ok := r.text(path, n)
	if !ok {
		return nil, nil, false
	}
	spec := &RowSpec{Name: "where"}
	r.locate(spec, src, n)
	if strings.TrimSpace(src) == "" {
		r.fail(n, CodeBadExpr, path, "the expression is empty").Hint = "leave where out to judge every row"
		return nil, nil, false
	}
	tree, ok := r.parseExpr(path, *spec)
	if !ok {
		return nil, nil, false
	}
	var cols []string
	for _, c := range exprColumns(tree) {
		if r.closed() {
			r.declared(path, c.name, spec.PosAt(c.at))
		}
		cols = append(cols, c.name)
	}
	if len(cols) == 0 {
		r.fail(n, CodeBadExpr, path, "the expression reads no column, so it keeps every row or none").Hint =
			"compare a column, e.g. where: site == \"north\""
		return nil, nil, false
	}
	return spec, cols, true
}

// explainSegment writes a rule's segment, briefly: "by site, line (at most
// 10000 groups) · where status == "ok"".
func explainSegment(s *Segment) string {
	var parts []string
	if len(s.By) > 0 {
		by := "by " + strings.Join(s.By, ", ")
		if s.Limit != DefaultGroupLimit {
			by += fmt.Sprintf(" (at most %d groups)", s.Limit)
		}
		parts = append(parts, by)
	}
	if s.Where != nil {
		parts = append(parts, "where "+strings.Join(strings.Fields(s.Where.Expr), " "))
	}
	return strings.Join(parts, " · ")
}
