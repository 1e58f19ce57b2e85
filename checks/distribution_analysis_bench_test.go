package checks

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// BenchmarkDistributionAnalysis is the analysis a distribution rule makes
// after its first pass (sort, fit, test, distance, plot data), without the
// first pass, on the default sample of 10⁶ values: the three rules of
// bench/policy.yaml on values drawn and rounded as bench/refdata writes
// them (normal to 3 decimals tested by ks at the detected resolution,
// lognormal to 4 and gamma to 3 decimals tested by anderson-darling).
// Rounded data have long runs of equal values once sorted.
func BenchmarkDistributionAnalysis(b *testing.B) {
	const n, per = 1_000_000, 1 << 16
	round := func(v float64, d int) float64 { p := math.Pow10(d); return math.Round(v*p) / p }
	cases := []struct {
		name   string
		family string
		test   rules.DistTest
		auto   bool
		draw   func(*rand.Rand) float64
	}{
		{"temp_c normal ks", "normal", rules.TestKS, true, func(r *rand.Rand) float64 { return round(18+6*r.NormFloat64(), 3) }},
		{"load_kwh lognormal anderson-darling", "lognormal", rules.TestAD, false,
			func(r *rand.Rand) float64 { return round(math.Exp(1.2+0.4*r.NormFloat64()), 4) }},
		{"wait_s gamma anderson-darling", "gamma", rules.TestAD, false,
			func(r *rand.Rand) float64 { return round(3*(r.ExpFloat64()+r.ExpFloat64()), 3) }},
	}
	mem := memory.NewGoAllocator()
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			rng := rand.New(rand.NewPCG(11, 12))
			spec := distSpec(c.family)
			spec.Test, spec.AutoResolution = c.test, c.auto
			check, err := Compile(newRule(spec, distanceTol, "x"), floatEnv())
			if err != nil {
				b.Fatal(err)
			}
			a := check.NewAccumulator().(*DistributionAccumulator)
			for first := 0; first < n; first += per {
				xs := make([]float64, per)
				for i := range xs {
					xs[i] = c.draw(rng)
				}
				bt := numBatch(b, mem, int64(first), xs)
				if err := a.Observe(bt); err != nil {
					b.Fatal(err)
				}
				bt.Release()
			}
			perRow(b, n, func() {
				a.found = nil
				if res := a.Finish(); res.Status != report.OK {
					b.Fatal(res.Error)
				}
			})
		})
	}
}

// BenchmarkDistributionSecondPass is the second pass of a failing
// distribution rule over 1M rows: gamma tested by ks on lognormal values
// rounded to 4 decimals (as load_kwh in bench/refdata), so that about half
// the rows lie in the regions of excess and each is scored by its tail
// probability under the fitted gamma.
func BenchmarkDistributionSecondPass(b *testing.B) {
	const n, per = 1_000_000, 1 << 16
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(13, 14))
	spec := distSpec("gamma")
	check, err := Compile(newRule(spec, rules.Tolerance{Direction: rules.HigherIsWorse, Warn: rules.AtMost(0.001), Fail: rules.AtMost(0.002)}, "x"), floatEnv())
	if err != nil {
		b.Fatal(err)
	}
	first := check.NewAccumulator().(*DistributionAccumulator)
	var batches []*source.Batch
	for at := 0; at < n; at += per {
		xs := make([]float64, per)
		for i := range xs {
			xs[i] = math.Round(math.Exp(1.2+0.4*rng.NormFloat64())*1e4) / 1e4
		}
		bt := numBatch(b, mem, int64(at), xs)
		batches = append(batches, bt)
		if err := first.Observe(bt); err != nil {
			b.Fatal(err)
		}
	}
	releaseAfter(b, batches)
	if first.SecondPass() == nil {
		b.Fatal("the rule has no rows to list")
	}
	perRow(b, n, func() {
		l := first.SecondPass()
		for _, bt := range batches {
			if err := l.Observe(bt); err != nil {
				b.Fatal(err)
			}
		}
		if res := l.Finish(); res.Offending == nil || res.Offending.Count == 0 {
			b.Fatal("no rows listed")
		}
	})
}
