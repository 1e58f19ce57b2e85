package checks

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
)

// BenchmarkDistributionObserve is a distribution rule's first pass, one
// accumulator, over 1M rows (its default sample of 10⁶ keeps every value)
// and 4M rows (the sample keeps 10⁶ of them), lognormal values with 1%
// missing and with none (whose batches are read in place): the support
// test, the sample and the counts, without the analysis.
func BenchmarkDistributionObserve(b *testing.B) {
	const per = 1 << 16
	mem := memory.NewGoAllocator()
	c, err := Compile(newRule(distSpec("lognormal", "gamma"), distanceTol, "x"), floatEnv())
	if err != nil {
		b.Fatal(err)
	}
	for _, missing := range []int{100, 0} {
		rng := rand.New(rand.NewPCG(5, 6))
		var batches []*source.Batch
		for first := int64(0); first < 1<<20; first += per {
			xs := make([]float64, per)
			for i := range xs {
				xs[i] = math.Exp(rng.NormFloat64())
				if missing > 0 && rng.IntN(missing) == 0 {
					xs[i] = math.NaN() // numBatch writes a NaN as missing
				}
			}
			batches = append(batches, numBatch(b, mem, first, xs))
		}
		releaseAfter(b, batches)
		name := map[int]string{100: "1% missing", 0: "none missing"}[missing]
		for _, times := range []int{1, 4} {
			b.Run(fmt.Sprintf("%s/%dM rows", name, times), func(b *testing.B) {
				perRow(b, times*len(batches)*per, func() {
					a := c.NewAccumulator()
					for k := range times {
						for _, bt := range batches {
							moved := *bt
							moved.FirstRow += int64(k) << 20
							if err := a.Observe(&moved); err != nil {
								b.Fatal(err)
							}
						}
					}
				})
			})
		}
	}
}
