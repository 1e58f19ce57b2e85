package rules

import (
	"fmt"
	"math"
	"math/big"
	"regexp"
	"strings"
	"unicode"

	"go.yaml.in/yaml/v3"
)

// statNames are the summary statistics besides quantiles (p<percent>).
var statNames = []string{"count", "mean", "std", "median", "min", "max", "distinct"}

var quantileName = regexp.MustCompile(`^p([0-9]+(\.[0-9]+)?)$`)

// parseStat reads a summary statistic's name: one of statNames, or
// p<percent> for the quantile percent/100, e.g. p95, p99.9.
func parseStat(s string) (SummarySpec, bool) {
	if s == "median" {
		return SummarySpec{Stat: StatMedian, Q: 0.5}, true
	}
	if contains(statNames, s) {
		return SummarySpec{Stat: Stat(s)}, true
	}
	m := quantileName.FindStringSubmatch(s)
	if m == nil {
		return SummarySpec{}, false
	}
	q, _ := new(big.Rat).SetString(m[1])
	if q.Cmp(big.NewRat(100, 1)) > 0 {
		return SummarySpec{}, false
	}
	f, _ := q.Quo(q, big.NewRat(100, 1)).Float64()
	return SummarySpec{Stat: StatQuantile, Q: f}, true
}

// ordered reports whether a column of type t has values with an order and
// a scale, so bounds and location statistics apply.
func ordered(t Type) bool { return t != TypeString && t != TypeBoolean }

// plural names the columns of type t, for messages.
func plural(t Type) string { return t.String() + " columns" }

// textual reports whether a column of type t holds strings.
func textual(t Type) bool { return t == TypeAny || t == TypeString }

// located reports whether statistic s says where values lie, so that on a
// time column it is itself a time (unlike a spread or a count).
func (s Stat) located() bool { return s != StatStd && s != StatCount && s != StatDistinct }

// timed reports whether a column of type t holds points in time.
func timed(t Type) bool { return t == TypeTimestamp || t == TypeDate }

// slug makes a row rule's id from its name: lower case, every run of
// characters other than letters and digits replaced by "-", none at the
// ends.
func slug(name string) string {
	var b strings.Builder
	dash := false
	for _, c := range strings.ToLower(name) {
		if unicode.IsLetter(c) || unicode.IsDigit(c) {
			if dash && b.Len() > 0 {
				b.WriteByte('-')
			}
			b.WriteRune(c)
			dash = false
		} else {
			dash = true
		}
	}
	return b.String()
}

// names reads the policy's name, the columns' types, the statistics and
// rule names, and the column lists of table rules.
func (r *resolver) names() {
	if n := r.top.get("policy"); n == nil {
		r.fail(r.root, CodeMissing, "", `missing key "policy"`).Hint = "name the policy, e.g. policy: daily-sales"
	} else if s, ok := r.text("policy", n); ok {
		if strings.TrimSpace(s) == "" {
			r.fail(n, CodeBadValue, "policy", "the policy name is empty")
		}
		r.p.Name = s
	}
	if n := r.top.get("about"); n != nil && !isNull(n) {
		r.p.About, _ = r.text("about", n)
	}
	for _, c := range r.cols {
		if c.typ == nil {
			continue
		}
		s, ok := r.text(c.path+".type", c.typ)
		if !ok {
			continue
		}
		t, ok := ParseType(s)
		if !ok {
			e := r.fail(c.typ, CodeUnknownType, c.path+".type", "unknown type %q", s)
			if e.Hint = didYouMean(s, TypeNames()); e.Hint == "" {
				e.Hint = "one of " + strings.Join(TypeNames(), ", ")
			}
			continue
		}
		r.column(c).Type = t
	}
	seen := map[string]*pending{}
	joints := map[string]*pending{}
	quantiles := map[*colDraft]map[float64]string{}
	for _, p := range r.rules {
		switch p.rule.Kind {
		case KindType:
			if t := r.column(p.col).Type; t != TypeAny {
				p.rule.Spec = TypeSpec{Type: t}
			}
		case KindSummary:
			r.stat(p, quantiles)
		case KindRow:
			r.rowName(p, seen)
		case KindDistribution:
			r.distNames(p)
		case KindExtremes:
			r.extNames(p)
		case KindJoint:
			r.jointName(p, joints)
		}
	}
	closed := r.closed()
	for _, p := range r.table {
		switch p.rule.Kind {
		case KindKey, KindRequired:
			cols, nodes, ok := r.columnList(p.rule.ID, p.val)
			if !ok {
				continue
			}
			p.rule.Columns = cols
			if closed {
				for i, c := range cols {
					r.declared(p.rule.ID, c, r.pos(nodes[i]))
				}
			}
		case KindClosed:
			allowed := r.columnNames()
			if len(allowed) == 0 {
				r.failAt(p.rule.Pos, CodeBadValue, p.rule.ID, "the table is closed but the policy declares no columns").Hint =
					"declare the columns under columns, or drop closed"
			}
			p.rule.Spec = ClosedSpec{Allowed: allowed}
		}
	}
}

