package checks

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestDistributionRoundedAtScale: ten million values of a normal(20, 1)
// recorded to 0.01 (a temperature logger) are normal by construction, but
// each recorded value stands for its whole rounding cell. Compared as they
// are, the ties put the empirical CDF about h f(x)/2 = 0.01 × 0.399 / 2 =
// 0.002 off the fitted one at every cell, which at a million values (the
// default sample) is a KS p-value far below 0.01: the rule fails. With
// resolution auto the step is detected and the comparison made at cell
// boundaries, which rounding cannot move: the rule passes. The distance
// measure shows why it is the default at scale: rounding moves it by 0.002
// only, far inside any sensible tolerance.
func TestDistributionRoundedAtScale(t *testing.T) {
	const n, rows = 10_000_000, 1 << 16
	auto := distSpec("normal")
	auto.Measure, auto.AutoResolution = rules.MeasurePValue, true
	none := auto
	none.AutoResolution = false
	mem := checkedMem(t)
	env := floatEnv()
	accs := []Accumulator{
		compile(t, newRule(auto, pvalueTol, "x"), env).NewAccumulator(),
		compile(t, newRule(none, pvalueTol, "x"), env).NewAccumulator(),
	}
	rng := rand.New(rand.NewPCG(2024, 1))
	xs := make([]float64, rows)
	for first := 0; first < n; first += rows {
		xs = xs[:min(rows, n-first)]
		for i := range xs {
			xs[i] = math.Round((20+rng.NormFloat64())*100) / 100
		}
		b := numBatch(t, mem, int64(first)+1, xs)
		observe(t, accs[0], b)
		observe(t, accs[1], b)
		b.Release()
	}
	got := []report.Result{accs[0].Finish(), accs[1].Finish()}
	for i, r := range got {
		f := r.Fit
		if f == nil || f.N != n || !f.Sampled || f.SampleSize != rules.DefaultSample {
			t.Fatalf("run %d: fit %+v (%s)", i, f, r.Message)
		}
	}
	a, o := got[0], got[1]
	if a.Verdict != report.Pass || a.Fit.Resolution == nil || float64(*a.Fit.Resolution) != 0.01 || !(*a.PValue > 0.05) {
		t.Errorf("resolution auto: verdict %s p %v resolution %v (%s)", a.Verdict, *a.PValue, a.Fit.Resolution, a.Message)
	}
	if o.Verdict != report.Fail || o.Fit.Resolution != nil || !(*o.PValue < 0.01) {
		t.Errorf("resolution none: verdict %s p %v (%s)", o.Verdict, *o.PValue, o.Message)
	}
	if d := float64(o.Fit.Distance); d < 0.0017 || d > 0.0035 {
		t.Errorf("resolution none: KS distance %v, want about 0.002 from the ties and under 0.0015 of sampling noise", d)
	}
	if d := float64(a.Fit.Distance); d > 0.0015 {
		t.Errorf("resolution auto: KS distance %v, want the sampling noise of a million values only", d)
	}
	t.Logf("auto: D %.5f p %.3g · none: D %.5f p %.3g", a.Fit.Distance, *a.PValue, o.Fit.Distance, *o.PValue)
}

