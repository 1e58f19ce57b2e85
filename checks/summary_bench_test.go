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
// distinct values), 1% missing when nulls is set (none otherwise, as in
// most columns of bench/gen), one value in 10,000 planted 100 off; in
// batches of benchBatchRows.
func measuredBatches(b *testing.B, nulls bool) []*source.Batch {
	b.Helper()
	rng := rand.New(rand.NewPCG(5, 6))
	var out []*source.Batch
	for lo := 0; lo < benchRows; lo += benchBatchRows {
		xs := make([]float64, min(benchBatchRows, benchRows-lo))
		for i := range xs {
			switch r := rng.IntN(10000); {
			case r < 100 && nulls:
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

// BenchmarkMeasured runs the summary and extremes rules of
// bench/policy.yaml over measuredBatches, with and without nulls, with one
// accumulator, as one lane does: the first pass (Observe), "both passes"
// of the extremes rules, and their "second pass" alone (the lister's
// Observe, after a first pass outside the timer).
func BenchmarkMeasured(b *testing.B) {
	type pass int
	const (
		first pass = iota
		both
		second
	)
	cases := []struct {
		name string
		rule *rules.Rule
		pass pass
	}{
		{"summary mean", newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 100), "x1"), first},
		{"summary std", newRule(rules.SummarySpec{Stat: rules.StatStd}, within(0, 100), "x1"), first},
		{"summary p95", newRule(rules.SummarySpec{Stat: rules.StatQuantile, Q: 0.95}, within(0, 100), "x1"), first},
		{"extremes zscore", newRule(extSpec(rules.ExtremesZScore), atMost(0.05), "x1"), first},
		{"extremes tukey", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1"), first},
		{"extremes robust-z", newRule(extSpec(rules.ExtremesRobustZ), atMost(0.05), "x1"), first},
		{"extremes zscore both passes", newRule(extSpec(rules.ExtremesZScore), atMost(0.05), "x1"), both},
		{"extremes tukey both passes", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1"), both},
		{"extremes zscore second pass", newRule(extSpec(rules.ExtremesZScore), atMost(0.05), "x1"), second},
		{"extremes tukey second pass", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1"), second},
		{"minimum", newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 0}, atMost(0.05), "x1"), first},
	}
	for _, nulls := range []bool{true, false} {
		bs := releaseAfter(b, measuredBatches(b, nulls))
		env := envOf(bs[0], 20)
		for _, tc := range cases {
			c, err := Compile(tc.rule, env)
			if err != nil {
				b.Fatal(err)
			}
			name := tc.name + map[bool]string{true: "/nulls 1%", false: "/no nulls"}[nulls]
			b.Run(name, func(b *testing.B) {
				switch tc.pass {
				case first:
					perRow(b, benchRows, func() { observeAll(b, c.NewAccumulator(), bs) })
				case both:
					perRow(b, benchRows, func() { runBoth(b, c, bs) })
				case second:
					r := observeAll(b, c.NewAccumulator(), bs).(Rescanner)
					perRow(b, benchRows, func() {
						next := r.SecondPass()
						if next == nil {
							b.Fatal("no second pass")
						}
						observeAll(b, next, bs)
					})
				}
			})
		}
	}
}