// closed reports whether the policy closes the table to undeclared columns.
func (r *resolver) closed() bool {
	for _, p := range r.table {
		if p.rule.Kind == KindClosed {
			return true
		}
	}
	return false
}

// columnNames lists the declared columns' names.
func (r *resolver) columnNames() []string {
	var names []string
	for _, c := range r.p.Columns {
		names = append(names, c.Name)
	}
	return names
}

// declared reports column c, used by a rule at, when a closed policy does
// not declare it.
func (r *resolver) declared(path, c string, at Pos) {
	if r.p.Column(c) != nil {
		return
	}
	e := r.failAt(at, CodeUndeclared, path, "column %q is not declared, and the table is closed", c)
	if e.Hint = didYouMean(c, r.columnNames()); e.Hint == "" {
		e.Hint = "declare it under columns"
	}
}

// stat resolves a summary rule's statistic. quantiles holds the quantiles
// seen per column, to catch p95 and p95.0 both written.
func (r *resolver) stat(p *pending, quantiles map[*colDraft]map[float64]string) {
	name := strings.TrimPrefix(p.rule.ID, p.col.path+".summary.")
	spec, ok := parseStat(name)
	if !ok {
		e := r.failAt(p.rule.Pos, CodeUnknownStat, p.col.path+".summary", "unknown statistic %q", name)
		if s, ok := parseStat(strings.ToLower(name)); ok && s.Stat == StatQuantile {
			e.Hint = fmt.Sprintf("did you mean %q?", strings.ToLower(name))
		} else if quantileName.MatchString(name) {
			e.Hint = "quantiles run from p0 to p100"
		} else if e.Hint = didYouMean(name, statNames); e.Hint == "" {
			e.Hint = "one of " + strings.Join(statNames, ", ") + ", or a quantile p<percent> such as p95"
		}
		return
	}
	if spec.Stat == StatQuantile {
		if quantiles[p.col] == nil {
			quantiles[p.col] = map[float64]string{}
		}
		if prev, dup := quantiles[p.col][spec.Q]; dup {
			r.failAt(p.rule.Pos, CodeDuplicate, p.col.path+".summary", "%s is the same quantile as %s", name, prev)
			return
		}
		quantiles[p.col][spec.Q] = name
	}
	if t := r.column(p.col).Type; !ordered(t) && spec.Stat != StatCount && spec.Stat != StatDistinct {
		r.failAt(p.rule.Pos, CodeNotApplicable, p.rule.ID, "%s needs ordered values, not %s", name, plural(t)).Hint =
			"count and distinct apply to every type"
		return
	}
	p.rule.Spec = spec
}

