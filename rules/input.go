package rules

import (
	"path/filepath"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// input reads where the data is and how to read it: data and csv.
func (r *resolver) input() {
	if n := r.top.get("data"); n != nil && !isNull(n) {
		r.dataPaths(n)
	}
	if n := r.top.get("csv"); n != nil && !isNull(n) && r.mapping("csv", n) {
		r.csvOptions(n)
	}
}

// dataPaths reads data: one path or glob, or a list of them.
func (r *resolver) dataPaths(n *yaml.Node) {
	items := []*yaml.Node{n}
	if n.Kind == yaml.SequenceNode {
		items, _ = r.list("data", n)
	}
	for _, it := range items {
		s, ok := r.text("data", it)
		switch {
		case !ok:
			continue
		case s == "":
			r.fail(it, CodeBadValue, "data", "empty path")
			continue
		}
		if _, err := filepath.Match(s, ""); err != nil {
			r.fail(it, CodeBadValue, "data", "%q is not a valid glob", s).Hint = "escape [ and ] with a backslash"
			continue
		}
		r.p.Input.Paths = append(r.p.Input.Paths, s)
	}
}

// csvOptions reads the csv mapping.
func (r *resolver) csvOptions(n *yaml.Node) {
	in := &r.p.Input
	var delim, quote *yaml.Node
	for _, f := range r.fields("csv", n, []string{"delimiter", "quote", "header", "nulls"}, nil) {
		path := "csv." + f.key
		switch f.key {
		case "delimiter":
			if c, ok := r.csvChar(path, f.v, false); ok {
				in.Delimiter, delim = c, f.v
			}
		case "quote":
			if c, ok := r.csvChar(path, f.v, true); ok {
				in.Quote, in.NoQuote, quote = c, c == 0, f.v
			}
		case "header":
			if h, ok := r.boolean(path, f.v); ok {
				in.NoHeader = !h
			}
		case "nulls":
			items, ok := r.list(path, f.v)
			if !ok {
				continue
			}
			in.Nulls, in.NullsSet = []string{}, true
			for _, it := range items {
				if s, ok := r.text(path, it); ok {
					in.Nulls = append(in.Nulls, s)
				}
			}
		}
	}
	d, q := in.Delimiter, in.Quote
	if d == 0 {
		d = ','
	}
	if q == 0 {
		q = '"'
	}
	switch {
	case in.NoQuote || d != q:
	case quote != nil:
		r.fail(quote, CodeBadValue, "csv.quote", "the quote character is also the delimiter")
	case delim != nil:
		r.fail(delim, CodeBadValue, "csv.delimiter", "the delimiter is also the quote character").Hint = `set quote to another character, or to "" to read without quoting`
	}
}

// csvChar reads one character of the csv options. The two characters `\t`
// are taken as a tab, so single quotes and plain scalars can spell it. The
// empty text is allowed only when empty is set, and then gives 0.
func (r *resolver) csvChar(path string, n *yaml.Node, empty bool) (rune, bool) {
	if n.Kind != yaml.ScalarNode || n.ShortTag() != "!!str" {
		r.wrongKind(n, path, "one character in quotes")
		return 0, false
	}
	s := n.Value
	if s == `\t` {
		s = "\t"
	}
	c, size := utf8.DecodeRuneInString(s)
	switch {
	case s == "" && empty:
		return 0, true
	case s == "" || size != len(s):
		r.fail(n, CodeBadValue, path, "want one character, got %q", s)
	case c == '\n' || c == '\r':
		r.fail(n, CodeBadValue, path, "a line break cannot separate or quote fields")
	default:
		return c, true
	}
	return 0, false
}
