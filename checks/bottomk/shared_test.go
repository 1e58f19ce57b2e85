package bottomk

import (
	"fmt"
	"math"
	"sync"
	"testing"
)

// TestSharedBoundExact: lanes sharing a Bound, fed their batches (batch k
// to lane k mod lanes) from goroutines of their own, merged in lane
// order, hold exactly the rows of smallest key of the whole stream, with
// their values, whatever the timing (run with -race).
func TestSharedBoundExact(t *testing.T) {
	tests := []struct {
		size, p, n, batch, lanes int
	}{
		{1, 1, 100, 7, 4},
		{50, 1, 40, 7, 4},    // a complete sample
		{500, 1, 499, 64, 4}, // just below Size
		{500, 1, 501, 64, 4},
		{700, 1, 60_000, 1000, 4},
		{700, 2, 60_000, 1000, 4},
		{3000, 3, 200_000, 4096, 4},
		{5000, 1, 300_000, 65_536, 3},
		{2000, 1, 100_000, 777, 1},
	}
	for _, tt := range tests {
		t.Run(fmt.Sprintf("size %d p %d n %d batch %d lanes %d", tt.size, tt.p, tt.n, tt.batch, tt.lanes), func(t *testing.T) {
			for range 3 {
				b := NewBound(tt.size)
				ss := make([]*Sample, tt.lanes)
				var wg sync.WaitGroup
				for l := range ss {
					s, err := New(tt.size, tt.p, 11)
					if err != nil {
						t.Fatal(err)
					}
					s.Share(b)
					ss[l] = s
					wg.Go(func() {
						for first, k := 0, 0; first < tt.n; first, k = first+tt.batch, k+1 {
							if k%tt.lanes != l {
								continue
							}
							m := min(tt.batch, tt.n-first)
							vals := make([]float64, m*tt.p)
							for i := range m {
								for j := range tt.p {
									vals[i*tt.p+j] = valueOf(int64(first+i), j)
								}
							}
							s.OfferRun(int64(first), vals)
						}
					})
				}
				wg.Wait()
				// Each lane publishes at least every max(Size, minSlack)
				// rows; once more than Size rows are published the bound
				// falls.
				if tt.n > 2*tt.lanes*max(tt.size, minSlack) && b.t.Load() == math.MaxUint64 {
					t.Fatalf("the bound never fell")
				}
				for _, o := range ss[1:] {
					if err := ss[0].Merge(o); err != nil {
						t.Fatal(err)
					}
				}
				rows := make([]int64, tt.n)
				for i := range rows {
					rows[i] = int64(i)
				}
				checkSample(t, ss[0], bruteForce(ss[0], rows))
			}
		})
	}
}

// BenchmarkLanes offers 10M rows in batches of 64k dealt to four lanes,
// each a sample of 10⁶, alone or sharing a Bound, and merges them.
func BenchmarkLanes(b *testing.B) {
	const size, per, lanes, n = 1_000_000, 1 << 16, 4, 10_000_000
	batch := make([]float64, per)
	for _, share := range []bool{false, true} {
		b.Run(fmt.Sprintf("shared=%v", share), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				bd := NewBound(size)
				ss := make([]*Sample, lanes)
				for i := range ss {
					ss[i], _ = New(size, 1, 1)
					if share {
						ss[i].Share(bd)
					}
				}
				for first, k := 0, 0; first < n; first, k = first+per, k+1 {
					ss[k%lanes].OfferRun(int64(first), batch[:min(per, n-first)])
				}
				held := 0
				for _, s := range ss {
					held += cap(s.keys)
				}
				b.ReportMetric(float64(held), "cap-rows")
				for _, o := range ss[1:] {
					ss[0].Merge(o)
				}
				ss[0].trim()
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n), "ns/row")
		})
	}
}
