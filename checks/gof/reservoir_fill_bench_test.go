package gof

import (
	"fmt"
	"testing"
)

// BenchmarkReservoirFill offers 1M and 4M values, in batches of 64k, to
// a reservoir of the distribution rule's default size (10⁶): filling it,
// then sampling. B/op shows what filling allocates.
func BenchmarkReservoirFill(b *testing.B) {
	const size, per = 1_000_000, 1 << 16
	batch := seq(0, per)
	for _, n := range []int{1 << 20, 1 << 22} {
		b.Run(fmt.Sprintf("%dk values", n>>10), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(n) * 8)
			for b.Loop() {
				r, _ := NewReservoir(size, 1)
				for pos := 0; pos < n; pos += per {
					r.AddAllAt(int64(pos), batch)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/value")
		})
	}
}

// BenchmarkReservoirAdd offers 1M values one at a time (Add), as a
// joint rule's plot sample does, to a reservoir of 2,000.
func BenchmarkReservoirAdd(b *testing.B) {
	const n = 1 << 20
	xs := seq(0, n)
	b.ReportAllocs()
	b.SetBytes(n * 8)
	for b.Loop() {
		r, _ := NewReservoir(2000, 1)
		for _, x := range xs {
			r.Add(x)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/value")
}
