package checks

import (
	"regexp"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

// TestEveryKindCompiles keeps rules.Kinds() and Compile in step: each
// declared kind has an example rule here, its Spec says the same kind, and
// Compile has a case for it.
func TestEveryKindCompiles(t *testing.T) {
	examples := map[rules.Kind]*rules.Rule{
		rules.KindType:      newRule(rules.TypeSpec{Type: rules.TypeNumber}, atMost(0), "x"),
		rules.KindNulls:     newRule(rules.NullsSpec{}, atMost(0), "x"),
		rules.KindUnique:    newRule(rules.UniqueSpec{}, atMost(0), "x"),
		rules.KindMinimum:   newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 0}, atMost(0), "x"),
		rules.KindMaximum:   newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 1}, atMost(0), "x"),
		rules.KindEnum:      newRule(rules.EnumSpec{Values: []string{"1"}, Numbers: []float64{1}}, atMost(0), "x"),
		rules.KindPattern:   newRule(rules.PatternSpec{Pattern: "^a", Regexp: regexp.MustCompile("^a")}, atMost(0), "s"),
		rules.KindMinLength: newRule(rules.LengthSpec{Bound: rules.KindMinLength, Length: 1}, atMost(0), "s"),
		rules.KindMaxLength: newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 1}, atMost(0), "s"),
		rules.KindSummary:   newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 1), "x"),
		rules.KindRow:       newRule(rules.RowSpec{Name: "x small", Expr: "x < 1"}, atMost(0), "x"),
		rules.KindRowCount:  newRule(rules.RowCountSpec{}, within(0, 1)),
		rules.KindKey:       newRule(rules.KeySpec{}, atMost(0), "x", "s"),
		rules.KindClosed:    newRule(rules.ClosedSpec{Allowed: []string{"x", "s"}}, atMost(0)),
		rules.KindRequired:  newRule(rules.RequiredSpec{}, atMost(0), "x"),
		rules.KindDistribution: newRule(rules.DistributionSpec{Families: []string{"normal"}, Test: rules.TestKS,
			Measure: rules.MeasureDistance, Sample: 1000, Seed: 1}, atMost(0.1), "x"),
		rules.KindExtremes: newRule(rules.ExtremesSpec{Method: rules.ExtremesTukey, K: 1.5}, atMost(0.05), "x"),
		rules.KindDrift:    newRule(rules.DriftSpec{Baseline: "absent.json", Measure: rules.DriftPSI}, atMost(0.25), "x"),
		rules.KindJoint: newRule(rules.JointSpec{Method: rules.JointMahalanobis, Quantile: 0.999, Sample: 1000, Seed: 1},
			atMost(0.05), "x", "y"),
		rules.KindLinear: newRule(rules.PairSpec{Relation: rules.RelationLinear, Measure: rules.PairSlope, Fit: rules.FitOLS},
			within(0, 1), "x", "y"),
		rules.KindMonotonic: newRule(rules.PairSpec{Relation: rules.RelationMonotonic, Measure: rules.PairCorrelation,
			Coefficient: rules.CoefSpearman, Sample: 1000, Seed: 1}, within(0, 1), "x", "y"),
		rules.KindOrdered:     newRule(rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered}, atMost(0), "y", "x"),
		rules.KindAssociation: newRule(rules.PairSpec{Relation: rules.RelationAssociation, Measure: rules.PairCramersV}, within(0, 1), "s", "y"),
		rules.KindDetermines:  newRule(rules.PairSpec{Relation: rules.RelationDetermines, Measure: rules.PairDetermines}, atMost(0), "s", "x"),
	}
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: tFloat}, {Name: "s", Type: tString}, {Name: "y", Type: tInt}}, nil)
	env := &Env{Schema: schema, DataColumns: []string{"x", "s", "y"}, MaxRowsListed: 5}
	for _, k := range rules.Kinds() {
		r, ok := examples[k]
		if !ok {
			t.Errorf("kind %q is declared in rules but has no example here: add one, and its check", k)
			continue
		}
		if r.Spec.Kind() != k {
			t.Errorf("kind %q: its example's Spec says %q", k, r.Spec.Kind())
		}
		if _, err := Compile(r, env); err != nil && strings.Contains(err.Error(), "no check implements") {
			t.Errorf("kind %q: %v", k, err)
		}
		delete(examples, k)
	}
	for k := range examples {
		t.Errorf("kind %q has an example here but is not in rules.Kinds()", k)
	}
}

// TestCompileErrors: a rule that cannot apply to the data names the column
// and what it holds.
func TestCompileErrors(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: tFloat}, {Name: "s", Type: tString}, {Name: "b", Type: tBool},
		{Name: "d", Type: arrow.BinaryTypes.Binary},
	}, nil)
	env := &Env{Schema: schema, DataColumns: []string{"x", "s", "b", "d"}}
	tests := []struct {
		name string
		rule *rules.Rule
		want string
	}{
		{"absent column", newRule(rules.NullsSpec{}, atMost(0), "nope"), `column "nope" is not in the data`},
		{"pattern on numbers", newRule(rules.PatternSpec{Pattern: "a", Regexp: regexp.MustCompile("a")}, atMost(0), "x"),
			`column "x" holds numbers (float64); pattern applies to strings`},
		{"maximum on strings", newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 1}, atMost(0), "s"),
			`column "s" holds strings (utf8); maximum applies to integers, numbers, dates and timestamps`},
		{"length on booleans", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 1}, atMost(0), "b"),
			`column "b" holds booleans (bool); maxLength applies to strings`},
		{"type integer on floats", newRule(rules.TypeSpec{Type: rules.TypeInteger}, atMost(0), "x"),
			`column "x" holds numbers (float64) in the data, not integer values`},
		{"enum text on numbers", newRule(rules.EnumSpec{Values: []string{"a"}}, atMost(0), "x"),
			`enum value "a" is not a number but column "x" holds numbers (float64)`},
		{"enum word on booleans", newRule(rules.EnumSpec{Values: []string{"yes"}}, atMost(0), "b"),
			`enum value "yes" is not a boolean but column "b" holds booleans (bool)`},
		{"mean of strings", newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 1), "s"),
			`column "s" holds strings (utf8); summary mean applies to integers, numbers, dates and timestamps`},
		{"unique on binary", newRule(rules.UniqueSpec{}, atMost(0), "d"),
			`column "d" holds values (binary), which unique cannot compare`},
		{"quantile beyond 1", newRule(rules.SummarySpec{Stat: rules.StatQuantile, Q: 1.5}, within(0, 1), "x"),
			`quantile 1.5 of column "x" is outside [0, 1]`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Compile(tc.rule, env)
			if err == nil {
				t.Fatalf("Compile: no error, want %q", tc.want)
			}
			if !strings.HasSuffix(err.Error(), tc.want) || !strings.Contains(err.Error(), tc.rule.ID) {
				t.Errorf("Compile: %q, want the rule id and %q", err, tc.want)
			}
		})
	}
}
