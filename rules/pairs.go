package rules

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// This file resolves the top-level pairs list: rules on how two columns
// relate. One pair entry states a relation and yields one rule per bound
// written under it (pairs.<id>.slope, pairs.<id>.residuals, ...), or one
// rule named after the relation for ordered and determines.

// Relation names how the two columns of a pair rule relate.
type Relation string

// The relations a pair rule may state.
const (
	// RelationLinear: y follows a straight line in x.
	RelationLinear Relation = "linear"
	// RelationMonotonic: y rises (or falls) with x, by rank correlation.
	RelationMonotonic Relation = "monotonic"
	// RelationOrdered: the first column's value is at most the second's.
	RelationOrdered Relation = "ordered"
	// RelationAssociation: two categorical columns, chi-square test of
	// independence and Cramér's V.
	RelationAssociation Relation = "association"
	// RelationDetermines: each value of the first column goes with one
	// value of the second (a functional dependency).
	RelationDetermines Relation = "determines"
)

// The kinds of pair rule, one per relation.
const (
	KindLinear      = Kind(RelationLinear)
	KindMonotonic   = Kind(RelationMonotonic)
	KindOrdered     = Kind(RelationOrdered)
	KindAssociation = Kind(RelationAssociation)
	KindDetermines  = Kind(RelationDetermines)
)

// RelationNames lists the relations a pair rule may state.
func RelationNames() []string {
	return []string{string(RelationLinear), string(RelationMonotonic), string(RelationOrdered),
		string(RelationAssociation), string(RelationDetermines)}
}

// PairMeasure names what one rule of a pair entry measures: the key its
// bounds are written under and the last part of its id.
type PairMeasure string

// The measures of pair rules.
const (
	PairCorrelation PairMeasure = "correlation" // Pearson's r (linear), Spearman's rho or Kendall's tau-b (monotonic)
	PairSlope       PairMeasure = "slope"       // the fitted line's slope
	PairIntercept   PairMeasure = "intercept"   // the fitted line's intercept
	PairR2          PairMeasure = "r2"          // R² of the least-squares line
	PairPValue      PairMeasure = "p-value"     // p-value of the test of no association
	PairResiduals   PairMeasure = "residuals"   // share of rows far from the line
	PairCramersV    PairMeasure = "cramers-v"   // Cramér's V of two categorical columns
	PairOrdered     PairMeasure = "ordered"     // share of rows out of order
	PairDetermines  PairMeasure = "determines"  // share of rows in groups that break the dependency
)

// Fit names how a linear pair rule fits its line.
type Fit string

// The fits of a linear pair rule.
const (
	FitOLS      Fit = "ols"       // least squares
	FitTheilSen Fit = "theil-sen" // median of pairwise slopes (Theil 1950, Sen 1968)
	FitHuber    Fit = "huber"     // Huber's M-estimate (Huber 1964, 1973)
)

// Coefficient names a correlation coefficient.
type Coefficient string

// The coefficients: Pearson's for linear pairs, a rank coefficient for
// monotonic ones.
const (
	CoefPearson  Coefficient = "pearson"
	CoefSpearman Coefficient = "spearman"
	CoefKendall  Coefficient = "kendall"
)

// ResidualRule names how a linear pair rule flags a row far from its line.
type ResidualRule string

// The residual rules.
const (
	// ResidualStudentized flags rows whose externally studentized residual
	// from the least-squares line exceeds the cutoff in absolute value.
	ResidualStudentized ResidualRule = "studentized"
	// ResidualCooks flags rows whose Cook's distance exceeds the cutoff.
	ResidualCooks ResidualRule = "cooks"
	// ResidualStandardized flags rows whose residual from a robust line,
	// in units of its robust scale, exceeds the cutoff in absolute value.
	ResidualStandardized ResidualRule = "standardized"
)

