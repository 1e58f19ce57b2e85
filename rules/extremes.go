package rules

import (
	"fmt"
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/outlier"
)

// This file resolves the extremes rule of a column: which method finds
// extreme values, its cutoff or level, and its tolerance. The default
// cutoffs are those of package checks/outlier.

// extremesKeys are the keys of a column's extremes mapping.
var extremesKeys = []string{"rule", "k", "alpha", "max_outliers", "tolerance"}

// ExtremesMethodNames lists the methods an extremes rule may name.
func ExtremesMethodNames() []string {
	return []string{string(ExtremesTukey), string(ExtremesZScore), string(ExtremesRobustZ), string(ExtremesESD),
		string(ExtremesGrubbs), string(ExtremesTail)}
}

// Defaults of an extremes rule.
const (
	// DefaultExtremesAlpha is the level of the esd, grubbs and tail tests:
	// the conventional 0.05 (common practice), that of the NIST/SEMATECH
	// e-Handbook's examples.
	DefaultExtremesAlpha = 0.05
	// DefaultMaxOutliers is how many outliers the ESD test looks for when
	// the policy does not say: 10, as in the e-Handbook's worked example
	// (section 1.3.5.17.3); own choice beyond that.
	DefaultMaxOutliers = 10
)

// Default tolerances of an extremes or joint rule, on the share of values
// (rows) flagged.
//
// The cutoff methods (tukey, zscore, robust-z, and joint rules) flag some
// values of clean data: of normal data, 0.70% lie beyond Tukey's fences
// at k = 1.5, 0.27% beyond |z| = 3, 0.047% beyond a modified z-score of
// 3.5, and 0.1% of multivariate normal rows beyond the chi-square 0.999
// quantile. Their default warns above 1% and fails above 5%, so that clean
// data of a few hundred rows or more stay quiet and a share several times
// the normal one is noticed (own choice, not a published standard).
//
// The tests (esd, grubbs, tail) already allow for the number of values:
// on clean normal data they flag anything at all with probability about
// alpha. Their default fails on any value flagged, {fail: 0}.
var (
	defaultCutoffTolerance = Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.01), Fail: AtMost(0.05)}
	defaultTestTolerance   = Tolerance{Direction: HigherIsWorse, Fail: AtMost(0)}
)

// extremesHints explain names of other methods that an extremes rule
// spells differently.
var extremesHints = map[string]string{
	"iqr":        `Tukey's fences are rule: tukey`,
	"boxplot":    `Tukey's fences are rule: tukey`,
	"z":          `did you mean "zscore"?`,
	"mad":        `the median and MAD rule is robust-z`,
	"modified-z": `the modified z-score is robust-z`,
	"hampel":     `the median and MAD rule is robust-z`,
	"gesd":       `the generalized ESD test is esd`,
	"rosner":     `the generalized ESD test is esd`,
}

// extDraft is an extremes rule while it resolves.
type extDraft struct {
	keys   fields
	method ExtremesMethod
	node   *yaml.Node // where the method is written, or the rule's value
}

// decodeExtremes reads the shape of a column's extremes: a mapping of known
// keys, or a method name alone.
func (r *resolver) decodeExtremes(p *pending, n *yaml.Node) {
	d := &extDraft{node: n}
	p.ext = d
	switch n.Kind {
	case yaml.ScalarNode:
		return
	case yaml.MappingNode:
	default:
		r.wrongKind(n, p.rule.ID, "a method such as tukey, or a mapping with rule and its settings")
		p.ext = nil
		return
	}
	d.keys = r.fields(p.rule.ID, n, extremesKeys, func(key string) string {
		switch key {
		case "method":
			return `the method goes under "rule"`
		case "cutoff", "threshold":
			return `the cutoff of zscore and robust-z is "k"`
		case "r":
			return `the most outliers ESD looks for is "max_outliers"`
		}
		return ""
	})
	p.tol = d.keys.get("tolerance")
	d.node = d.keys.get("rule")
}

