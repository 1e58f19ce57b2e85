package gof

import (
	"fmt"
	"testing"
)

// BenchmarkReservoirMerge merges four reservoirs of the distribution
// rule's default size (10⁶), fed batches of 64k dealt round-robin as the
// engine deals batches to its four lanes, the way the engine merges lanes:
// the first absorbs the others in turn. With 1M values in all the
// reservoirs hold every value and merge in stream order; with 5M each
// samples and the merge draws. Filling is not timed.
func BenchmarkReservoirMerge(b *testing.B) {
	const size, per, lanes = 1_000_000, 1 << 16, 4
	batch := seq(0, per)
	for _, n := range []int{1_000_000, 5_000_000} {
		b.Run(fmt.Sprintf("%dM values", n/1_000_000), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(min(n, size)) * 8)
			for b.Loop() {
				b.StopTimer()
				rs := make([]*Reservoir, lanes)
				for i := range rs {
					rs[i], _ = NewReservoir(size, uint64(i+1))
				}
				for pos, k := 0, 0; pos < n; pos, k = pos+per, k+1 {
					rs[k%lanes].AddAllAt(int64(pos), batch[:min(per, n-pos)])
				}
				b.StartTimer()
				for _, o := range rs[1:] {
					if err := rs[0].Merge(o); err != nil {
						b.Fatal(err)
					}
				}
			}
		})
	}
}