// PairSpec: one measure of how two columns, Columns[0] (x, or A) and
// Columns[1] (y, or B), relate.
type PairSpec struct {
	Relation Relation
	Measure  PairMeasure
	// Coefficient is the correlation coefficient of correlation and
	// p-value rules: pearson for linear pairs, spearman (default) or
	// kendall for monotonic ones; "" for the others.
	Coefficient Coefficient
	// Fit is the line of slope, intercept and residuals rules: ols
	// (default), theil-sen or huber; "" for the others.
	Fit Fit
	// Residual and Cutoff say which rows a residuals rule flags: a row
	// whose score is above Cutoff; Cutoff 0 means the rule's default, the
	// Bonferroni critical value of |t| at level 0.05 for studentized and
	// standardized, the median of F(2, n-2) for cooks (see package
	// checks).
	Residual ResidualRule
	Cutoff   float64
	// Strict asks an ordered pair for first < second instead of <=.
	Strict bool
	// Sample is how many pairs a robust fit or a rank coefficient keeps:
	// beyond it they rest on a seeded uniform sample of that size.
	Sample int
	// Seed seeds that sample and the sample of points a report plots.
	Seed uint64
}

// Kind is the relation's kind.
func (s PairSpec) Kind() Kind { return Kind(s.Relation) }

// Defaults of pair rules.
const (
	// DefaultPairSample is how many pairs a robust fit or a rank
	// coefficient keeps before it samples: 16 MB, and well under a second
	// of CPU for each fit (see checks' BenchmarkPairs).
	DefaultPairSample = 1_000_000
)

var (
	// pairKeys are the keys every pair entry may have.
	pairKeys = []string{"columns", "name", "relation", "by", "where"}
	// relationKeys are the keys of each relation, and measureKeys those
	// among them that make a rule, in the order a report lists them.
	relationKeys = map[Relation][]string{
		RelationLinear:      {"correlation", "slope", "intercept", "r2", "p-value", "residuals", "fit", "sample", "seed"},
		RelationMonotonic:   {"correlation", "p-value", "method", "sample", "seed"},
		RelationOrdered:     {"strict", "tolerance"},
		RelationAssociation: {"cramers-v", "p-value"},
		RelationDetermines:  {"tolerance"},
	}
	measureKeys = map[Relation][]string{
		RelationLinear:      {"correlation", "slope", "intercept", "r2", "p-value", "residuals"},
		RelationMonotonic:   {"correlation", "p-value"},
		RelationAssociation: {"cramers-v", "p-value"},
	}
)

// allPairKeys lists every key a pair entry may have, whatever its relation.
func allPairKeys() []string {
	keys := slices.Clone(pairKeys)
	for _, rel := range RelationNames() {
		for _, k := range relationKeys[Relation(rel)] {
			if !slices.Contains(keys, k) {
				keys = append(keys, k)
			}
		}
	}
	return keys
}

// pairDraft is a pair entry while it resolves.
type pairDraft struct {
	node     *yaml.Node
	keys     fields
	path     string   // the entry's id "pairs.<base>", or "pairs" when none could be made
	relation Relation // "" when missing or unknown
	rules    []*pending
	seg      *segDraft
}

// decodePairs reads the list of pair rules and makes a pending rule for
// each measure written (or the relation's one rule).
func (r *resolver) decodePairs(n *yaml.Node) {
	if n.Kind == yaml.MappingNode {
		r.wrongKind(n, "pairs", "a list of pair rules").Hint = "write each pair as a list item: - columns: [x, y]"
		return
	}
	items, ok := r.list("pairs", n)
	if !ok {
		return
	}
	for _, it := range items {
		if !r.mapping("pairs", it) {
			continue
		}
		d := &pairDraft{node: it, path: "pairs"}
		d.keys = r.fields("pairs", it, allPairKeys(), func(key string) string {
			switch key {
			case "x", "y", "first", "second":
				return "name the two columns in order: columns: [x, y]"
			case "cutoff", "rule":
				return "write the residual rule under residuals: {rule: ..., cutoff: ...}"
			}
			return ""
		})
		r.pairs = append(r.pairs, d)
		if by, where := d.keys.get("by"), d.keys.get("where"); by != nil || where != nil {
			d.seg = &segDraft{by: by, where: where}
		}
		d.path = r.pairID(d)
		rel := d.keys.get("relation")
		if rel == nil {
			r.fail(it, CodeMissing, d.path, `missing key "relation"`).Hint = "one of " + strings.Join(RelationNames(), ", ")
			continue
		}
		s, ok := r.text(d.path+".relation", rel)
		if !ok {
			continue
		}
		if !slices.Contains(RelationNames(), s) {
			r.unknownWord(rel, d.path+".relation", "relation", s, RelationNames())
			continue
		}
		d.relation = Relation(s)
		kind := Kind(d.relation)
		measures := measureKeys[d.relation]
		if measures == nil {
			d.rules = append(d.rules, &pending{rule: &Rule{ID: d.path + "." + s, Kind: kind, Pos: r.pos(it)},
				tol: d.keys.get("tolerance"), pair: d})
			r.rules = append(r.rules, d.rules...)
			continue
		}
		for _, f := range d.keys {
			if slices.Contains(measures, f.key) {
				d.rules = append(d.rules, &pending{rule: &Rule{ID: d.path + "." + f.key, Kind: kind, Pos: r.pos(f.k)}, val: f.v, pair: d})
			}
		}
		if len(d.rules) == 0 {
			r.fail(it, CodeMissing, d.path, "a %s pair states nothing to check", s).Hint =
				"bound at least one of " + strings.Join(measures, ", ")
		}
		r.rules = append(r.rules, d.rules...)
	}
}