// TestDistributionSizeUnderNull: a 5% test through the check (its p-value
// measure, judged "p at most 0.05 rejects") rejects between 3.5% and 6.5% of
// 1000 seeded samples drawn from the declared family with its parameters
// estimated. The bootstraps run with 99 replicates to keep the test fast;
// with B replicates a bootstrap p-value of at most 0.05 has probability
// floor(0.05 (B + 1))/(B + 1) under the null, exactly 5% for B = 99. That
// holds over the bootstrap's random draws, so each sample runs with its own
// seed: with one seed for all, the level would be that of one fixed set of
// 99 replicates, off 5% by the Monte Carlo error of its 95th percentile
// (about 2 points at B = 99, 0.7 at the default 999).
func TestDistributionSizeUnderNull(t *testing.T) {
	normal := func(r *rand.Rand) float64 { return 5 + 2*r.NormFloat64() }
	cases := []struct {
		name, family string
		test         rules.DistTest
		n            int
		draw         func(*rand.Rand) float64
		auto         bool
	}{
		{"normal ks (Lilliefors)", "normal", rules.TestKS, 50, normal, false},
		{"normal anderson-darling (Stephens)", "normal", rules.TestAD, 50, normal, false},
		{"exponential anderson-darling (Stephens)", "exponential", rules.TestAD, 40, func(r *rand.Rand) float64 { return 3 * r.ExpFloat64() }, false},
		{"gamma ks (bootstrap)", "gamma", rules.TestKS, 40, func(r *rand.Rand) float64 { return r.ExpFloat64() + r.ExpFloat64() }, false},
		{"normal recorded to 0.5 ks at resolution (bootstrap)", "normal", rules.TestKS, 50,
			func(r *rand.Rand) float64 { return math.Round(normal(r)*2) / 2 }, true},
		{"poisson chi-square", "poisson", rules.TestChiSquare, 200, func(r *rand.Rand) float64 { return poissonDraw(r, 3) }, false},
	}
	if testing.Short() {
		cases = cases[:3]
	}
	const samples = 1000
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			spec := distSpec(c.family)
			spec.Test, spec.Measure, spec.AutoResolution = c.test, rules.MeasurePValue, c.auto
			mem := checkedMem(t)
			rejected := 0
			xs := make([]float64, c.n)
			for s := range samples {
				spec.Seed = uint64(s)
				check := compile(t, newRule(spec, pvalueTol, "x"), floatEnv()).(*distributionCheck)
				check.replicates = 99
				rng := rand.New(rand.NewPCG(uint64(s), 99))
				for i := range xs {
					xs[i] = c.draw(rng)
				}
				b := numBatch(t, mem, 1, xs)
				a := check.NewAccumulator()
				observe(t, a, b)
				b.Release()
				res := a.Finish()
				if res.Status != report.OK {
					t.Fatalf("sample %d: %s", s, res.Error)
				}
				if c.auto != (res.Fit.Resolution != nil) {
					t.Fatalf("sample %d: resolution %v, want it only when asked", s, res.Fit.Resolution)
				}
				if float64(res.Measure.Value) <= 0.05 {
					rejected++
				}
			}
			rate := float64(rejected) / samples
			if rate < 0.035 || rate > 0.065 {
				t.Errorf("rejected %d of %d samples (%.1f%%), want 3.5%% to 6.5%%", rejected, samples, 100*rate)
			}
			t.Logf("rejected %.1f%%", 100*rate)
		})
	}
}

// floatEnv is the environment of batches made by numBatch.
func floatEnv() *Env {
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: tFloat, Nullable: true}}, nil)
	return &Env{Schema: schema, DataColumns: []string{"x"}, MaxRowsListed: 20}
}

// poissonDraw is a Poisson(lambda) draw by Knuth's multiplication method.
func poissonDraw(r *rand.Rand, lambda float64) float64 {
	k, p, limit := 0.0, r.Float64(), math.Exp(-lambda)
	for p > limit {
		p *= r.Float64()
		k++
	}
	return k
}