// rowName gives a row rule its id from its name. seen holds the ids given
// so far.
func (r *resolver) rowName(p *pending, seen map[string]*pending) {
	if p.name == nil {
		return
	}
	name, ok := r.text("rows", p.name)
	if !ok {
		return
	}
	id := "rows." + slug(name)
	if id == "rows." {
		r.fail(p.name, CodeBadValue, "rows", "row rule name %q has no letter or digit", name)
		return
	}
	if prev, dup := seen[id]; dup {
		prevName := prev.rule.Spec.(RowSpec).Name
		e := r.fail(p.name, CodeDuplicate, id, "row rule %q written twice (first at line %d)", name, prev.name.Line)
		if prevName != name {
			e.Message = fmt.Sprintf("row rule %q has the same id as %q (line %d)", name, prevName, prev.name.Line)
			e.Hint = "rename one of them"
		}
		return
	}
	seen[id] = p
	p.rule.ID = id
	p.rule.Spec = RowSpec{Name: name}
}

// tolerances resolves every tolerance written: the columns' defaults, the
// rules' own, and the bounds of summary statistics and the row count.
func (r *resolver) tolerances() {
	for _, c := range r.cols {
		if c.tol != nil {
			if t, ok := r.shareTolerance(c.path+".tolerance", c.tol); ok {
				c.def = &t
			}
		}
	}
	for _, p := range append(append([]*pending(nil), r.table...), r.rules...) {
		var (
			t  Tolerance
			ok bool
		)
		path := p.rule.ID
		if path == "" {
			path = "rows"
		}
		switch {
		case p.rule.Kind == KindRowCount:
			t, ok = r.bounds(path, p.val, r.number)
		case p.rule.Kind == KindSummary:
			spec, known := p.rule.Spec.(SummarySpec)
			if !known {
				continue
			}
			t, ok = r.bounds(path, p.val, r.statValue(r.column(p.col).Type, spec.Stat))
		case p.rule.Kind == KindDistribution:
			t, ok = r.distTolerance(p)
		case p.rule.Kind == KindDrift:
			t, ok = r.driftTolerance(p)
		case p.tol != nil:
			t, ok = r.shareTolerance(path, p.tol)
		}
		if ok {
			p.rule.Tolerance, p.tolSet = t, true
		}
	}
}

// statValue returns the reader of bounds on statistic s of a column of
// type t: time texts for where a time column's values lie, numbers
// otherwise.
func (r *resolver) statValue(t Type, s Stat) func(string, *yaml.Node) (float64, bool) {
	if timed(t) && s.located() {
		return func(path string, n *yaml.Node) (float64, bool) {
			return r.timeText(path, n, t)
		}
	}
	return r.number
}

// timeText reads a time bound on a column of type t.
func (r *resolver) timeText(path string, n *yaml.Node, t Type) (float64, bool) {
	tag := n.ShortTag()
	if n.Kind != yaml.ScalarNode || (tag != "!!str" && tag != "!!timestamp") {
		want := "a timestamp such as 2024-01-31T08:00:00Z"
		if t == TypeDate {
			want = "a date such as 2024-01-31"
		}
		r.wrongKind(n, path, want)
		return 0, false
	}
	v, err := parseTime(n.Value, t)
	if err != nil {
		r.fail(n, CodeBadValue, path, "%v", err)
		return 0, false
	}
	return v, true
}

// shareTolerance reads a tolerance on a share: a share alone is the fail
// threshold; a mapping sets warn, fail or both, warn at most fail.
func (r *resolver) shareTolerance(path string, n *yaml.Node) (Tolerance, bool) {
	return r.unitTolerance(path, n, HigherIsWorse)
}