// pairID makes the id of a pair entry: pairs.<slug of its name>, or
// pairs.<x>+<y> without a name; "pairs" when neither can be read (the
// problem is reported later).
func (r *resolver) pairID(d *pairDraft) string {
	if n := d.keys.get("name"); n != nil {
		if n.Kind != yaml.ScalarNode || isNull(n) {
			return "pairs"
		}
		if s := slug(n.Value); s != "" {
			return "pairs." + s
		}
		return "pairs"
	}
	n := d.keys.get("columns")
	if n == nil || n.Kind != yaml.SequenceNode || len(n.Content) != 2 {
		return "pairs"
	}
	var cols []string
	for _, c := range n.Content {
		c = deref(c)
		if c.Kind != yaml.ScalarNode || isNull(c) || strings.TrimSpace(c.Value) == "" {
			return "pairs"
		}
		cols = append(cols, c.Value)
	}
	return "pairs." + cols[0] + "+" + cols[1]
}

// resolvePairs resolves every pair entry: its columns, the keys its
// relation takes, the columns' types, its settings and each rule's bounds
// or tolerance.
func (r *resolver) resolvePairs() {
	seen := map[string]*pairDraft{}
	for _, d := range r.pairs {
		cols, ok := r.pairColumns(d)
		if d.path != "pairs" {
			if prev, dup := seen[d.path]; dup {
				at := d.keys.get("name")
				if at == nil {
					at = d.node
				}
				r.fail(at, CodeDuplicate, d.path, "pair rule %s written twice (first at line %d)", d.path, prev.node.Line).Hint =
					"give the rules different names"
				ok = false
			} else {
				seen[d.path] = d
			}
		} else if n := d.keys.get("name"); n != nil {
			if s, good := r.text("pairs.name", n); good && slug(s) == "" {
				r.fail(n, CodeBadValue, "pairs", "pair rule name %q has no letter or digit", s)
			}
		}
		if d.relation == "" {
			continue
		}
		ok = r.pairKeysApply(d) && ok
		if cols != nil {
			ok = r.pairTypes(d, cols) && ok
		}
		base, good := r.pairSettings(d)
		ok = ok && good
		for _, p := range d.rules {
			p.rule.Columns = cols
			spec := base
			spec.Measure = PairMeasure(strings.TrimPrefix(p.rule.ID, d.path+"."))
			if good := r.pairRule(p, &spec); good && ok && cols != nil {
				p.rule.Spec = spec
			}
		}
	}
}

// pairColumns reads the two columns of a pair entry.
func (r *resolver) pairColumns(d *pairDraft) ([]string, bool) {
	n := d.keys.get("columns")
	if n == nil {
		r.fail(d.node, CodeMissing, d.path, `missing key "columns"`).Hint = "name the two columns: columns: [x, y]"
		return nil, false
	}
	cols, nodes, ok := r.columnList(d.path+".columns", n)
	if !ok {
		return nil, false
	}
	if len(cols) != 2 {
		r.fail(n, CodeBadValue, d.path+".columns", "a pair names two columns, got %d", len(cols)).Hint =
			"relate more columns with joint rules, or write one pair for each two"
		return nil, false
	}
	if r.closed() {
		for i, c := range cols {
			r.declared(d.path, c, r.pos(nodes[i]))
		}
	}
	return cols, true
}

