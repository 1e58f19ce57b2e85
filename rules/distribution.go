package rules

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/assay-project/assay/checks/dist"
)

// This file resolves the distribution rule of a column. The families and
// their parameters are those of package checks/dist, which rules reads as
// its vocabulary (names, kinds, parameter names and domains) and never
// asks to fit anything.

// distributionKeys are the keys of a column's distribution mapping.
var distributionKeys = []string{"family", "parameters", "shares", "test", "measure", "tolerance", "resolution",
	"sample", "seed"}

// DistTestNames lists the tests a distribution rule may name.
func DistTestNames() []string {
	return []string{string(TestKS), string(TestAD), string(TestCvM), string(TestSW), string(TestChiSquare)}
}

// DistMeasureNames lists the measures a distribution rule may name.
func DistMeasureNames() []string { return []string{string(MeasureDistance), string(MeasurePValue)} }

// Defaults of a distribution rule.
const (
	// DefaultSample is how many values a distribution rule keeps before it
	// samples: 8 MB of float64, and at most a few seconds to sort, fit and
	// test (own choice).
	DefaultSample = 1_000_000
	// DefaultSeed seeds the sample and the bootstrap.
	DefaultSeed = 1
	// minSample is the smallest sample a policy may ask for: below about a
	// hundred values a fit says little about a family (own choice).
	minSample = 100
)

// Default tolerances of a distribution rule, on its measure.
//
// Distances (KS and TV) warn above 0.05 and fail above 0.10: a twentieth,
// a tenth of the probability mass out of place. These are our own choice,
// not a published standard. A perfect fit shows a KS distance of about
// 0.87/sqrt(n) on average (the mean of the Kolmogorov distribution,
// sqrt(pi/2) ln 2, over sqrt(n)), so from about a thousand values the
// defaults do not fire on data that follow the family; below that, judge
// the p-value.
//
// p-values warn below 0.05 and fail below 0.01: the conventional levels
// (common practice).
var (
	defaultDistanceTolerance = Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.05), Fail: AtMost(0.10)}
	defaultPValueTolerance   = Tolerance{Direction: LowerIsWorse, Warn: AtLeast(0.05), Fail: AtLeast(0.01)}
)

// distDraft is a distribution rule while it resolves.
type distDraft struct {
	keys     fields
	families []dist.Family // resolved candidates, in the order written
	famNode  *yaml.Node
	test     DistTest
	measure  DistMeasure
	short    bool // written as distribution: <family> or [<families>]
}

// decodeDistribution reads the shape of a column's distribution: a mapping
// of known keys, or a family name or list of them alone.
func (r *resolver) decodeDistribution(p *pending, n *yaml.Node) {
	d := &distDraft{}
	p.dist = d
	if n.Kind == yaml.ScalarNode || n.Kind == yaml.SequenceNode {
		d.famNode, d.short = n, true
		return
	}
	if !r.mapping(p.rule.ID, n) {
		return
	}
	d.keys = r.fields(p.rule.ID, n, distributionKeys, func(key string) string {
		switch key {
		case "trials", "n":
			return "binomial trials go under parameters: {n: ...}"
		case "fit", "params":
			return `give parameters under "parameters"; leave them out to estimate them`
		}
		return ""
	})
	d.famNode = d.keys.get("family")
	p.tol = d.keys.get("tolerance")
	if d.famNode == nil {
		r.fail(n, CodeMissing, p.rule.ID, `missing key "family"`).Hint = "e.g. family: normal, or a list of candidates [lognormal, gamma]"
	}
}

// distNames resolves the families, the test and the measure of a
// distribution rule.
func (r *resolver) distNames(p *pending) {
	d := p.dist
	id := p.rule.ID
	if d == nil || d.famNode == nil {
		return
	}
	d.families = r.families(id+".family", d.famNode)
	d.measure = MeasureDistance
	if n := d.keys.get("measure"); n != nil {
		if s, ok := r.text(id+".measure", n); ok {
			if !slices.Contains(DistMeasureNames(), s) {
				r.unknownWord(n, id+".measure", "measure", s, DistMeasureNames())
				d.measure = ""
			} else {
				d.measure = DistMeasure(s)
			}
		} else {
			d.measure = ""
		}
	}
	if n := d.keys.get("test"); n != nil {
		s, ok := r.text(id+".test", n)
		switch {
		case !ok:
		case !slices.Contains(DistTestNames(), s):
			r.unknownWord(n, id+".test", "test", s, DistTestNames())
		default:
			d.test = DistTest(s)
			r.checkTest(p, n)
		}
	} else if len(d.families) > 0 {
		d.test = TestKS
		if d.families[0].Kind() != dist.Continuous {
			d.test = TestChiSquare
		}
	}
}

