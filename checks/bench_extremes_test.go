package checks

import (
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

// runBoth runs both passes of c over the batches.
func runBoth(b *testing.B, c Check, bs []*source.Batch) {
	b.Helper()
	a := c.NewAccumulator()
	for _, batch := range bs {
		if err := a.Observe(batch); err != nil {
			b.Fatal(err)
		}
	}
	if r, ok := a.(Rescanner); ok {
		if next := r.SecondPass(); next != nil {
			a = next
			for _, batch := range bs {
				if err := a.Observe(batch); err != nil {
					b.Fatal(err)
				}
			}
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
	bs := benchColumns(b)
	defer func() {
		for _, batch := range bs {
			batch.Release()
		}
	}()
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
	bs := benchColumns(b)
	defer func() {
		for _, batch := range bs {
			batch.Release()
		}
	}()
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
