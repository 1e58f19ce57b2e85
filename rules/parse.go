package rules

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// Load reads and resolves the policy file at path. See Parse.
func Load(path string) (*Policy, error) {
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read policy: %w", err)
	}
	return Parse(path, src)
}

// Parse resolves the policy in src; name is the file name that positions
// carry. On any problem it returns a nil Policy and an ErrorList holding
// every problem found, sorted by position.
func Parse(name string, src []byte) (*Policy, error) {
	r := resolve(name, src, "")
	if len(r.errs) > 0 {
		return nil, r.errorList()
	}
	return r.p, nil
}

// A stage is one step of resolution. Every stage runs even when an earlier
// one found problems, so one run reports them all; only a file that is not
// YAML stops resolution after decode.
type stage struct {
	name string
	run  func(*resolver)
}

// stages is resolution, in order.
var stages = []stage{
	{"decode", (*resolver).decode},            // YAML -> the policy's shape: known keys, mappings and lists where due
	{"input", (*resolver).input},              // data paths and csv options
	{"names", (*resolver).names},              // policy, types, statistics, rule names and ids, column lists
	{"tolerances", (*resolver).tolerances},    // shares, tolerances and bounded intervals
	{"values", (*resolver).values},            // bounds, enums, patterns, lengths, and their consistency
	{"pairs", (*resolver).resolvePairs},       // pair rules: columns, relations, settings, bounds
	{"expressions", (*resolver).expressions},  // row expressions: syntax and the columns they read
	{"segments", (*resolver).resolveSegments}, // by and where: grouping columns and row filters
	{"defaults", (*resolver).defaults},        // default tolerances, measures, the rule list
}

// resolve runs the stages up to and including the one named last ("" for
// all).
func resolve(name string, src []byte, last string) *resolver {
	sum := sha256.Sum256(src)
	r := &resolver{file: name, src: src, p: &Policy{File: name, Hash: "sha256:" + hex.EncodeToString(sum[:])}}
	for _, l := range strings.Split(string(src), "\n") {
		r.lines = append(r.lines, strings.TrimSuffix(l, "\r"))
	}
	for _, s := range stages {
		s.run(r)
		if r.fatal || s.name == last {
			break
		}
	}
	return r
}

// resolver holds one resolution in progress.
type resolver struct {
	file  string
	src   []byte
	lines []string // src split at line breaks, without them
	errs  ErrorList
	fatal bool // the file is not YAML: nothing after decode can run

	root  *yaml.Node // the top mapping
	top   fields     // its keys
	p     *Policy
	cols  []*colDraft
	rules []*pending   // column and row rules, in the order written
	pairs []*pairDraft // pair entries, in the order written
	table []*pending   // table rules, in the order written
}

// colDraft is a column while it resolves.
type colDraft struct {
	i    int        // index in Policy.Columns
	path string     // "columns.<name>"
	typ  *yaml.Node // the type written, or nil
	tol  *yaml.Node // the column's default tolerance written, or nil
	def  *Tolerance // tol resolved
	seg  *segDraft  // by and where written on the column, or nil
}

// pending is a rule while it resolves: the nodes it was written with.
type pending struct {
	rule   *Rule
	col    *colDraft   // a column rule's column; nil otherwise
	val    *yaml.Node  // what the rule says: its value, list, expression or bounds
	tol    *yaml.Node  // the tolerance written for it; nil for the default
	name   *yaml.Node  // a row rule's name
	dist   *distDraft  // a distribution rule's keys
	ext    *extDraft   // an extremes rule's keys
	joint  *jointDraft // a joint rule's keys and columns
	pair   *pairDraft  // a pair rule's entry
	tolSet bool        // rule.Tolerance has been resolved
}

func (r *resolver) column(c *colDraft) *Column { return &r.p.Columns[c.i] }

// errorList sorts the problems and attaches their source lines.
func (r *resolver) errorList() ErrorList {
	for _, e := range r.errs {
		if e.Pos.Line > 0 && e.Pos.Line <= len(r.lines) {
			e.Source = r.lines[e.Pos.Line-1]
		}
	}
	sortErrors(r.errs)
	return r.errs
}

var (
	topKeys    = []string{"policy", "about", "data", "csv", "columns", "rows", "table", "joint", "pairs"}
	columnKeys = []string{"type", "unit", "description", "tolerance", "nulls", "unique", "minimum", "maximum",
		"exclusiveMinimum", "exclusiveMaximum", "enum", "pattern", "minLength", "maxLength", "summary", "distribution", "extremes", "drift", "by", "where"}
	tableKeys = []string{"rows", "key", "closed", "required"}
	rowKeys   = []string{"name", "expr", "tolerance"}
)