// unitTolerance reads thresholds in [0, 1], written as fractions or
// percents, on a measure that gets worse in direction d: a value alone is
// the fail threshold; a mapping sets warn, fail or both, warn no stricter
// than fail. Shares and distances get worse upwards (warn at most fail),
// p-values downwards (warn at least fail).
func (r *resolver) unitTolerance(path string, n *yaml.Node, d Direction) (Tolerance, bool) {
	t := Tolerance{Direction: d, Pos: r.pos(n)}
	limit, what := AtMost, "a share"
	if d == LowerIsWorse {
		limit, what = AtLeast, "a p-value"
	}
	if n.Kind == yaml.ScalarNode {
		f, ok := r.share(path, n)
		t.Fail = limit(f)
		return t, ok
	}
	if n.Kind != yaml.MappingNode {
		r.wrongKind(n, path, what+" or a mapping of warn and fail")
		return t, false
	}
	fs := r.fields(path, n, []string{"warn", "fail"}, nil)
	ok := true
	var warnNode *yaml.Node
	for _, f := range fs {
		v, good := r.share(path+"."+f.key, f.v)
		ok = ok && good
		if f.key == "warn" {
			t.Warn, warnNode = limit(v), f.v
		} else {
			t.Fail = limit(v)
		}
	}
	switch {
	case len(fs) == 0:
		r.fail(n, CodeTolerance, path, "the tolerance sets neither warn nor fail")
		return t, false
	case !ok || t.Warn == nil || t.Fail == nil:
	case d == HigherIsWorse && t.Warn.Hi > t.Fail.Hi:
		r.fail(warnNode, CodeTolerance, path, "warn %s is above fail %s", formatPercent(t.Warn.Hi), formatPercent(t.Fail.Hi)).Hint =
			"warn is the smaller threshold"
		return t, false
	case d == LowerIsWorse && t.Warn.Lo < t.Fail.Lo:
		r.fail(warnNode, CodeTolerance, path, "warn %s is below fail %s", formatNumber(t.Warn.Lo), formatNumber(t.Fail.Lo)).Hint =
			"on a p-value warn is the larger threshold: p below fail fails, below warn warns"
		return t, false
	}
	return t, ok
}

// bounds reads where a bounded measure may lie: minimum and maximum give
// the fail interval; warn and fail give [lo, hi] intervals with null for an
// open side. value reads one bound.
func (r *resolver) bounds(path string, n *yaml.Node, value func(string, *yaml.Node) (float64, bool)) (Tolerance, bool) {
	t := Tolerance{Direction: OutsideIsWorse, Pos: r.pos(n)}
	if !r.mapping(path, n) {
		return t, false
	}
	fs := r.fields(path, n, []string{"minimum", "maximum", "warn", "fail"}, nil)
	ok := true
	for _, f := range fs {
		switch f.key {
		case "warn", "fail":
			l, good := r.interval(path+"."+f.key, f.v, value)
			ok = ok && good
			if f.key == "warn" {
				t.Warn = l
			} else {
				t.Fail = l
			}
		}
	}
	lo, hi := fs.get("minimum"), fs.get("maximum")
	if lo != nil || hi != nil {
		if f := fs.get("fail"); f != nil {
			r.fail(f, CodeTolerance, path, "fail repeats minimum and maximum").Hint = "write the fail bounds one way"
			return t, false
		}
		t.Fail = &Limit{Lo: math.Inf(-1), Hi: math.Inf(1)}
		if lo != nil {
			v, good := value(path+".minimum", lo)
			t.Fail.Lo, ok = v, ok && good
		}
		if hi != nil {
			v, good := value(path+".maximum", hi)
			t.Fail.Hi, ok = v, ok && good
		}
		if ok && t.Fail.Lo > t.Fail.Hi {
			r.fail(hi, CodeEmptyRange, path, "minimum %s is above maximum %s", lo.Value, hi.Value)
			return t, false
		}
	}
	switch {
	case !ok:
		return t, false
	case t.Warn == nil && t.Fail == nil:
		r.fail(n, CodeTolerance, path, "no bounds: write minimum, maximum, warn or fail")
		return t, false
	case t.Warn != nil && t.Fail != nil && (widens(t.Warn.Lo, t.Fail.Lo, -1) || widens(t.Warn.Hi, t.Fail.Hi, 1)):
		r.fail(fs.get("warn"), CodeTolerance, path, "the warn interval reaches outside the fail interval").Hint =
			"warn is the narrower interval"
		return t, false
	case t.Warn != nil && t.Fail != nil && max(t.Warn.Lo, t.Fail.Lo) > min(t.Warn.Hi, t.Fail.Hi):
		r.fail(fs.get("warn"), CodeEmptyRange, path, "the warn and fail intervals do not meet, so no value passes")
		return t, false
	}
	return t, true
}

