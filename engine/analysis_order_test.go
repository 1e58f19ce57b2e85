package engine

import (
	"slices"
	"testing"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/rules"
)

// kindCheck is a check of a given kind that is only asked its rule.
type kindCheck struct{ rule *rules.Rule }

func (c kindCheck) Rule() *rules.Rule                  { return c.rule }
func (c kindCheck) NewAccumulator() checks.Accumulator { return nil }

// TestAnalysisOrder: the checks are merged and analysed longest kinds
// first (distribution, then key, unique and joint, then extremes, then
// the rest), in check order within a rank, every check once.
func TestAnalysisOrder(t *testing.T) {
	for _, tc := range []struct {
		name  string
		kinds []rules.Kind
		want  []int
	}{
		{"none", nil, []int{}},
		{"plain kinds keep their order", []rules.Kind{rules.KindNulls, rules.KindRow, rules.KindMinimum}, []int{0, 1, 2}},
		{"bench policy's shape",
			[]rules.Kind{rules.KindRequired, rules.KindKey, rules.KindNulls, rules.KindDistribution, rules.KindExtremes,
				rules.KindExtremes, rules.KindDistribution, rules.KindJoint, rules.KindLinear},
			[]int{3, 6, 1, 7, 4, 5, 0, 2, 8}},
		{"unique ranks with key", []rules.Kind{rules.KindUnique, rules.KindExtremes, rules.KindKey, rules.KindDistribution},
			[]int{3, 0, 2, 1}},
	} {
		pl := &plan{}
		for _, k := range tc.kinds {
			pl.checks = append(pl.checks, kindCheck{&rules.Rule{Kind: k}})
		}
		if got := pl.analysisOrder(); !slices.Equal(got, tc.want) {
			t.Errorf("%s: analysisOrder() = %v, want %v", tc.name, got, tc.want)
		}
	}
}