// decode reads the YAML and walks the policy's shape, making a pending rule
// for every rule written.
func (r *resolver) decode() {
	doc, ok := r.parseYAML()
	if !ok {
		r.fatal = true
		return
	}
	if doc == nil || len(doc.Content) == 0 || isNull(deref(doc.Content[0])) {
		r.failAt(Pos{File: r.file, Line: 1, Col: 1}, CodeEmpty, "", "the policy file is empty").Hint =
			"start with policy: <name> and add columns, rows or table"
		r.fatal = true
		return
	}
	root := deref(doc.Content[0])
	if !r.mapping("", root) {
		r.fatal = true
		return
	}
	r.root = root
	r.top = r.fields("", root, topKeys, func(key string) string {
		if contains(tableKeys, key) {
			return key + ` goes under "table"`
		}
		return ""
	})
	for _, f := range r.top {
		if isNull(f.v) {
			continue
		}
		switch f.key {
		case "columns":
			r.decodeColumns(f.v)
		case "rows":
			r.decodeRows(f.v)
		case "table":
			r.decodeTable(f.v)
		case "joint":
			r.decodeJoint(f.v)
		case "pairs":
			r.decodePairs(f.v)
		}
	}
}

// parseYAML reads src as one YAML document. A nil document means the file
// holds none.
func (r *resolver) parseYAML() (*yaml.Node, bool) {
	if !r.checkText() {
		return nil, false
	}
	dec := yaml.NewDecoder(bytes.NewReader(r.src))
	var doc yaml.Node
	switch err := dec.Decode(&doc); {
	case errors.Is(err, io.EOF):
		return nil, true
	case err != nil:
		r.syntax(err)
		return nil, false
	}
	var more yaml.Node
	switch err := dec.Decode(&more); {
	case errors.Is(err, io.EOF):
	case err != nil:
		r.syntax(err)
		return nil, false
	default:
		r.fail(&more, CodeSyntax, "", "the file holds more than one YAML document").Hint = `remove the "---" line`
		return nil, false
	}
	return &doc, true
}

// checkText reports the first byte sequence YAML cannot read: invalid UTF-8
// or a control character (YAML 1.2, section 5.1). The YAML reader finds
// these too, but without a position.
func (r *resolver) checkText() bool {
	line, col := 1, 1
	for i := 0; i < len(r.src); {
		c, size := utf8.DecodeRune(r.src[i:])
		at := Pos{File: r.file, Line: line, Col: col}
		switch {
		case c == utf8.RuneError && size <= 1:
			r.failAt(at, CodeSyntax, "", "the file is not valid UTF-8")
			return false
		case !printable(c):
			r.failAt(at, CodeSyntax, "", "character %U is not allowed in YAML", c)
			return false
		}
		if c == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
		i += size
	}
	return true
}

// printable reports whether YAML allows c in a file (YAML 1.2, c-printable).
func printable(c rune) bool {
	return c == '\t' || c == '\n' || c == '\r' || (c >= 0x20 && c <= 0x7e) || c == 0x85 ||
		(c >= 0xa0 && c <= 0xd7ff) || (c >= 0xe000 && c <= 0xfffd) || (c >= 0x10000 && c <= 0x10ffff)
}

var (
	yamlErrLine   = regexp.MustCompile(`^yaml: (?:line (\d+): )?(.*)$`)
	yamlErrAnchor = regexp.MustCompile(`^yaml: unknown anchor '(.*)' referenced$`)
)

