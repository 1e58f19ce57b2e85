package rules

import (
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"
)

// This file resolves the drift rules of a column: how far the column's
// values have moved from a baseline file (written by `assay baseline`) or
// from a reference dataset. One drift mapping may name several measures;
// each becomes its own rule, columns.<col>.drift.<measure>.

// KindDrift is a drift rule.
const KindDrift Kind = "drift"

// DriftMeasure names what a drift rule measures.
type DriftMeasure string

// The measures of a drift rule (package checks/baseline computes them).
const (
	DriftKS            DriftMeasure = "ks"             // two-sample Kolmogorov-Smirnov distance
	DriftPSI           DriftMeasure = "psi"            // population stability index at the baseline's quantile bins
	DriftWasserstein   DriftMeasure = "wasserstein"    // Wasserstein-1, in baseline standard deviations
	DriftJensenShannon DriftMeasure = "jensen-shannon" // Jensen-Shannon divergence of the binned shares, bits
	DriftChiSquare     DriftMeasure = "chi-square"     // p-value of chi-square homogeneity of categories
	DriftNewCategories DriftMeasure = "new-categories" // share of values in categories the baseline lacks
	DriftNullShare     DriftMeasure = "null-share"     // absolute change in the share of nulls
	DriftLocation      DriftMeasure = "location"       // |change of mean| in baseline standard deviations
	DriftScale         DriftMeasure = "scale"          // |ln(std / baseline std)|
)

// DriftMeasureNames lists the measures a drift rule may name.
func DriftMeasureNames() []string {
	return []string{string(DriftKS), string(DriftPSI), string(DriftWasserstein), string(DriftJensenShannon),
		string(DriftChiSquare), string(DriftNewCategories), string(DriftNullShare), string(DriftLocation), string(DriftScale)}
}

// DriftSpec: a column's values have not moved from a baseline or a
// reference dataset by more than the tolerance on Measure. Exactly one of
// Baseline and Reference is set, as written (relative to the policy
// file's folder unless absolute).
type DriftSpec struct {
	Baseline  string
	Reference string
	Measure   DriftMeasure
}

func (DriftSpec) Kind() Kind { return KindDrift }

// Default tolerances of drift rules. PSI warns above 0.1 and fails above
// 0.25: the usual reading in credit scoring (common practice). The chi-
// square p-value warns below 0.05 and fails below 0.01 (common practice).
// New categories fail on any. The others are our own choice: a KS
// distance of 0.1 / 0.15 (two samples of 1000 values from one
// distribution stay below 0.073, the 99% point 1.63/sqrt(500) of
// Kolmogorov's limit law — the constant 1.63 from memory); a Jensen-
// Shannon divergence of 0.05 / 0.1; a location
// shift or a Wasserstein distance of 0.1 / 0.25 baseline standard
// deviations; a scale change |ln ratio| of 0.1 / 0.25 (about 10% and
// 28%); a null share changed by 1 / 5 percentage points.
func defaultDriftTolerance(m DriftMeasure) Tolerance {
	switch m {
	case DriftPSI, DriftWasserstein, DriftLocation, DriftScale:
		return Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.1), Fail: AtMost(0.25)}
	case DriftChiSquare:
		return Tolerance{Direction: LowerIsWorse, Warn: AtLeast(0.05), Fail: AtLeast(0.01)}
	case DriftNewCategories:
		return Tolerance{Direction: HigherIsWorse, Fail: AtMost(0)}
	case DriftNullShare:
		return Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.01), Fail: AtMost(0.05)}
	case DriftKS:
		return Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.1), Fail: AtMost(0.15)}
	}
	return Tolerance{Direction: HigherIsWorse, Warn: AtMost(0.05), Fail: AtMost(0.1)}
}

// driftMeasure names what a drift rule measures.
func driftMeasure(s DriftSpec) Measure {
	names := map[DriftMeasure]Measure{
		DriftKS: {Name: "ks distance"}, DriftPSI: {Name: "psi", Unit: UnitValue},
		DriftWasserstein: {Name: "wasserstein distance (sd)", Unit: UnitValue}, DriftJensenShannon: {Name: "jensen-shannon divergence", Unit: UnitValue},
		DriftChiSquare: {Name: "p-value", Unit: UnitValue}, DriftNewCategories: {Name: "new category share"},
		DriftNullShare: {Name: "null share change"}, DriftLocation: {Name: "mean shift (sd)", Unit: UnitValue},
		DriftScale: {Name: "log std ratio", Unit: UnitValue},
	}
	return names[s.Measure]
}