// unknownWord reports a word that is not one of words.
func (r *resolver) unknownWord(n *yaml.Node, path, what, s string, words []string) {
	e := r.fail(n, CodeBadValue, path, "unknown %s %q", what, s)
	if e.Hint = didYouMean(s, words); e.Hint == "" {
		e.Hint = "one of " + strings.Join(words, ", ")
	}
}

// families reads one family name or a list of candidates: known, distinct,
// and comparable (all continuous, or all discrete counts, or one Benford
// family, or categorical alone).
func (r *resolver) families(path string, n *yaml.Node) []dist.Family {
	items := []*yaml.Node{n}
	if n.Kind == yaml.SequenceNode {
		items, _ = r.list(path, n)
		if len(items) == 0 {
			r.fail(n, CodeBadValue, path, "the list of candidate families is empty")
			return nil
		}
	}
	var out []dist.Family
	var nodes []*yaml.Node
	ok := true
	for _, it := range items {
		name, good := r.text(path, it)
		if !good {
			ok = false
			continue
		}
		f, err := dist.Lookup(name)
		if err != nil {
			e := r.fail(it, CodeUnknownFamily, path, "unknown family %q", name)
			if e.Hint = didYouMean(name, dist.Names()); e.Hint == "" {
				e.Hint = "one of " + strings.Join(dist.Names(), ", ")
			}
			ok = false
			continue
		}
		if slices.ContainsFunc(out, func(g dist.Family) bool { return g.Name() == name }) {
			r.fail(it, CodeDuplicate, path, "family %s listed twice", name)
			ok = false
			continue
		}
		out = append(out, f)
		nodes = append(nodes, it)
	}
	if !ok {
		return nil
	}
	for i, f := range out[1:] {
		first := out[0]
		switch {
		case f.Kind() == dist.Categorical || first.Kind() == dist.Categorical:
			r.fail(nodes[i+1], CodeBadValue, path, "categorical cannot be ranked against other families").Hint =
				"a categorical rule names one family and its shares"
			return nil
		case f.Kind() != first.Kind() || f.Digits() != first.Digits():
			r.fail(nodes[i+1], CodeBadValue, path, "%s cannot be ranked against %s: %s takes %s, %s takes %s",
				f.Name(), first.Name(), first.Name(), first.Support(), f.Name(), f.Support()).Hint =
				"candidates are ranked by the likelihood of the same values: list continuous families together, or count families together"
			return nil
		}
	}
	return out
}

// checkTest reports a test that does not apply to the rule's families.
func (r *resolver) checkTest(p *pending, n *yaml.Node) {
	d := p.dist
	id := p.rule.ID + ".test"
	for _, f := range d.families {
		var why, hint string
		switch {
		case f.Kind() != dist.Continuous && d.test != TestChiSquare:
			why = fmt.Sprintf("%s does not apply to %s, whose values are %s", d.test, f.Name(), f.Support())
			hint = "test it with chi-square"
		case d.test == TestSW && f.Name() != "normal":
			why = fmt.Sprintf("shapiro-wilk tests normality; it does not apply to %s", f.Name())
			hint = "use ks, anderson-darling, cramer-von-mises or chi-square"
		}
		if why != "" {
			r.fail(n, CodeNotApplicable, id, "%s", why).Hint = hint
			d.test = ""
			return
		}
	}
}

// distTolerance reads the tolerance written on a distribution rule: on a
// distance, thresholds it must stay at or below (warn at most fail); on a
// p-value, thresholds it must stay at or above (warn at least fail). Both
// lie in [0, 1] and may be written as fractions or percents.
func (r *resolver) distTolerance(p *pending) (Tolerance, bool) {
	d := p.dist
	if d == nil || p.tol == nil || d.measure == "" {
		return Tolerance{}, false
	}
	dir := HigherIsWorse
	if d.measure == MeasurePValue {
		dir = LowerIsWorse
	}
	return r.unitTolerance(p.rule.ID+".tolerance", p.tol, dir)
}

