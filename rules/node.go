package rules

import (
	"fmt"
	"math"
	"strings"

	"go.yaml.in/yaml/v3"
)

// This file holds the resolver's readers of YAML nodes: each checks that a
// node has the kind wanted, reports a located problem when it has not, and
// returns the value. They follow aliases, so a value written once under an
// anchor is read, and located, where the anchor is.

// field is one key of a mapping and its value.
type field struct {
	key  string
	k, v *yaml.Node
}

// fields is the known keys of one mapping, in the order written.
type fields []field

// get returns the value of key, or nil.
func (fs fields) get(key string) *yaml.Node {
	for _, f := range fs {
		if f.key == key {
			return f.v
		}
	}
	return nil
}

// deref follows an alias to the node it names.
func deref(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && i < 100; i++ {
		n = n.Alias
	}
	return n
}

func isNull(n *yaml.Node) bool { return n.Kind == yaml.ScalarNode && n.ShortTag() == "!!null" }

func isNumber(n *yaml.Node) bool {
	return n.Kind == yaml.ScalarNode && (n.ShortTag() == "!!int" || n.ShortTag() == "!!float")
}

// describe names what a node holds, for "expected X, got Y".
func describe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.ShortTag() {
		case "!!null":
			return "nothing"
		case "!!bool":
			return n.Value
		case "!!int", "!!float":
			return "the number " + n.Value
		}
		v := n.Value
		if len([]rune(v)) > 30 {
			v = string([]rune(v)[:27]) + "..."
		}
		return fmt.Sprintf("the text %q", v)
	}
	return "an alias"
}

func (r *resolver) pos(n *yaml.Node) Pos {
	return Pos{File: r.file, Line: n.Line, Col: n.Column}
}

// fail records a problem at node n and returns it, so the caller can add a
// hint.
func (r *resolver) fail(n *yaml.Node, code Code, path, format string, args ...any) *Error {
	return r.failAt(r.pos(n), code, path, format, args...)
}

func (r *resolver) failAt(at Pos, code Code, path, format string, args ...any) *Error {
	e := &Error{Code: code, Pos: at, Path: path, Message: fmt.Sprintf(format, args...)}
	r.errs = append(r.errs, e)
	return e
}

// wrongKind reports that n is not what was wanted.
func (r *resolver) wrongKind(n *yaml.Node, path, want string) *Error {
	return r.fail(n, CodeWrongKind, path, "expected %s, got %s", want, describe(n))
}

// entries returns the pairs of mapping n in order, reporting keys that are
// not plain scalars and keys written twice. what names a key in messages
// ("key", "column").
func (r *resolver) entries(path string, n *yaml.Node, what string) fields {
	var out fields
	first := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := deref(n.Content[i]), deref(n.Content[i+1])
		switch {
		case k.Kind != yaml.ScalarNode:
			r.fail(k, CodeWrongKind, path, "a %s must be a plain name, got %s", what, describe(k))
			continue
		case k.ShortTag() == "!!merge":
			r.fail(k, CodeUnknownKey, path, `merge key "<<" is not supported`).Hint = "write the keys out"
			continue
		case isNull(k) || k.Value == "":
			r.fail(k, CodeBadValue, path, "empty %s name", what)
			continue
		}
		if p, dup := first[k.Value]; dup {
			r.fail(k, CodeDuplicate, path, "%s %q written twice (first at line %d)", what, k.Value, p.Line)
			continue
		}
		first[k.Value] = k
		out = append(out, field{key: k.Value, k: k, v: v})
	}
	return out
}