// BenchmarkDistribution measures a whole distribution rule: observing the
// values in batches of 64k, then fitting and testing them all (the sample
// size is set to n, so nothing is sampled), plus the default sample of a
// million at 1e7. Run with
//
//	go test -run '^$' -bench Distribution -benchtime 1x ./checks
func BenchmarkDistribution(b *testing.B) {
	const rows = 1 << 16
	cases := []struct {
		name string
		spec rules.DistributionSpec
		draw func(*rand.Rand) float64
	}{
		{"normal-ks", distSpec("normal"), func(r *rand.Rand) float64 { return 10 + r.NormFloat64() }},
		{"lognormal-anderson-darling", func() rules.DistributionSpec {
			s := distSpec("lognormal")
			s.Test = rules.TestAD
			return s
		}(), func(r *rand.Rand) float64 { return math.Exp(r.NormFloat64()) }},
		{"candidates-lognormal-gamma-weibull", distSpec("lognormal", "gamma", "weibull"),
			func(r *rand.Rand) float64 { return r.ExpFloat64() + r.ExpFloat64() }},
		{"poisson-chi-square", distSpec("poisson"), func(r *rand.Rand) float64 { return poissonDraw(r, 4) }},
	}
	for _, n := range []int{1e4, 1e6, 1e7} {
		for _, c := range cases {
			samples := []int{n}
			if n == 1e7 {
				samples = append(samples, rules.DefaultSample)
			}
			for _, sample := range samples {
				name := fmt.Sprintf("%s/n=%d", c.name, n)
				if sample != n {
					name += "/sample=1e6"
				}
				b.Run(name, func(b *testing.B) {
					batches := distBatches(b, n, rows, c.draw)
					spec := c.spec
					spec.Sample = sample
					check, err := Compile(newRule(spec, distanceTol, "x"), floatEnv())
					if err != nil {
						b.Fatal(err)
					}
					for b.Loop() {
						a := check.NewAccumulator()
						for _, bt := range batches {
							if err := a.Observe(bt); err != nil {
								b.Fatal(err)
							}
						}
						if res := a.Finish(); res.Status != report.OK {
							b.Fatal(res.Error)
						}
					}
					b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/value")
				})
			}
		}
	}
}

// BenchmarkDistributionBootstrap measures the p-values that take a
// parametric bootstrap (999 replicates) at its largest sample, 2000 values.
func BenchmarkDistributionBootstrap(b *testing.B) {
	const n = bootstrapMax
	for _, c := range []struct {
		name string
		spec rules.DistributionSpec
		draw func(*rand.Rand) float64
	}{
		{"normal-ks-lilliefors", distSpec("normal"), func(r *rand.Rand) float64 { return r.NormFloat64() }},
		{"normal-ks-at-resolution", func() rules.DistributionSpec {
			s := distSpec("normal")
			s.AutoResolution = true
			return s
		}(), func(r *rand.Rand) float64 { return math.Round(r.NormFloat64()*100) / 100 }},
		{"gamma-ks", distSpec("gamma"), func(r *rand.Rand) float64 { return r.ExpFloat64() + r.ExpFloat64() }},
		{"student-t-ks", distSpec("student-t"), func(r *rand.Rand) float64 { return r.NormFloat64() / math.Sqrt(r.ExpFloat64()) }},
	} {
		b.Run(c.name, func(b *testing.B) {
			batches := distBatches(b, n, n, c.draw)
			check, err := Compile(newRule(c.spec, distanceTol, "x"), floatEnv())
			if err != nil {
				b.Fatal(err)
			}
			for b.Loop() {
				a := check.NewAccumulator()
				if err := a.Observe(batches[0]); err != nil {
					b.Fatal(err)
				}
				if res := a.Finish(); res.Status != report.OK || res.Fit.Method.Replicates == 0 {
					b.Fatalf("%s: %+v", res.Error, res.Fit)
				}
			}
		})
	}
}

// distBatches draws n values in batches of rows, released when b ends.
func distBatches(b *testing.B, n, rows int, draw func(*rand.Rand) float64) []*source.Batch {
	b.Helper()
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(1, 2))
	var out []*source.Batch
	for first := 0; first < n; first += rows {
		xs := make([]float64, min(rows, n-first))
		for i := range xs {
			xs[i] = draw(rng)
		}
		out = append(out, numBatch(b, mem, int64(first)+1, xs))
	}
	b.Cleanup(func() {
		for _, bt := range out {
			bt.Release()
		}
	})
	return out
}