// syntax records a YAML syntax error. go.yaml.in/yaml/v3 gives no column,
// and its line is that of the construct the problem is in, sometimes
// counted from 0, sometimes left out. So syntax looks for the shortest
// prefix of the file, from that line on, that fails with the same problem:
// its last line is where the problem is. The column stays unknown.
func (r *resolver) syntax(err error) {
	msg := err.Error()
	if m := yamlErrAnchor.FindStringSubmatch(msg); m != nil {
		at := Pos{File: r.file, Line: 1}
		if i := bytes.Index(r.src, []byte("*"+m[1])); i >= 0 {
			at = r.offsetPos(i)
		}
		r.failAt(at, CodeSyntax, "", "unknown anchor %q", m[1]).Hint = "define it with &" + m[1] + " before use"
		return
	}
	line := 1
	if m := yamlErrLine.FindStringSubmatch(msg); m != nil {
		msg = m[2]
		if m[1] != "" {
			line, _ = strconv.Atoi(m[1])
		}
	}
	lines := bytes.SplitAfter(r.src, []byte("\n"))
	line = max(1, min(line, len(lines)))
	// fails reports whether the first k lines fail with the same problem.
	// It holds for the whole file and, as a rule, from the problem's line
	// on, so a binary search finds that line.
	fails := func(k int) bool {
		m := yamlErrLine.FindStringSubmatch(fmt.Sprint(yamlError(bytes.Join(lines[:k], nil))))
		return m != nil && m[2] == msg
	}
	n := len(lines) - line + 1
	if i := sort.Search(n, func(i int) bool { return fails(line + i) }); i < n {
		line += i
	}
	r.failAt(Pos{File: r.file, Line: line}, CodeSyntax, "", "invalid YAML: %s", msg)
}

// yamlError returns the first error reading every YAML document of src.
func yamlError(src []byte) error {
	dec := yaml.NewDecoder(bytes.NewReader(src))
	for {
		var n yaml.Node
		if err := dec.Decode(&n); err != nil {
			if errors.Is(err, io.EOF) {
				return nil
			}
			return err
		}
	}
}

// offsetPos is the position of byte offset i of the source.
func (r *resolver) offsetPos(i int) Pos {
	before := r.src[:i]
	line := bytes.Count(before, []byte("\n")) + 1
	col := utf8.RuneCount(before[bytes.LastIndexByte(before, '\n')+1:]) + 1
	return Pos{File: r.file, Line: line, Col: col}
}

// decodeColumns reads the columns mapping.
func (r *resolver) decodeColumns(n *yaml.Node) {
	if !r.mapping("columns", n) {
		return
	}
	for _, f := range r.entries("columns", n, "column") {
		c := &colDraft{i: len(r.p.Columns), path: "columns." + f.key}
		r.p.Columns = append(r.p.Columns, Column{Name: f.key, Pos: r.pos(f.k)})
		r.cols = append(r.cols, c)
		if isNull(f.v) || !r.mapping(c.path, f.v) {
			continue
		}
		for _, g := range r.fields(c.path, f.v, columnKeys, statHint) {
			r.decodeColumnKey(c, g)
		}
	}
}

// decodeColumnKey reads one key of a column.
func (r *resolver) decodeColumnKey(c *colDraft, f field) {
	id := c.path + "." + f.key
	switch f.key {
	case "type":
		c.typ = f.v
		r.columnRule(c, f, KindType, f.v, nil)
	case "unit":
		r.column(c).Unit, _ = r.text(id, f.v)
	case "description":
		r.column(c).Description, _ = r.text(id, f.v)
	case "tolerance":
		c.tol = f.v
	case "nulls":
		r.columnRule(c, f, KindNulls, nil, f.v).rule.Spec = NullsSpec{}
	case "unique":
		switch {
		case f.v.Kind == yaml.MappingNode:
			tol := r.fields(id, f.v, []string{"tolerance"}, nil).get("tolerance")
			r.columnRule(c, f, KindUnique, nil, tol).rule.Spec = UniqueSpec{}
		case f.v.Kind == yaml.ScalarNode && f.v.ShortTag() == "!!bool":
			if on, _ := r.boolean(id, f.v); on {
				r.columnRule(c, f, KindUnique, nil, nil).rule.Spec = UniqueSpec{}
			}
		default:
			r.wrongKind(f.v, id, "true, false or a mapping with tolerance")
		}
	case "minimum", "exclusiveMinimum":
		r.longFormRule(c, f, KindMinimum, "value")
	case "maximum", "exclusiveMaximum":
		r.longFormRule(c, f, KindMaximum, "value")
	case "enum":
		r.longFormRule(c, f, KindEnum, "values")
	case "pattern":
		r.longFormRule(c, f, KindPattern, "value")
	case "minLength":
		r.longFormRule(c, f, KindMinLength, "value")
	case "maxLength":
		r.longFormRule(c, f, KindMaxLength, "value")
	case "distribution":
		r.decodeDistribution(r.columnRule(c, f, KindDistribution, f.v, nil), f.v)
	case "extremes":
		r.decodeExtremes(r.columnRule(c, f, KindExtremes, f.v, nil), f.v)
	case "drift":
		r.decodeDrift(c, f)
	case "by", "where":
		if c.seg == nil {
			c.seg = &segDraft{}
		}
		if f.key == "by" {
			c.seg.by = f.v
		} else {
			c.seg.where = f.v
		}
	case "summary":
		if !r.mapping(id, f.v) {
			return
		}
		for _, s := range r.entries(id, f.v, "statistic") {
			p := r.columnRule(c, s, KindSummary, s.v, nil)
			p.rule.ID = id + "." + s.key
		}
	}
}