// extNames resolves the method of an extremes rule: the one written, or
// tukey.
func (r *resolver) extNames(p *pending) {
	d := p.ext
	if d == nil {
		return
	}
	d.method = ExtremesTukey
	if d.node == nil {
		return
	}
	path := p.rule.ID
	if d.keys != nil {
		path += ".rule"
	}
	s, ok := r.text(path, d.node)
	switch {
	case !ok:
		d.method = ""
	case slices.Contains(ExtremesMethodNames(), s):
		d.method = ExtremesMethod(s)
	default:
		e := r.fail(d.node, CodeBadValue, path, "unknown extremes rule %q", s)
		if e.Hint = didYouMean(s, ExtremesMethodNames()); e.Hint == "" {
			if e.Hint = extremesHints[strings.ToLower(s)]; e.Hint == "" {
				e.Hint = "one of " + strings.Join(ExtremesMethodNames(), ", ")
			}
		}
		d.method = ""
	}
}

// extremesSpec resolves the settings of an extremes rule on a column of
// type t and makes its Spec; a tail rule's distribution is linked later
// (linkTails).
func (r *resolver) extremesSpec(p *pending, t Type) {
	d := p.ext
	id := p.rule.ID
	if d == nil || d.method == "" {
		return
	}
	ok := true
	if t != TypeAny && t != TypeNumber && t != TypeInteger {
		r.failAt(p.rule.Pos, CodeNotApplicable, id, "extremes applies to number and integer columns, not %s", plural(t))
		ok = false
	}
	m := d.method
	spec := ExtremesSpec{Method: m}
	cutoff := m == ExtremesTukey || m == ExtremesZScore || m == ExtremesRobustZ
	switch m {
	case ExtremesTukey:
		spec.K = outlier.DefaultTukeyK
	case ExtremesZScore:
		spec.K = outlier.DefaultZCutoff
	case ExtremesRobustZ:
		spec.K = outlier.DefaultRobustZCutoff
	default:
		spec.Alpha = DefaultExtremesAlpha
	}
	if m == ExtremesESD {
		spec.MaxOutliers = DefaultMaxOutliers
	}
	// notFor reports a key written for a method it does not apply to.
	notFor := func(n *yaml.Node, key, applies, hint string) {
		r.fail(n, CodeNotApplicable, id+"."+key, "%s applies to %s, not %s", key, applies, m).Hint = hint
		ok = false
	}
	other := "drop it, or choose a method it applies to"
	if n := d.keys.get("k"); n != nil {
		v, good := r.number(id+".k", n)
		switch {
		case !cutoff:
			notFor(n, "k", "tukey, zscore and robust-z", string(m)+" is a test: its level is alpha")
		case !good:
			ok = false
		case !(v > 0):
			r.fail(n, CodeBadValue, id+".k", "k must be above 0, got %s", n.Value).Hint = kHint(m)
			ok = false
		default:
			spec.K = v
		}
	}
	if n := d.keys.get("alpha"); n != nil {
		if cutoff {
			notFor(n, "alpha", "esd, grubbs and tail", string(m)+" takes a cutoff k")
		} else if v, good := r.fraction(id+".alpha", n, "the level of the test, e.g. 0.05"); good {
			spec.Alpha = v
		} else {
			ok = false
		}
	}
	if n := d.keys.get("max_outliers"); n != nil {
		v, good := r.count(id+".max_outliers", n)
		switch {
		case m != ExtremesESD:
			notFor(n, "max_outliers", "esd", other)
		case !good:
			ok = false
		case v < 1:
			r.fail(n, CodeBadValue, id+".max_outliers", "max_outliers must be at least 1").Hint = "the most outliers the test looks for, e.g. 10"
			ok = false
		default:
			spec.MaxOutliers = v
		}
	}
	if m == ExtremesTail && !r.tailApplies(p) {
		ok = false
	}
	if ok {
		p.rule.Spec = spec
	}
}