// pairKeysApply reports keys written for another relation.
func (r *resolver) pairKeysApply(d *pairDraft) bool {
	own := append(slices.Clone(pairKeys), relationKeys[d.relation]...)
	ok := true
	for _, f := range d.keys {
		if !slices.Contains(own, f.key) {
			r.fail(f.k, CodeNotApplicable, d.path, "%s does not apply to %s pairs", f.key, d.relation).Hint =
				fmt.Sprintf("%s pairs take %s", d.relation, strings.Join(relationKeys[d.relation], ", "))
			ok = false
		}
	}
	return ok
}

// pairTypes checks the declared types of a pair's columns against what its
// relation compares: numbers for linear and monotonic, numbers or times
// (both of one sort) for ordered, categories for association; determines
// takes any type.
func (r *resolver) pairTypes(d *pairDraft, cols []string) bool {
	types := make([]Type, 2)
	for i, c := range cols {
		if col := r.p.Column(c); col != nil {
			types[i] = col.Type
		}
	}
	numeric := func(t Type) bool { return t == TypeAny || t == TypeInteger || t == TypeNumber }
	var want string
	var fits func(Type) bool
	switch d.relation {
	case RelationLinear, RelationMonotonic:
		want, fits = "number and integer columns", numeric
	case RelationOrdered:
		want, fits = "number, integer, timestamp and date columns", func(t Type) bool { return numeric(t) || timed(t) }
	case RelationAssociation:
		want, fits = "string, integer and boolean columns", func(t Type) bool {
			return t == TypeAny || t == TypeString || t == TypeInteger || t == TypeBoolean
		}
	default:
		return true
	}
	ok := true
	for i, t := range types {
		if !fits(t) {
			r.fail(d.keys.get("columns"), CodeNotApplicable, d.path, "column %q is declared %s; %s pairs apply to %s",
				cols[i], t, d.relation, want)
			ok = false
		}
	}
	if ok && d.relation == RelationOrdered && types[0] != TypeAny && types[1] != TypeAny && timed(types[0]) != timed(types[1]) {
		r.fail(d.keys.get("columns"), CodeNotApplicable, d.path, "column %q is declared %s and %q %s; an ordered pair compares two numbers or two times",
			cols[0], types[0], cols[1], types[1])
		ok = false
	}
	return ok
}

// pairSettings reads what the rules of one pair entry share: the fit, the
// coefficient, strictness, sample and seed.
func (r *resolver) pairSettings(d *pairDraft) (PairSpec, bool) {
	s := PairSpec{Relation: d.relation, Sample: DefaultPairSample, Seed: DefaultSeed}
	ok := true
	switch d.relation {
	case RelationLinear:
		s.Coefficient, s.Fit = CoefPearson, FitOLS
	case RelationMonotonic:
		s.Coefficient = CoefSpearman
	}
	if n := d.keys.get("fit"); n != nil && d.relation == RelationLinear {
		v, good := r.word(d.path+".fit", n, "fit", []string{string(FitOLS), string(FitTheilSen), string(FitHuber)})
		ok = ok && good
		s.Fit = Fit(v)
		if good && s.Fit != FitOLS && d.keys.get("slope") == nil && d.keys.get("intercept") == nil && d.keys.get("residuals") == nil {
			r.fail(n, CodeNotApplicable, d.path+".fit", "the fit draws the line of slope, intercept and residuals, and the rule bounds none of them").Hint =
				"correlation, r2 and p-value always describe the least-squares line"
			ok = false
		}
	}
	if n := d.keys.get("method"); n != nil && d.relation == RelationMonotonic {
		v, good := r.word(d.path+".method", n, "method", []string{string(CoefSpearman), string(CoefKendall)})
		ok = ok && good
		s.Coefficient = Coefficient(v)
	}
	if n := d.keys.get("strict"); n != nil && d.relation == RelationOrdered {
		v, good := r.boolean(d.path+".strict", n)
		ok = ok && good
		s.Strict = v
	}
	if n := d.keys.get("sample"); n != nil && (d.relation == RelationLinear || d.relation == RelationMonotonic) {
		v, good := r.count(d.path+".sample", n)
		switch {
		case !good:
			ok = false
		case d.relation == RelationLinear && s.Fit == FitOLS:
			r.fail(n, CodeNotApplicable, d.path+".sample", "sample applies to robust fits; least squares uses every row").Hint =
				"drop sample, or write fit: theil-sen or fit: huber"
			ok = false
		case v < minSample:
			r.fail(n, CodeBadValue, d.path+".sample", "a sample of %d pairs is too small", v).Hint =
				fmt.Sprintf("sample at least %d pairs", minSample)
			ok = false
		default:
			s.Sample = v
		}
	}
	if n := d.keys.get("seed"); n != nil && (d.relation == RelationLinear || d.relation == RelationMonotonic) {
		v, good := r.count(d.path+".seed", n)
		ok = ok && good
		s.Seed = uint64(v)
	}
	return s, ok
}

