package bottomk

import (
	"fmt"
	"math"
	"testing"
)

// BenchmarkOfferRun offers 1M and 4M rows of one value, in batches of
// 64k, to a sample of the distribution rule's default size (10⁶), as one
// lane does; 2.5M is a lane's share of 10M rows. B/op shows what the
// buffer allocates.
func BenchmarkOfferRun(b *testing.B) {
	const size, per = 1_000_000, 1 << 16
	batch := make([]float64, per)
	for _, n := range []int{1 << 20, 2_500_000, 1 << 22} {
		b.Run(fmt.Sprintf("%dk rows", n>>10), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(n) * 8)
			for b.Loop() {
				s, _ := New(size, 1, 1)
				for first := 0; first < n; first += per {
					s.OfferRun(int64(first), batch[:min(per, n-first)])
				}
				s.trim()
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/row")
		})
	}
}

// BenchmarkOffer offers 1M rows one at a time to a sample of 2,000, as a
// joint rule's plot sample does.
func BenchmarkOffer(b *testing.B) {
	const n = 1 << 20
	v := []float64{1}
	b.ReportAllocs()
	b.SetBytes(n * 8)
	for b.Loop() {
		s, _ := New(2000, 1, 1)
		for r := range int64(n) {
			s.Offer(r, v)
		}
		s.trim()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/row")
}

// BenchmarkMerge merges four samples of 10⁶ rows, fed batches of 64k
// dealt round-robin as the engine deals them to its four lanes, the way
// the engine merges lanes. Filling is not timed.
func BenchmarkMerge(b *testing.B) {
	const size, per, lanes = 1_000_000, 1 << 16, 4
	batch := make([]float64, per)
	for _, n := range []int{1_000_000, 5_000_000} {
		b.Run(fmt.Sprintf("%dM rows", n/1_000_000), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(min(n, size)) * 8)
			for b.Loop() {
				b.StopTimer()
				ss := make([]*Sample, lanes)
				for i := range ss {
					ss[i], _ = New(size, 1, 1)
				}
				for first, k := 0, 0; first < n; first, k = first+per, k+1 {
					ss[k%lanes].OfferRun(int64(first), batch[:min(per, n-first)])
				}
				b.StartTimer()
				for _, o := range ss[1:] {
					if err := ss[0].Merge(o); err != nil {
						b.Fatal(err)
					}
				}
				ss[0].trim()
			}
		})
	}
}

// BenchmarkKeepRun times the two loops that take a run of rows into the
// buffer, without and with a branch per row (keepRun, keepRareRun), on
// 64k rows at thresholds that keep a share of 1/2 to 1/1024 of them: where
// the second overtakes the first sets rareLimit.
func BenchmarkKeepRun(b *testing.B) {
	const per = 1 << 16
	s, _ := New(1, 1, 1)
	vals := make([]float64, per)
	keys, vs := make([]uint64, per), make([]float64, per)
	for _, share := range []int{2, 4, 8, 16, 32, 64, 1024} {
		limit := uint64(math.MaxUint64) / uint64(share)
		for _, loop := range []struct {
			name string
			run  func(int64, []float64, uint64, []uint64, []float64) (int, int)
		}{{"branch-free", s.keepRun}, {"branchy", s.keepRareRun}} {
			b.Run(fmt.Sprintf("1 in %d/%s", share, loop.name), func(b *testing.B) {
				b.SetBytes(per * 8)
				row := int64(0)
				for b.Loop() {
					loop.run(row, vals, limit, keys, vs)
					row += per
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*per), "ns/row")
			})
		}
	}
}
