package gof

import (
	"testing"
)

// BenchmarkReservoirMerge merges four reservoirs of the distribution
// rule's default size (10⁶), each offered 1.25M values in batches of 64k
// dealt round-robin as the engine deals batches to its four lanes (5M
// values in all), the way the engine merges lanes: the first absorbs the
// others in turn. Filling is not timed.
func BenchmarkReservoirMerge(b *testing.B) {
	const size, per, lanes, n = 1_000_000, 1 << 16, 4, 5_000_000
	batch := seq(0, per)
	b.ReportAllocs()
	b.SetBytes(int64(lanes-1) * size * 8)
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
}