// word reads one of words.
func (r *resolver) word(path string, n *yaml.Node, what string, words []string) (string, bool) {
	s, ok := r.text(path, n)
	if !ok {
		return "", false
	}
	if !slices.Contains(words, s) {
		r.unknownWord(n, path, what, s, words)
		return "", false
	}
	return s, true
}

// measureDomain is where a pair measure's values lie, for checking bounds.
var measureDomain = map[PairMeasure][2]float64{
	PairCorrelation: {-1, 1},
	PairR2:          {0, 1},
	PairPValue:      {0, 1},
	PairCramersV:    {0, 1},
}

// pairRule resolves one rule of a pair entry: the bounds of a measured
// value, the residual rule and its tolerance, or the tolerance of an
// ordered or determines rule.
func (r *resolver) pairRule(p *pending, s *PairSpec) bool {
	id := p.rule.ID
	s.keepOwn()
	switch s.Measure {
	case PairOrdered, PairDetermines:
		// The tolerances stage has read the tolerance, and reported it
		// when it could not.
		return p.tol == nil || p.tolSet
	case PairResiduals:
		return r.residuals(p, s)
	}
	t, ok := r.bounds(id, p.val, r.number)
	if !ok {
		return false
	}
	if dom, bounded := measureDomain[s.Measure]; bounded {
		for _, l := range []*Limit{t.Warn, t.Fail} {
			if l == nil {
				continue
			}
			for _, v := range []float64{l.Lo, l.Hi} {
				if !math.IsInf(v, 0) && (v < dom[0] || v > dom[1]) {
					r.fail(p.val, CodeBadValue, id, "%s bound %s is outside [%s, %s]", s.Measure, formatNumber(v),
						formatNumber(dom[0]), formatNumber(dom[1]))
					return false
				}
			}
		}
	}
	p.rule.Tolerance, p.tolSet = t, true
	return true
}