// statHint explains where a summary statistic written as a column key goes.
func statHint(key string) string {
	if _, ok := parseStat(key); ok {
		return `summary statistics go under "summary"`
	}
	return ""
}

// columnRule records a rule written under key f of column c.
func (r *resolver) columnRule(c *colDraft, f field, kind Kind, val, tol *yaml.Node) *pending {
	p := &pending{
		rule: &Rule{ID: c.path + "." + f.key, Kind: kind, Columns: []string{r.column(c).Name}, Pos: r.pos(f.k)},
		col:  c, val: val, tol: tol,
	}
	r.rules = append(r.rules, p)
	return p
}

// longFormRule records a rule written either as its value alone or as a
// mapping of the value under valueKey and a tolerance.
func (r *resolver) longFormRule(c *colDraft, f field, kind Kind, valueKey string) {
	if val, tol, ok := r.longForm(c.path+"."+f.key, f.v, valueKey); ok {
		r.columnRule(c, f, kind, val, tol)
	}
}

// longForm splits n into the rule's value and its tolerance: n itself and
// nil, or the valueKey and tolerance keys of a mapping.
func (r *resolver) longForm(path string, n *yaml.Node, valueKey string) (val, tol *yaml.Node, ok bool) {
	if n.Kind != yaml.MappingNode {
		return n, nil, true
	}
	fs := r.fields(path, n, []string{valueKey, "tolerance"}, nil)
	if val = fs.get(valueKey); val == nil {
		r.fail(n, CodeMissing, path, "missing key %q", valueKey).Hint = "the long form is {" + valueKey + ": ..., tolerance: ...}"
		return nil, nil, false
	}
	return val, fs.get("tolerance"), true
}

// decodeRows reads the list of row rules.
func (r *resolver) decodeRows(n *yaml.Node) {
	if n.Kind == yaml.MappingNode {
		r.wrongKind(n, "rows", "a list of row rules").Hint = "bounds on the row count go under table.rows"
		return
	}
	items, ok := r.list("rows", n)
	if !ok {
		return
	}
	for _, it := range items {
		if !r.mapping("rows", it) {
			continue
		}
		fs := r.fields("rows", it, rowKeys, func(key string) string {
			if strings.HasPrefix(key, "expr") {
				return `did you mean "expr"?`
			}
			return ""
		})
		p := &pending{rule: &Rule{Kind: KindRow, Pos: r.pos(it)}, name: fs.get("name"), val: fs.get("expr"), tol: fs.get("tolerance")}
		if p.name == nil {
			r.fail(it, CodeMissing, "rows", "row rule has no name").Hint = "add name: <what the rule checks>"
		}
		if p.val == nil {
			r.fail(it, CodeMissing, "rows", "row rule has no expr").Hint = "add expr: <condition every row meets>"
		}
		r.rules = append(r.rules, p)
	}
}

// decodeTable reads the table rules.
func (r *resolver) decodeTable(n *yaml.Node) {
	if !r.mapping("table", n) {
		return
	}
	for _, f := range r.fields("table", n, tableKeys, nil) {
		id := "table." + f.key
		p := &pending{rule: &Rule{ID: id, Pos: r.pos(f.k)}}
		switch f.key {
		case "rows":
			p.rule.Kind, p.rule.Spec, p.val = KindRowCount, RowCountSpec{}, f.v
		case "key":
			val, tol, ok := r.longForm(id, f.v, "columns")
			if !ok {
				continue
			}
			p.rule.Kind, p.rule.Spec, p.val, p.tol = KindKey, KeySpec{}, val, tol
		case "closed":
			if on, _ := r.boolean(id, f.v); !on {
				continue
			}
			p.rule.Kind = KindClosed
		case "required":
			p.rule.Kind, p.rule.Spec, p.val = KindRequired, RequiredSpec{}, f.v
		}
		r.table = append(r.table, p)
	}
}