// distributionSpec resolves the parameters, shares, resolution, sample and
// seed of a distribution rule on a column of type t, and makes its Spec.
func (r *resolver) distributionSpec(p *pending, t Type) {
	d := p.dist
	id := p.rule.ID
	if d == nil || len(d.families) == 0 {
		return
	}
	ok := true
	first := d.families[0]
	numeric := first.Kind() != dist.Categorical
	if t != TypeAny && ((numeric && t != TypeInteger && t != TypeNumber) || (!numeric && !slices.Contains([]Type{TypeString, TypeInteger, TypeBoolean}, t))) {
		want := "number and integer columns"
		if !numeric {
			want = "string, integer and boolean columns"
		}
		r.failAt(p.rule.Pos, CodeNotApplicable, id, "%s applies to %s, not %s", first.Name(), want, plural(t))
		ok = false
	}
	spec := DistributionSpec{Test: d.test, Measure: d.measure, Sample: DefaultSample, Seed: DefaultSeed}
	for _, f := range d.families {
		spec.Families = append(spec.Families, f.Name())
	}
	given, good := r.distParameters(p)
	ok = ok && good
	spec.Parameters = given
	if n := d.keys.get("shares"); n != nil {
		if first.Kind() != dist.Categorical {
			r.fail(n, CodeNotApplicable, id+".shares", "shares belong to the categorical family, not %s", first.Name()).Hint =
				"write family: categorical"
			ok = false
		} else {
			spec.Categories, spec.Weights, good = r.distShares(id+".shares", n)
			ok = ok && good
		}
	} else if first.Kind() == dist.Categorical {
		r.fail(d.famNode, CodeMissing, id, "categorical needs its expected shares").Hint = "add shares: {A: 0.5, B: 0.3, C: 0.2}"
		ok = false
	}
	if spec.Test == TestSW && len(spec.Parameters) > 0 {
		r.fail(d.keys.get("test"), CodeNotApplicable, id+".test", "shapiro-wilk estimates the mean and sd itself; it cannot test given parameters").Hint =
			"drop parameters, or test with ks, anderson-darling or cramer-von-mises"
		ok = false
	}
	spec.AutoResolution, spec.Resolution, good = r.distResolution(p)
	ok = ok && good
	if n := d.keys.get("sample"); n != nil {
		// A whole number, also when written as a float such as 1e6.
		v, good := r.number(id+".sample", n)
		switch {
		case !good:
			ok = false
		case v != math.Trunc(v) || v > math.MaxInt32:
			r.fail(n, CodeBadValue, id+".sample", "%s is not a whole number of values", n.Value).Hint = "e.g. 1000000 or 1e6"
			ok = false
		case v < minSample:
			r.fail(n, CodeBadValue, id+".sample", "a sample of %s values is too small to judge a family", n.Value).Hint =
				fmt.Sprintf("sample at least %d values", minSample)
			ok = false
		default:
			spec.Sample = int(v)
		}
	}
	if n := d.keys.get("seed"); n != nil {
		v, good := r.count(id+".seed", n)
		ok = ok && good
		spec.Seed = uint64(v)
	}
	if ok && spec.Test != "" && spec.Measure != "" {
		p.rule.Spec = spec
	}
}