// residuals reads a residuals rule: a rule name alone, or a mapping of
// rule, cutoff and tolerance. The rule must suit the fit: studentized and
// cooks measure rows against the least-squares line, standardized against
// a robust one.
func (r *resolver) residuals(p *pending, s *PairSpec) bool {
	id := p.rule.ID
	s.Residual = ResidualStudentized
	if s.Fit != FitOLS {
		s.Residual = ResidualStandardized
	}
	rules := []string{string(ResidualStudentized), string(ResidualCooks), string(ResidualStandardized)}
	var ruleNode *yaml.Node
	switch n := p.val; {
	case n.Kind == yaml.ScalarNode:
		ruleNode = n
	case n.Kind == yaml.MappingNode:
		fs := r.fields(id, n, []string{"rule", "cutoff", "tolerance"}, nil)
		ruleNode = fs.get("rule")
		if c := fs.get("cutoff"); c != nil {
			v, ok := r.number(id+".cutoff", c)
			if !ok {
				return false
			}
			if !(v > 0) {
				r.fail(c, CodeBadValue, id+".cutoff", "cutoff %s is not above 0", c.Value).Hint =
					"leave it out for the default: the Bonferroni critical value, or for cooks the median of F(2, n-2)"
				return false
			}
			s.Cutoff = v
		}
		if t := fs.get("tolerance"); t != nil {
			tol, ok := r.shareTolerance(id+".tolerance", t)
			if !ok {
				return false
			}
			p.rule.Tolerance, p.tolSet = tol, true
		}
	default:
		r.wrongKind(n, id, "a residual rule or a mapping of rule, cutoff and tolerance")
		return false
	}
	if ruleNode != nil {
		v, ok := r.word(id+".rule", ruleNode, "residual rule", rules)
		if !ok {
			return false
		}
		s.Residual = ResidualRule(v)
		switch {
		case s.Fit == FitOLS && s.Residual == ResidualStandardized:
			r.fail(ruleNode, CodeNotApplicable, id+".rule", "standardized residuals are measured from a robust line").Hint =
				"write fit: theil-sen or fit: huber, or rule: studentized"
			return false
		case s.Fit != FitOLS && s.Residual != ResidualStandardized:
			r.fail(ruleNode, CodeNotApplicable, id+".rule", "%s residuals are measured from the least-squares line, and the rule fits %s", s.Residual, s.Fit).Hint =
				"with a robust fit write rule: standardized (the residual over the robust scale)"
			return false
		}
	}
	return true
}

// keepOwn clears the settings an entry shares that its measure does not
// use: the coefficient belongs to correlation and p-value rules of linear
// and monotonic pairs, the fit to slope, intercept and residuals rules.
func (s *PairSpec) keepOwn() {
	switch s.Measure {
	case PairCorrelation, PairPValue:
		s.Fit = ""
	case PairSlope, PairIntercept, PairResiduals:
		s.Coefficient = ""
	default:
		s.Fit, s.Coefficient = "", ""
	}
	if s.Relation == RelationAssociation {
		s.Coefficient = ""
	}
}

// pairMeasure names what a pair rule measures.
func pairMeasure(s PairSpec) Measure {
	switch s.Measure {
	case PairCorrelation:
		return Measure{Name: coefficientNames[s.Coefficient], Unit: UnitValue}
	case PairR2:
		return Measure{Name: "R²", Unit: UnitValue}
	case PairCramersV:
		return Measure{Name: "Cramér's V", Unit: UnitValue}
	case PairResiduals:
		return Measure{Name: "flagged row share"}
	case PairOrdered:
		return Measure{Name: "out-of-order share"}
	case PairDetermines:
		return Measure{Name: "violating row share"}
	}
	return Measure{Name: string(s.Measure), Unit: UnitValue}
}

var coefficientNames = map[Coefficient]string{CoefPearson: "Pearson's r", CoefSpearman: "Spearman's rho", CoefKendall: "Kendall's tau-b"}

// explainPair writes what a pair rule asks, briefly: "linear · theil-sen
// line · standardized residuals above the default cutoff".
func explainPair(s PairSpec) string {
	parts := []string{string(s.Relation)}
	switch s.Measure {
	case PairCorrelation, PairPValue:
		parts = append(parts, string(s.Coefficient))
	case PairSlope, PairIntercept:
		parts = append(parts, string(s.Fit)+" line")
	case PairResiduals:
		cut := "default cutoff"
		if s.Cutoff > 0 {
			cut = formatNumber(s.Cutoff)
		}
		parts = append(parts, string(s.Fit)+" line", string(s.Residual)+" residuals above "+cut)
	case PairOrdered:
		op := "<="
		if s.Strict {
			op = "<"
		}
		parts[0] = "first " + op + " second"
	case PairDetermines:
		parts[0] = "first determines second"
	}
	if (s.Fit != "" && s.Fit != FitOLS) || s.Relation == RelationMonotonic {
		if s.Sample != DefaultPairSample {
			parts = append(parts, "sample "+strconv.Itoa(s.Sample))
		}
	}
	if s.Seed != DefaultSeed && (s.Relation == RelationLinear || s.Relation == RelationMonotonic) {
		parts = append(parts, "seed "+strconv.FormatUint(s.Seed, 10))
	}
	return strings.Join(parts, " · ")
}