// widens reports whether a warn bound w lies beyond the fail bound f on
// the side sign (-1 low, +1 high). An open warn side asks for no warning
// there, so it never widens.
func widens(w, f float64, sign float64) bool {
	return !math.IsInf(w, 0) && (w-f)*sign > 0
}

// interval reads [lo, hi]; null leaves a side open.
func (r *resolver) interval(path string, n *yaml.Node, value func(string, *yaml.Node) (float64, bool)) (*Limit, bool) {
	items, ok := r.list(path, n)
	if !ok || len(items) != 2 {
		if ok {
			r.fail(n, CodeWrongKind, path, "expected [lo, hi], got a list of %d", len(items)).Hint = "write null for an open side"
		}
		return nil, false
	}
	l := &Limit{Lo: math.Inf(-1), Hi: math.Inf(1)}
	for i, it := range items {
		if isNull(it) {
			continue
		}
		v, good := value(path, it)
		if !good {
			ok = false
		} else if i == 0 {
			l.Lo = v
		} else {
			l.Hi = v
		}
	}
	switch {
	case !ok:
		return nil, false
	case isNull(items[0]) && isNull(items[1]):
		r.fail(n, CodeTolerance, path, "both sides are open, so nothing is bounded")
		return nil, false
	case l.Lo > l.Hi:
		r.fail(n, CodeEmptyRange, path, "lo %s is above hi %s", items[0].Value, items[1].Value)
		return nil, false
	}
	return l, true
}

// values resolves what column rules say: bounds, enums, patterns and
// lengths, each checked against the column's type, then bounds against
// each other.
func (r *resolver) values() {
	lower := map[*colDraft][]*pending{}
	upper := map[*colDraft][]*pending{}
	for _, p := range r.rules {
		if p.col == nil || p.val == nil {
			continue
		}
		t := r.column(p.col).Type
		id, key := p.rule.ID, p.rule.ID[len(p.col.path)+1:]
		applies := true
		switch p.rule.Kind {
		case KindMinimum, KindMaximum:
			if applies = ordered(t); applies {
				r.boundSpec(p, t, key)
			}
		case KindPattern:
			if applies = textual(t); applies {
				r.patternSpec(p)
			}
		case KindMinLength, KindMaxLength:
			if applies = textual(t); applies {
				if v, ok := r.count(id, p.val); ok {
					p.rule.Spec = LengthSpec{Bound: p.rule.Kind, Length: v}
				}
			}
		case KindEnum:
			r.enumSpec(p, t)
		case KindDistribution:
			r.distributionSpec(p, t)
		case KindExtremes:
			r.extremesSpec(p, t)
		}
		if !applies {
			r.failAt(p.rule.Pos, CodeNotApplicable, id, "%s does not apply to %s", key, plural(t))
		}
		switch p.rule.Kind {
		case KindMinimum, KindMinLength:
			lower[p.col] = append(lower[p.col], p)
		case KindMaximum, KindMaxLength:
			upper[p.col] = append(upper[p.col], p)
		}
	}
	for _, c := range r.cols {
		for _, lo := range lower[c] {
			for _, hi := range upper[c] {
				r.checkRange(lo, hi)
			}
		}
	}
	r.linkTails()
	r.jointSpecs()
}

// checkRange reports a lower and an upper bound of one column that no value
// can meet together.
func (r *resolver) checkRange(lo, hi *pending) {
	var (
		empty    bool
		a, b     string
		from, to string
	)
	switch ls := lo.rule.Spec.(type) {
	case BoundSpec:
		hs, ok := hi.rule.Spec.(BoundSpec)
		if !ok {
			return
		}
		empty = ls.Value > hs.Value || (ls.Value == hs.Value && (ls.Exclusive || hs.Exclusive))
		a, b = ls.Text, hs.Text
	case LengthSpec:
		hs, ok := hi.rule.Spec.(LengthSpec)
		if !ok {
			return
		}
		empty = ls.Length > hs.Length
		a, b = fmt.Sprint(ls.Length), fmt.Sprint(hs.Length)
	default:
		return
	}
	if !empty {
		return
	}
	from, to = lo.rule.ID[len(lo.col.path)+1:], hi.rule.ID[len(hi.col.path)+1:]
	later := hi
	if lo.rule.Pos.Line > hi.rule.Pos.Line || (lo.rule.Pos.Line == hi.rule.Pos.Line && lo.rule.Pos.Col > hi.rule.Pos.Col) {
		later = lo
	}
	r.failAt(later.rule.Pos, CodeEmptyRange, later.col.path, "%s %s and %s %s leave no value allowed", from, a, to, b)
}

