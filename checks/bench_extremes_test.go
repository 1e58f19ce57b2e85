package checks

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// benchRows is the size of the data the extremes and joint benchmarks
// run on, in batches of benchBatchRows.
const (
	benchRows      = 1_000_000
	benchBatchRows = 1 << 16
)

// benchColumns is benchRows rows of three correlated normal columns
// x1..x3, with 0.1% of the rows planted off the pattern, in batches.
func benchColumns(b *testing.B) []*source.Batch {
	b.Helper()
	rng := rand.New(rand.NewPCG(1, 2))
	var out []*source.Batch
	for lo := 0; lo < benchRows; lo += benchBatchRows {
		n := min(benchBatchRows, benchRows-lo)
		cols := [][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
		for i := range n {
			a, c, e := rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()
			cols[0][i] = 20 + 3*a
			cols[1][i] = 60 - 8*(0.8*a+0.6*c)
			cols[2][i] = 600 + 80*(0.5*a+0.3*c+0.81*e)
			if rng.IntN(1000) == 0 {
				cols[1][i] = 60 + 8*(0.8*a+0.6*c)
			}
		}
		out = append(out, colsBatch(b, memory.NewGoAllocator(), int64(lo+1), cols))
	}
	return out
}

// observeAll feeds the batches to a and returns it.
func observeAll(b *testing.B, a Accumulator, bs []*source.Batch) Accumulator {
	b.Helper()
	for _, batch := range bs {
		if err := a.Observe(batch); err != nil {
			b.Fatal(err)
		}
	}
	return a
}

// runBoth runs both passes of c over the batches.
func runBoth(b *testing.B, c Check, bs []*source.Batch) {
	b.Helper()
	a := observeAll(b, c.NewAccumulator(), bs)
	if r, ok := a.(Rescanner); ok {
		if next := r.SecondPass(); next != nil {
			a = observeAll(b, next, bs)
		}
	}
	if res := a.Finish(); res.Error != "" {
		b.Fatal(res.Error)
	}
}

// BenchmarkJoint measures a joint rule over three columns of 1e6 rows,
// both passes: classical (streamed co-moments), and robust (FAST-MCD on
// the default sample of 100,000 rows, and on every row).
func BenchmarkJoint(b *testing.B) {
	bs := releaseAfter(b, benchColumns(b))
	env := envOf(bs[0], 20)
	robust := jointSpec(true)
	all := jointSpec(true)
	all.Sample = benchRows
	for _, tc := range []struct {
		name string
		spec rules.JointSpec
	}{{"classical", jointSpec(false)}, {"robust sample 1e5", robust}, {"robust all rows", all}} {
		c, err := Compile(newRule(tc.spec, atMost(0.05), "x1", "x2", "x3"), env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				runBoth(b, c, bs)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchRows), "ns/row")
		})
	}
}

// BenchmarkExtremes measures extremes rules on one column of 1e6 rows,
// both passes.
func BenchmarkExtremes(b *testing.B) {
	bs := releaseAfter(b, benchColumns(b))
	env := envOf(bs[0], 20)
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ, rules.ExtremesESD,
		rules.ExtremesTail} {
		c, err := Compile(newRule(extSpec(m), atMost(0.05), "x2"), env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(string(m), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				runBoth(b, c, bs)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*benchRows), "ns/row")
		})
	}
}

// keptBatches is n rows of one normal column x1 with 0.1% of the values
// planted far out, in batches of benchBatchRows.
func keptBatches(b *testing.B, n int) []*source.Batch {
	b.Helper()
	rng := rand.New(rand.NewPCG(3, 4))
	var out []*source.Batch
	for lo := 0; lo < n; lo += benchBatchRows {
		xs := make([]float64, min(benchBatchRows, n-lo))
		for i := range xs {
			xs[i] = 50 + 10*rng.NormFloat64()
			if rng.IntN(1000) == 0 {
				xs[i] += 200
			}
		}
		out = append(out, colsBatch(b, memory.NewGoAllocator(), int64(lo+1), [][]float64{xs}))
	}
	return out
}

// BenchmarkKeptValues measures the rules that keep every value of a
// column (summary p95, extremes tukey and robust-z) at 1e6 and 1e7 rows:
// "observe" is two accumulators fed alternate batches, as two engine
// workers are, then merged; "finish" is Finish (and, for extremes, the
// fit SecondPass needs) of the merged accumulator alone. 1e7 is skipped
// with -short.
func BenchmarkKeptValues(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		if n > benchRows && testing.Short() {
			continue
		}
		bs := keptBatches(b, n)
		env := envOf(bs[0], 20)
		for _, tc := range []struct {
			name string
			rule *rules.Rule
		}{
			{"summary p95", newRule(rules.SummarySpec{Stat: rules.StatQuantile, Q: 0.95}, within(0, 100), "x1")},
			{"extremes tukey", newRule(extSpec(rules.ExtremesTukey), atMost(0.05), "x1")},
			{"extremes robust-z", newRule(extSpec(rules.ExtremesRobustZ), atMost(0.05), "x1")},
		} {
			c, err := Compile(tc.rule, env)
			if err != nil {
				b.Fatal(err)
			}
			observe := func() Accumulator {
				w := []Accumulator{c.NewAccumulator(), c.NewAccumulator()}
				for i, batch := range bs {
					if err := w[i%2].Observe(batch); err != nil {
						b.Fatal(err)
					}
				}
				if err := w[0].Merge(w[1]); err != nil {
					b.Fatal(err)
				}
				return w[0]
			}
			b.Run(fmt.Sprintf("%s/%.0e/observe", tc.name, float64(n)), func(b *testing.B) {
				b.ReportAllocs()
				b.SetBytes(int64(8 * n))
				for range b.N {
					observe()
				}
			})
			b.Run(fmt.Sprintf("%s/%.0e/finish", tc.name, float64(n)), func(b *testing.B) {
				b.ReportAllocs()
				b.SetBytes(int64(8 * n))
				for range b.N {
					b.StopTimer()
					a := observe()
					b.StartTimer()
					if res := a.Finish(); res.Error != "" {
						b.Fatal(res.Error)
					}
				}
			})
		}
		for _, batch := range bs {
			batch.Release()
		}
	}
}
