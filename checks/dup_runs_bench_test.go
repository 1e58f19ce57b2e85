package checks

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/assay-project/assay/rules"
)

// BenchmarkFindRuns is the analysis of a unique or key rule's first pass
// alone: findRuns over n uniform 64-bit hashes in chunks of an engine
// batch (2¹⁶), one in a thousand repeating an earlier one, as the
// bench policy's key on 10M ids gives them. Each round starts from
// unpartitioned chunks (the copy is not timed).
func BenchmarkFindRuns(b *testing.B) {
	for _, n := range []int{1_000_000, 10_000_000} {
		rng := rand.New(rand.NewPCG(21, 22))
		var src, chunks [][]uint64
		want := int64(0)
		for left := n; left > 0; left -= chunkMax {
			ch := make([]uint64, min(left, chunkMax))
			for i := range ch {
				ch[i] = rng.Uint64()
				if i%1000 == 999 {
					ch[i] = ch[i-1]
					want += 2
				}
			}
			src = append(src, ch)
			chunks = append(chunks, make([]uint64, len(ch)))
		}
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(8 * n))
			for b.Loop() {
				b.StopTimer()
				for k, ch := range src {
					copy(chunks[k], ch)
				}
				b.StartTimer()
				if got := findRuns(chunks); got.rows != want {
					b.Fatalf("findRuns found %d rows in runs, want %d", got.rows, want)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/hash")
		})
	}
}

// BenchmarkDuplicateSecondPass is the second pass of a key rule alone over
// dupBenchRows rows (one id in a thousand repeated): every row hashed
// again and asked whether it is a suspect, the suspects grouped by their
// bytes. Reports wall and CPU time per row (the machine is shared).
func BenchmarkDuplicateSecondPass(b *testing.B) {
	bs := dupBenchBatches(b)
	for _, unique := range []bool{false, true} {
		var spec rules.Spec = rules.KeySpec{}
		if unique {
			spec = rules.UniqueSpec{}
		}
		c, err := Compile(newRule(spec, atMost(0), "id"), envOf(bs[0], 20))
		if err != nil {
			b.Fatal(err)
		}
		first := c.NewAccumulator()
		for _, x := range bs {
			if err := first.Observe(x); err != nil {
				b.Fatal(err)
			}
		}
		b.Run(string(spec.Kind()), func(b *testing.B) {
			perRow(b, dupBenchRows, func() {
				a := first.(Rescanner).SecondPass()
				for _, x := range bs {
					if err := a.Observe(x); err != nil {
						b.Fatal(err)
					}
				}
			})
		})
	}
}
