package checks

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// pairBenchRows is the size of the pair benchmarks' data: 10⁶ rows in 16
// batches of 62,500.
const pairBenchRows = 1_000_000

// pairBenchData is 10⁶ rows of x uniform(0, 100), y = 3 + 2x + normal(0,
// 5) with 0.1% of rows 60 higher, z and t unrelated, and a site of 100.
func pairBenchData(b *testing.B) []*source.Batch {
	b.Helper()
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(7, 11))
	const per = pairBenchRows / 16
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: tFloat}, {Name: "y", Type: tFloat}, {Name: "site", Type: tString},
	}, nil)
	var out []*source.Batch
	for k := range 16 {
		xb, yb, sb := array.NewFloat64Builder(mem), array.NewFloat64Builder(mem), array.NewStringBuilder(mem)
		for range per {
			x := 100 * rng.Float64()
			y := 3 + 2*x + 5*rng.NormFloat64()
			if rng.IntN(1000) == 0 {
				y += 60
			}
			xb.Append(x)
			yb.Append(y)
			sb.Append(fmt.Sprintf("s%02d", rng.IntN(100)))
		}
		cols := []arrow.Array{xb.NewArray(), yb.NewArray(), sb.NewArray()}
		out = append(out, &source.Batch{Record: array.NewRecordBatch(schema, cols, per), FirstRow: int64(k*per) + 1})
		for _, c := range cols {
			c.Release()
		}
		xb.Release()
		yb.Release()
		sb.Release()
	}
	return out
}

// BenchmarkPairs runs pair rules over 10⁶ rows, both passes where the rule
// asks for a second, from accumulator to result: least squares and the
// robust fits (which keep every pair: the default sample is 10⁶), the rank
// coefficients, and a rule per group of a 100-site segment.
func BenchmarkPairs(b *testing.B) {
	bs := releaseAfter(b, pairBenchData(b))
	env := envOf(bs[0], 20)
	linear := func(m rules.PairMeasure, fit rules.Fit) *rules.Rule {
		r := linearRule(m, fit, atMost(0.01))
		r.Spec = withSample(r.Spec.(rules.PairSpec))
		if m != rules.PairResiduals {
			r.Tolerance = within(-100, 100)
		}
		return r
	}
	rank := func(c rules.Coefficient) *rules.Rule {
		return newRule(rules.PairSpec{Relation: rules.RelationMonotonic, Measure: rules.PairCorrelation, Coefficient: c,
			Sample: rules.DefaultPairSample, Seed: 1}, within(-1, 1), "x", "y")
	}
	bySite := linear(rules.PairResiduals, rules.FitOLS)
	bySite.Segment = &rules.Segment{By: []string{"site"}, Limit: rules.DefaultGroupLimit}
	bySiteRobust := linear(rules.PairResiduals, rules.FitTheilSen)
	bySiteRobust.Segment = &rules.Segment{By: []string{"site"}, Limit: rules.DefaultGroupLimit}
	bySiteHuber := linear(rules.PairResiduals, rules.FitHuber)
	bySiteHuber.Segment = &rules.Segment{By: []string{"site"}, Limit: rules.DefaultGroupLimit}
	where := linear(rules.PairResiduals, rules.FitOLS)
	where.Segment = &rules.Segment{Limit: rules.DefaultGroupLimit, Where: &rules.RowSpec{Name: "where", Expr: "x > 50"},
		WhereColumns: []string{"x"}}
	for _, tc := range []struct {
		name string
		rule *rules.Rule
	}{
		{"linear ols slope", linear(rules.PairSlope, rules.FitOLS)},
		{"linear ols residuals", linear(rules.PairResiduals, rules.FitOLS)},
		{"linear theil-sen slope", linear(rules.PairSlope, rules.FitTheilSen)},
		{"linear theil-sen residuals", linear(rules.PairResiduals, rules.FitTheilSen)},
		{"linear huber residuals", linear(rules.PairResiduals, rules.FitHuber)},
		{"monotonic spearman", rank(rules.CoefSpearman)},
		{"monotonic kendall", rank(rules.CoefKendall)},
		{"ordered", newRule(rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered, Seed: 1}, atMost(1), "x", "y")},
		{"linear ols residuals where x > 50", where},
		{"linear ols residuals by 100 sites", bySite},
		{"linear theil-sen residuals by 100 sites", bySiteRobust},
		{"linear huber residuals by 100 sites", bySiteHuber},
	} {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				a := c.NewAccumulator()
				for _, x := range bs {
					if err := a.Observe(x); err != nil {
						b.Fatal(err)
					}
				}
				if r, ok := a.(Rescanner); ok {
					if next := r.SecondPass(); next != nil {
						a = next
						for _, x := range bs {
							if err := a.Observe(x); err != nil {
								b.Fatal(err)
							}
						}
					}
				}
				if res := a.Finish(); res.Status != 0 {
					b.Fatalf("%s: %s", res.ID, res.Error)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*pairBenchRows), "ns/row")
		})
	}
}

// withSample gives a benchmark's rule the policy's default sample.
func withSample(s rules.PairSpec) rules.PairSpec {
	s.Sample = rules.DefaultPairSample
	return s
}