// distParameters reads the given parameters: only for a single family,
// names of its own, each in its domain, and together as the family allows
// (all of them, or only those that may be given alone). A parameter the
// family requires must be given.
func (r *resolver) distParameters(p *pending) (map[string]float64, bool) {
	d := p.dist
	id := p.rule.ID + ".parameters"
	n := d.keys.get("parameters")
	f := d.families[0]
	if n == nil {
		for _, q := range f.Params() {
			if q.Required {
				r.fail(d.famNode, CodeMissing, p.rule.ID, "%s needs its parameter %s (%s)", f.Name(), q.Name, q.About).Hint =
					fmt.Sprintf("add parameters: {%s: ...}", q.Name)
				return nil, false
			}
		}
		return nil, true
	}
	switch {
	case len(d.families) > 1:
		r.fail(n, CodeBadValue, id, "parameters apply to one family, and the rule ranks %d", len(d.families)).Hint =
			"candidates are each fitted by maximum likelihood; give parameters to a rule with one family"
		return nil, false
	case f.Kind() == dist.Categorical:
		r.fail(n, CodeNotApplicable, id, "categorical takes shares, not parameters").Hint = "write shares: {A: 0.5, B: 0.5}"
		return nil, false
	case len(f.Params()) == 0:
		r.fail(n, CodeNotApplicable, id, "%s has no parameters", f.Name())
		return nil, false
	case !r.mapping(id, n):
		return nil, false
	}
	params := f.Params()
	var names []string
	for _, q := range params {
		names = append(names, q.Name)
	}
	given := map[string]float64{}
	ok := true
	for _, e := range r.entries(id, n, "parameter") {
		i := slices.IndexFunc(params, func(q dist.Param) bool { return q.Name == e.key })
		if i < 0 {
			er := r.fail(e.k, CodeUnknownKey, id, "%s has no parameter %q", f.Name(), e.key)
			if er.Hint = didYouMean(e.key, names); er.Hint == "" {
				er.Hint = "its parameters are " + strings.Join(names, ", ")
			}
			ok = false
			continue
		}
		v, good := r.number(id+"."+e.key, e.v)
		if !good {
			ok = false
			continue
		}
		if q := params[i]; !inDomain(q, v) {
			r.fail(e.v, CodeBadValue, id+"."+e.key, "%s must be %s, got %s", e.key, q.Domain(), formatNumber(v))
			ok = false
			continue
		}
		given[e.key] = v
	}
	if !ok {
		return nil, false
	}
	if _, err := f.Fix(given); err != nil {
		r.fail(n, CodeBadValue, id, "%s", strings.TrimPrefix(err.Error(), f.Name()+": "))
		return nil, false
	}
	for _, q := range params {
		if _, has := given[q.Name]; q.Required && !has {
			r.fail(n, CodeMissing, id, "%s needs its parameter %s (%s)", f.Name(), q.Name, q.About)
			return nil, false
		}
	}
	return given, true
}

// inDomain reports whether v is a value parameter q accepts.
func inDomain(q dist.Param, v float64) bool {
	switch {
	case v < q.Min || v > q.Max, q.MinOpen && v == q.Min, q.MaxOpen && v == q.Max:
		return false
	}
	return !q.Whole || v == math.Trunc(v)
}

// distShares reads the categories and their expected shares: weights of 0
// or more, as fractions, percents or ratios (9, 3, 3, 1), not all 0.
func (r *resolver) distShares(path string, n *yaml.Node) ([]string, []float64, bool) {
	if !r.mapping(path, n) {
		return nil, nil, false
	}
	var labels []string
	var weights []float64
	ok := true
	var sum float64
	for _, e := range r.entries(path, n, "category") {
		var (
			w    float64
			good bool
		)
		switch {
		case e.v.Kind == yaml.ScalarNode && e.v.ShortTag() == "!!str":
			w, good = r.share(path+"."+e.key, e.v)
		default:
			w, good = r.number(path+"."+e.key, e.v)
			if good && w < 0 {
				r.fail(e.v, CodeBadValue, path+"."+e.key, "share %s is below 0", e.v.Value)
				good = false
			}
		}
		if !good {
			ok = false
			continue
		}
		labels = append(labels, e.key)
		weights = append(weights, w)
		sum += w
	}
	switch {
	case !ok:
		return nil, nil, false
	case len(labels) == 0:
		r.fail(n, CodeBadValue, path, "no categories").Hint = "list each category with its expected share"
		return nil, nil, false
	case !(sum > 0):
		r.fail(n, CodeBadValue, path, "the shares are all 0")
		return nil, nil, false
	}
	return labels, weights, true
}

