package checks

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// measuredBatches is 1M rows of one column x1 shaped like bench/gen's
// measured columns: normal, mean 18 and sd 6, to 3 decimals (about 37,000
// distinct values), 1% missing, one value in 10,000 planted 100 off; in
// batches of benchBatchRows.
func measuredBatches(b *testing.B) []*source.Batch {
	b.Helper()
	rng := rand.New(rand.NewPCG(5, 6))
	var out []*source.Batch
	for lo := 0; lo < benchRows; lo += benchBatchRows {
		xs := make([]float64, min(benchBatchRows, benchRows-lo))
		for i := range xs {
			switch r := rng.IntN(10000); {
			case r < 100:
				xs[i] = math.NaN() // colsBatch makes it null
			case r == 100:
				xs[i] = 118
			default:
				xs[i] = math.Round((18+6*rng.NormFloat64())*1000) / 1000
			}
		}
		out = append(out, colsBatch(b, memory.NewGoAllocator(), int64(lo+1), [][]float64{xs}))
	}
	return out
}

// BenchmarkMeasured runs the first pass (Observe) of the summary and
// extremes rules of bench/policy.yaml over measuredBatches with one
// accumulator, as one lane does, and "both passes" of the extremes rules.
func BenchmarkMeasured(b *testing.B) {
	bs := releaseAfter(b, measuredBatches(b))
	env := envOf(bs[0], 20)
	cases := []struct {
		name string
		rule *rules.Rule
		both bool
	}{
		{"summary mean", newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 100), "x1"), false},
		{"summary std", newRule(rules.SummarySpec{Stat: rules.StatStd}, within(0, 100), "x1"), false},
		{"summary p95", newRule(rules.SummarySpec{Stat: rules.StatQuantile, Q: 0.95}, within(0, 100), "x1"), false},
		{"extremes zscore", newRule(extSpec(rules.ExtremesZScore), atMost(0.05), "x1"), false},
		{"extremes tukey", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1"), false},
		{"extremes robust-z", newRule(extSpec(rules.ExtremesRobustZ), atMost(0.05), "x1"), false},
		{"extremes zscore both passes", newRule(extSpec(rules.ExtremesZScore), atMost(0.05), "x1"), true},
		{"extremes tukey both passes", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1"), true},
		{"minimum", newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 0}, atMost(0.05), "x1"), false},
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			perRow(b, benchRows, func() {
				if tc.both {
					runBoth(b, c, bs)
					return
				}
				a := c.NewAccumulator()
				for _, batch := range bs {
					if err := a.Observe(batch); err != nil {
						b.Fatal(err)
					}
				}
			})
		})
	}
}