// fraction reads a number strictly between 0 and 1 written at n, named by
// the last part of path; hint says what it is.
func (r *resolver) fraction(path string, n *yaml.Node, hint string) (float64, bool) {
	v, ok := r.number(path, n)
	if ok && !(v > 0 && v < 1) {
		r.fail(n, CodeBadValue, path, "%s must lie strictly between 0 and 1, got %s", path[strings.LastIndex(path, ".")+1:], n.Value).Hint = hint
		return 0, false
	}
	return v, ok
}

// kHint says what k means for method m.
func kHint(m ExtremesMethod) string {
	switch m {
	case ExtremesTukey:
		return "fences lie k IQRs beyond the quartiles; Tukey's are 1.5 and 3"
	case ExtremesZScore:
		return "the |z| beyond which a value is extreme, e.g. 3"
	}
	return "the modified z-score beyond which a value is extreme, e.g. 3.5"
}

// columnDist returns the distribution rule of column c, or nil.
func (r *resolver) columnDist(c *colDraft) *pending {
	for _, q := range r.rules {
		if q.col == c && q.rule.Kind == KindDistribution {
			return q
		}
	}
	return nil
}

// tailApplies reports whether the tail method of p has a distribution to
// fit: the column's distribution rule, of a continuous or count family.
func (r *resolver) tailApplies(p *pending) bool {
	at := p.ext.node
	if at == nil {
		return true // tail is never the default method
	}
	q := r.columnDist(p.col)
	if q == nil {
		r.fail(at, CodeMissing, p.rule.ID, "tail needs the column's distribution, and %s declares none", p.col.path).Hint =
			"declare distribution: <family> under the column, or choose another rule"
		return false
	}
	if q.dist == nil || len(q.dist.families) == 0 {
		return true // the distribution's own problems are reported there
	}
	f := q.dist.families[0]
	if f.Kind() == dist.Categorical || f.Digits() > 0 {
		r.fail(at, CodeNotApplicable, p.rule.ID, "tail needs a family of values, not %s", f.Name()).Hint =
			"tail applies to continuous and count families"
		return false
	}
	return true
}

// linkTails gives each tail rule the resolved distribution rule of its
// column. It runs once every rule's values are resolved.
func (r *resolver) linkTails() {
	for _, p := range r.rules {
		s, ok := p.rule.Spec.(ExtremesSpec)
		if !ok || s.Method != ExtremesTail {
			continue
		}
		q := r.columnDist(p.col)
		ds, ok := q.rule.Spec.(DistributionSpec)
		if !ok {
			p.rule.Spec = nil // the distribution's problems are reported there
			continue
		}
		s.Distribution = ds
		p.rule.Spec = s
	}
}

// defaultExtremesTolerance is the tolerance of an extremes rule of method
// m written without one; "" stands for a joint rule, which cuts at a
// quantile.
func defaultExtremesTolerance(m ExtremesMethod) Tolerance {
	t := defaultTestTolerance
	switch m {
	case ExtremesTukey, ExtremesZScore, ExtremesRobustZ, "":
		t = defaultCutoffTolerance
	}
	return Tolerance{Direction: t.Direction, Warn: copyLimit(t.Warn), Fail: copyLimit(t.Fail)}
}

// explainExtremes writes what an extremes rule asks, briefly:
// "tukey k=1.5", "esd alpha=0.05 max_outliers=10", "tail alpha=0.05 on
// lognormal".
func explainExtremes(s ExtremesSpec) string {
	switch s.Method {
	case ExtremesTukey, ExtremesZScore, ExtremesRobustZ:
		return fmt.Sprintf("%s k=%s", s.Method, formatNumber(s.K))
	case ExtremesESD:
		return fmt.Sprintf("esd alpha=%s max_outliers=%d", formatNumber(s.Alpha), s.MaxOutliers)
	case ExtremesTail:
		on := strings.SplitN(explainDistribution(s.Distribution), " · ", 2)[0]
		return "tail alpha=" + formatNumber(s.Alpha) + " on " + on
	}
	return string(s.Method) + " alpha=" + formatNumber(s.Alpha)
}