// boundSpec reads a minimum or maximum: a number, or a time text on a
// timestamp or date column.
func (r *resolver) boundSpec(p *pending, t Type, key string) {
	var (
		v  float64
		ok bool
	)
	switch {
	case timed(t):
		v, ok = r.timeText(p.rule.ID, p.val, t)
	case t == TypeAny && p.val.Kind == yaml.ScalarNode && !isNumber(p.val) && isTime(p.val.Value):
		r.wrongKind(p.val, p.rule.ID, "a number").Hint = "declare type: timestamp or date to bound times"
	default:
		v, ok = r.number(p.rule.ID, p.val)
	}
	if ok {
		p.rule.Spec = BoundSpec{Bound: p.rule.Kind, Value: v, Exclusive: strings.HasPrefix(key, "exclusive"), Text: p.val.Value}
	}
}

// isTime reports whether s reads as a timestamp or a date.
func isTime(s string) bool {
	_, err := parseTime(s, TypeTimestamp)
	return err == nil
}

// patternSpec compiles a pattern.
func (r *resolver) patternSpec(p *pending) {
	s, ok := r.text(p.rule.ID, p.val)
	if !ok {
		return
	}
	re, err := regexp.Compile(s)
	if err != nil {
		msg := strings.TrimPrefix(err.Error(), "error parsing regexp: ")
		r.fail(p.val, CodeBadPattern, p.rule.ID, "invalid pattern: %s", msg).Hint = "patterns are RE2 regular expressions"
		return
	}
	p.rule.Spec = PatternSpec{Pattern: s, Regexp: re}
}

// enumKind names the kind of an enum value.
func enumKind(n *yaml.Node) string {
	switch {
	case isNumber(n):
		return "number"
	case n.ShortTag() == "!!bool":
		return "boolean"
	}
	return "text"
}

// enumSpec reads an enum: values of one kind, fitting the column's type,
// none twice.
func (r *resolver) enumSpec(p *pending, t Type) {
	id := p.rule.ID
	items, ok := r.list(id, p.val)
	if !ok {
		return
	}
	if len(items) == 0 {
		r.fail(p.val, CodeBadValue, id, "the enum is empty")
		return
	}
	want := map[Type]string{TypeInteger: "number", TypeNumber: "number", TypeBoolean: "boolean",
		TypeTimestamp: "text", TypeDate: "text"}[t]
	spec := EnumSpec{}
	kind := ""
	seen := map[string]bool{}
	for _, it := range items {
		if it.Kind != yaml.ScalarNode || isNull(it) {
			if e := r.wrongKind(it, id, "a text or a number"); isNull(it) {
				e.Hint = "bound missing values with nulls"
			}
			ok = false
			continue
		}
		k := enumKind(it)
		switch {
		case want != "" && k != want:
			r.fail(it, CodeWrongKind, id, "%s need %s values, got %s", plural(t), want, describe(it))
			ok = false
			continue
		case kind == "":
			kind = k
		case k != kind:
			r.fail(it, CodeMixedEnum, id, "the enum mixes %s and %s values", kind, k).Hint = "quote numbers to compare them as text"
			ok = false
			continue
		}
		v, num, good := it.Value, 0.0, true
		switch {
		case k == "number":
			num, good = r.number(id, it)
			v = fmt.Sprint(num)
		case timed(t):
			num, good = r.timeText(id, it, t)
		}
		if !good {
			ok = false
			continue
		}
		if seen[v] {
			r.fail(it, CodeDuplicate, id, "enum value %s listed twice", it.Value)
			continue
		}
		seen[v] = true
		spec.Values = append(spec.Values, it.Value)
		spec.Numbers = append(spec.Numbers, num)
	}
	if !ok {
		return
	}
	if kind != "number" && !timed(t) {
		spec.Numbers = nil
	}
	p.rule.Spec = spec
}