// fields returns the pairs of mapping n whose keys are in known, reporting
// any other key with a suggestion; hint, if not nil, may explain where a
// key that belongs elsewhere goes.
func (r *resolver) fields(path string, n *yaml.Node, known []string, hint func(key string) string) fields {
	var out fields
	for _, f := range r.entries(path, n, "key") {
		if !contains(known, f.key) {
			e := r.fail(f.k, CodeUnknownKey, path, "unknown key %q", f.key)
			if e.Hint = didYouMean(f.key, known); e.Hint == "" && hint != nil {
				e.Hint = hint(f.key)
			}
			continue
		}
		out = append(out, f)
	}
	return out
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// mapping reports whether n is a mapping, and a problem if not.
func (r *resolver) mapping(path string, n *yaml.Node) bool {
	if n.Kind == yaml.MappingNode {
		return true
	}
	r.wrongKind(n, path, "a mapping")
	return false
}

// list returns the items of sequence n, reporting a problem if n is not a
// sequence.
func (r *resolver) list(path string, n *yaml.Node) ([]*yaml.Node, bool) {
	if n.Kind != yaml.SequenceNode {
		r.wrongKind(n, path, "a list")
		return nil, false
	}
	items := make([]*yaml.Node, len(n.Content))
	for i, it := range n.Content {
		items[i] = deref(it)
	}
	return items, true
}

// text returns the text of scalar n as written. Numbers and booleans are
// taken as their text; null is a problem.
func (r *resolver) text(path string, n *yaml.Node) (string, bool) {
	if n.Kind != yaml.ScalarNode || isNull(n) {
		r.wrongKind(n, path, "a text")
		return "", false
	}
	return n.Value, true
}

// columnList reads a list of distinct, non-empty column names, with their
// nodes.
func (r *resolver) columnList(path string, n *yaml.Node) ([]string, []*yaml.Node, bool) {
	items, ok := r.list(path, n)
	if !ok {
		return nil, nil, false
	}
	var out []string
	var nodes []*yaml.Node
	for _, it := range items {
		s, ok := r.text(path, it)
		switch {
		case !ok:
			continue
		case strings.TrimSpace(s) == "":
			r.fail(it, CodeBadValue, path, "empty column name")
			continue
		case contains(out, s):
			r.fail(it, CodeDuplicate, path, "column %q listed twice", s)
			continue
		}
		out = append(out, s)
		nodes = append(nodes, it)
	}
	if len(items) == 0 {
		r.fail(n, CodeBadValue, path, "the list is empty").Hint = "name at least one column"
	}
	return out, nodes, len(out) > 0 && len(out) == len(items)
}

// number returns the finite number written at n.
func (r *resolver) number(path string, n *yaml.Node) (float64, bool) {
	if !isNumber(n) {
		r.wrongKind(n, path, "a number")
		return 0, false
	}
	var f float64
	if err := n.Decode(&f); err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		r.fail(n, CodeBadValue, path, "%s is not a finite number", n.Value)
		return 0, false
	}
	return f, true
}

// count returns the whole number >= 0 written at n.
func (r *resolver) count(path string, n *yaml.Node) (int, bool) {
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!int" {
		r.wrongKind(n, path, "a whole number")
		return 0, false
	}
	var v int
	if err := n.Decode(&v); err != nil || v < 0 {
		r.fail(n, CodeBadValue, path, "%s is not a whole number of 0 or more", n.Value)
		return 0, false
	}
	return v, true
}

// boolean returns the true or false written at n.
func (r *resolver) boolean(path string, n *yaml.Node) (bool, bool) {
	var b bool
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!bool" || n.Decode(&b) != nil {
		r.wrongKind(n, path, "true or false")
		return false, false
	}
	return b, true
}

// share returns a share written at n: a fraction or a percent text, in
// [0, 1].
func (r *resolver) share(path string, n *yaml.Node) (float64, bool) {
	var (
		v   float64
		err error
	)
	switch {
	case isNumber(n):
		if err = n.Decode(&v); err != nil {
			err = errPercent
		}
	case n.Kind == yaml.ScalarNode && n.ShortTag() == "!!str":
		v, err = parsePercent(n.Value)
	default:
		r.wrongKind(n, path, `a share such as 0.015 or "1.5%"`)
		return 0, false
	}
	switch {
	case err != nil:
		r.fail(n, CodeTolerance, path, "%s is not a share", describe(n)).Hint = err.Error()
		return 0, false
	case !(v >= 0 && v <= 1):
		r.fail(n, CodeTolerance, path, "share %s is outside [0, 1]", n.Value).Hint = "write a fraction from 0 to 1 or a percent from 0% to 100%"
		return 0, false
	}
	return v, true
}