// driftKeys are the keys of a column's drift mapping.
var driftKeys = []string{"baseline", "reference", "measure", "measures", "tolerance"}

// decodeDrift reads a column's drift mapping and makes one rule per
// measure: `measure: m` with an optional `tolerance`, or `measures:` as a
// list of names (default tolerances) or a mapping of names to
// tolerances (null for the default).
func (r *resolver) decodeDrift(c *colDraft, f field) {
	id := c.path + ".drift"
	if !r.mapping(id, f.v) {
		return
	}
	fs := r.fields(id, f.v, driftKeys, func(key string) string {
		if slices.Contains(DriftMeasureNames(), key) {
			return "name measures under measure or measures"
		}
		return ""
	})
	var spec DriftSpec
	base, ref := fs.get("baseline"), fs.get("reference")
	switch {
	case base != nil && ref != nil:
		r.fail(ref, CodeBadValue, id+".reference", "a drift rule compares with a baseline or a reference, not both").Hint =
			"keep one of baseline and reference"
		return
	case base != nil:
		s, ok := r.text(id+".baseline", base)
		if !ok {
			return
		}
		spec.Baseline = s
	case ref != nil:
		s, ok := r.text(id+".reference", ref)
		if !ok {
			return
		}
		spec.Reference = s
	default:
		r.fail(f.v, CodeMissing, id, `missing key "baseline" or "reference"`).Hint =
			"baseline: a file written by assay baseline; reference: a dataset read in full"
		return
	}
	one, many, tol := fs.get("measure"), fs.get("measures"), fs.get("tolerance")
	type named struct {
		name, tol *yaml.Node
	}
	var list []named
	switch {
	case one != nil && many != nil:
		r.fail(many, CodeBadValue, id+".measures", "write measure or measures, not both")
		return
	case one != nil:
		list = []named{{one, tol}}
	case many == nil:
		r.fail(f.v, CodeMissing, id, `missing key "measure"`).Hint = "one of " + strings.Join(DriftMeasureNames(), ", ")
		return
	case tol != nil:
		r.fail(tol, CodeBadValue, id+".tolerance", "with several measures give each its tolerance").Hint =
			"measures: {psi: {warn: 0.1, fail: 0.25}, ks: 0.1}"
		return
	case many.Kind == yaml.MappingNode:
		for _, e := range r.entries(id+".measures", many, "measure") {
			t := e.v
			if isNull(t) {
				t = nil
			}
			list = append(list, named{e.k, t})
		}
	default:
		items, ok := r.list(id+".measures", many)
		if !ok {
			return
		}
		for _, it := range items {
			list = append(list, named{it, nil})
		}
	}
	for _, m := range list {
		s, ok := r.text(id+".measure", m.name)
		if !ok {
			continue
		}
		if !slices.Contains(DriftMeasureNames(), s) {
			r.unknownWord(m.name, id+".measure", "drift measure", s, DriftMeasureNames())
			continue
		}
		sp := spec
		sp.Measure = DriftMeasure(s)
		p := r.columnRule(c, f, KindDrift, m.name, m.tol)
		p.rule.ID = id + "." + s
		p.rule.Pos = r.pos(m.name)
		p.rule.Spec = sp
	}
}

// driftTolerance reads the tolerance written on a drift rule: thresholds
// in [0, 1] (fractions or percents) the measure must stay at or below, or
// for chi-square a p-value it must stay at or above.
func (r *resolver) driftTolerance(p *pending) (Tolerance, bool) {
	s, ok := p.rule.Spec.(DriftSpec)
	if !ok || p.tol == nil {
		return Tolerance{}, false
	}
	dir := HigherIsWorse
	if s.Measure == DriftChiSquare {
		dir = LowerIsWorse
	}
	return r.unitTolerance(p.rule.ID+".tolerance", p.tol, dir)
}

// explainDrift describes a drift rule for explain.
func explainDrift(s DriftSpec) string {
	if s.Baseline != "" {
		return string(s.Measure) + " against baseline " + s.Baseline
	}
	return string(s.Measure) + " against reference " + s.Reference
}