// distResolution reads the resolution: auto, none or a step above 0; it
// applies to continuous families tested by ks or chi-square. Unwritten, it
// is auto where it applies and none elsewhere.
func (r *resolver) distResolution(p *pending) (auto bool, step float64, ok bool) {
	d := p.dist
	id := p.rule.ID + ".resolution"
	applies := d.families[0].Kind() == dist.Continuous && (d.test == TestKS || d.test == TestChiSquare)
	n := d.keys.get("resolution")
	if n == nil {
		return applies, 0, true
	}
	switch {
	case n.Kind == yaml.ScalarNode && n.ShortTag() == "!!str" && n.Value == "none":
		return false, 0, true
	case n.Kind == yaml.ScalarNode && n.ShortTag() == "!!str" && n.Value == "auto":
		auto = true
	case isNumber(n):
		v, good := r.number(id, n)
		if !good {
			return false, 0, false
		}
		if !(v > 0) {
			r.fail(n, CodeBadValue, id, "resolution %s is not above 0", n.Value).Hint = "the step values are recorded at, e.g. 0.01"
			return false, 0, false
		}
		step = v
	case n.Kind == yaml.ScalarNode && n.ShortTag() == "!!str":
		r.unknownWord(n, id, "resolution", n.Value, []string{"auto", "none"})
		return false, 0, false
	default:
		r.wrongKind(n, id, "auto, none or a step such as 0.01")
		return false, 0, false
	}
	if d.test == "" {
		return auto, step, true // the test is wrong: that is the problem to report
	}
	if !applies {
		e := r.fail(n, CodeNotApplicable, id, "resolution applies to continuous families tested by ks or chi-square")
		if d.families[0].Kind() == dist.Continuous && d.test != "" {
			e.Message = fmt.Sprintf("%s has no form for values recorded at a resolution", d.test)
			e.Hint = "write resolution: none, or test: ks"
		} else {
			e.Hint = "write resolution: none, or leave it out"
		}
		return false, 0, false
	}
	return auto, step, true
}

// distributionMeasure names what a distribution rule measures.
func distributionMeasure(s DistributionSpec) Measure {
	switch {
	case s.Measure == MeasurePValue:
		return Measure{Name: "p-value", Unit: UnitValue}
	case s.Test == TestChiSquare:
		return Measure{Name: "TV distance", Unit: UnitValue}
	}
	return Measure{Name: "KS distance", Unit: UnitValue}
}

// defaultDistTolerance is the tolerance of a distribution rule written
// without one.
func defaultDistTolerance(s DistributionSpec) Tolerance {
	t := defaultDistanceTolerance
	if s.Measure == MeasurePValue {
		t = defaultPValueTolerance
	}
	return Tolerance{Direction: t.Direction, Warn: copyLimit(t.Warn), Fail: copyLimit(t.Fail)}
}

// explainDistribution writes what a distribution rule asks, briefly:
// "lognormal · ks · resolution auto".
func explainDistribution(s DistributionSpec) string {
	var parts []string
	switch {
	case len(s.Families) > 1:
		parts = append(parts, "best of "+strings.Join(s.Families, ", "))
	case len(s.Categories) > 0:
		shares := make([]string, len(s.Categories))
		for i, c := range s.Categories {
			shares[i] = strconv.Quote(c) + ": " + formatNumber(s.Weights[i])
		}
		parts = append(parts, s.Families[0]+" {"+strings.Join(shares, ", ")+"}")
	case len(s.Parameters) > 0:
		var given []string
		f, _ := dist.Lookup(s.Families[0])
		for _, q := range f.Params() {
			if v, ok := s.Parameters[q.Name]; ok {
				given = append(given, q.Name+"="+formatNumber(v))
			}
		}
		parts = append(parts, s.Families[0]+"("+strings.Join(given, ", ")+")")
	default:
		parts = append(parts, s.Families[0])
	}
	parts = append(parts, string(s.Test))
	switch {
	case s.AutoResolution:
		parts = append(parts, "resolution auto")
	case s.Resolution > 0:
		parts = append(parts, "resolution "+formatNumber(s.Resolution))
	}
	if s.Sample != DefaultSample {
		parts = append(parts, "sample "+strconv.Itoa(s.Sample))
	}
	if s.Seed != DefaultSeed {
		parts = append(parts, "seed "+strconv.FormatUint(s.Seed, 10))
	}
	return strings.Join(parts, " · ")
}