// defaults gives every rule still without a tolerance its default, and
// every rule its measure, and lists the rules: table rules first, then the
// others in the order written.
func (r *resolver) defaults() {
	all := append(append([]*pending(nil), r.table...), r.rules...)
	if len(all) == 0 && len(r.errs) == 0 {
		r.fail(r.root, CodeEmpty, "", "the policy has no rules").Hint = "add columns, rows or table"
	}
	for _, p := range all {
		if t, ok := kindDefault(p.rule.Spec); ok && !p.tolSet {
			p.rule.Tolerance = t
		} else if !p.tolSet {
			p.rule.Tolerance = Tolerance{Direction: HigherIsWorse, Fail: AtMost(0)}
			if p.col != nil && p.col.def != nil && p.rule.Kind != KindNulls {
				d := *p.col.def
				p.rule.Tolerance = Tolerance{Direction: d.Direction, Warn: copyLimit(d.Warn), Fail: copyLimit(d.Fail), Pos: d.Pos}
			}
		}
		p.rule.Measure = measure(p.rule)
		r.p.Rules = append(r.p.Rules, p.rule)
	}
}

// kindDefault is the default tolerance of a kind of rule whose measure is
// not a plain share of breaking values, and which therefore ignores the
// column's tolerance.
func kindDefault(s Spec) (Tolerance, bool) {
	switch s := s.(type) {
	case DistributionSpec:
		return defaultDistTolerance(s), true
	case ExtremesSpec:
		return defaultExtremesTolerance(s.Method), true
	case JointSpec:
		return defaultExtremesTolerance(""), true
	case DriftSpec:
		return defaultDriftTolerance(s.Measure), true
	}
	return Tolerance{}, false
}

func copyLimit(l *Limit) *Limit {
	if l == nil {
		return nil
	}
	c := *l
	return &c
}

// measure names what rule r measures.
func measure(r *Rule) Measure {
	switch s := r.Spec.(type) {
	case SummarySpec:
		name := r.ID[strings.LastIndex(r.ID, ".summary.")+len(".summary."):]
		if s.Stat == StatCount || s.Stat == StatDistinct {
			return Measure{Name: name, Unit: UnitCount}
		}
		return Measure{Name: name, Unit: UnitValue}
	case BoundSpec:
		switch {
		case s.Bound == KindMinimum && s.Exclusive:
			return Measure{Name: "at or below minimum share"}
		case s.Bound == KindMinimum:
			return Measure{Name: "below minimum share"}
		case s.Exclusive:
			return Measure{Name: "at or above maximum share"}
		}
		return Measure{Name: "above maximum share"}
	case DistributionSpec:
		return distributionMeasure(s)
	case ExtremesSpec:
		return Measure{Name: "extreme share"}
	case JointSpec:
		return Measure{Name: "outlying row share"}
	case DriftSpec:
		return driftMeasure(s)
	case PairSpec:
		return pairMeasure(s)
	}
	switch r.Kind {
	case KindRowCount:
		return Measure{Name: "rows", Unit: UnitCount}
	case KindClosed:
		return Measure{Name: "undeclared columns", Unit: UnitCount}
	case KindRequired:
		return Measure{Name: "absent columns", Unit: UnitCount}
	}
	return Measure{Name: shareNames[r.Kind]}
}

// shareNames names the share each kind of rule measures.
var shareNames = map[Kind]string{
	KindType:      "type error share",
	KindNulls:     "null share",
	KindUnique:    "duplicate share",
	KindEnum:      "outside enum share",
	KindPattern:   "pattern mismatch share",
	KindMinLength: "too short share",
	KindMaxLength: "too long share",
	KindRow:       "false row share",
	KindKey:       "duplicate key share",
}
