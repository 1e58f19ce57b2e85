package bottomk

import (
	"fmt"
	"math"
	"slices"
	"sync"
	"testing"
)

// TestKeepRunLoops: the loop without branches and the one with a branch
// per row take the same rows into the buffer, in order, with their keys
// and values, stopping when the buffer is full, at any threshold; so
// does the loop over rows at given places (keepAtRun).
func TestKeepRunLoops(t *testing.T) {
	s, err := New(10, 1, 3)
	if err != nil {
		t.Fatal(err)
	}
	const first = 1000
	all := make([]int, 500) // the places of a run
	var some []int          // every third place left out
	for i := range all {
		all[i] = i
		if i%3 != 1 {
			some = append(some, i)
		}
	}
	limits := []uint64{0, 1 << 50, rareLimit - 1, rareLimit, 1 << 62, math.MaxUint64 / 2, math.MaxUint64}
	for _, r := range []int64{first + 3, first + 250} { // a limit that is a key keeps its row
		limits = append(limits, Key(3, r))
	}
	loops := []struct {
		name string
		at   []int
		run  func(vals []float64, limit uint64, keys []uint64, vs []float64) (int, int)
	}{
		{"keepRun", all, func(vals []float64, limit uint64, keys []uint64, vs []float64) (int, int) {
			return s.keepRun(first, vals, limit, keys, vs)
		}},
		{"keepRareRun", all, func(vals []float64, limit uint64, keys []uint64, vs []float64) (int, int) {
			return s.keepRareRun(first, vals, limit, keys, vs)
		}},
		{"keepAtRun", some, func(vals []float64, limit uint64, keys []uint64, vs []float64) (int, int) {
			return s.keepAtRun(first, some, vals, limit, keys, vs)
		}},
	}
	for _, limit := range limits {
		for _, room := range []int{0, 1, 7, 100, 500, 600} {
			for _, loop := range loops {
				vals := make([]float64, len(loop.at))
				for i, a := range loop.at {
					vals[i] = valueOf(first+int64(a), 0)
				}
				// The rows by definition: in order, those of key at most
				// limit, until room of them.
				var wantKeys []uint64
				var wantVals []float64
				wantTaken := 0
				for i, a := range loop.at {
					if len(wantKeys) == room {
						break
					}
					wantTaken++
					if k := Key(3, first+int64(a)); k <= limit {
						wantKeys, wantVals = append(wantKeys, k), append(wantVals, vals[i])
					}
				}
				keys, vs := make([]uint64, room), make([]float64, room)
				taken, kept := loop.run(vals, limit, keys, vs)
				if taken != wantTaken || !slices.Equal(keys[:kept], wantKeys) || !slices.Equal(vs[:kept], wantVals) {
					t.Errorf("%s at limit %#x, room %d: took %d rows, kept keys %x values %v; want %d, %x, %v",
						loop.name, limit, room, taken, keys[:kept], vs[:kept], wantTaken, wantKeys, wantVals)
				}
			}
		}
	}
}

// TestOfferRunSwitchesLoops: a sample offered runs of rows, some of them
// long enough for its threshold to fall below rareLimit in the middle of
// a run, so that OfferRun goes from the loop without branches to the one
// with, holds exactly the rows of smallest key, whatever the batch size;
// after every run its histogram counts exactly the buffered keys.
func TestOfferRunSwitchesLoops(t *testing.T) {
	const size, n = 500, 60_000 // the threshold keeps about 1 row in 120 at the end
	for _, batch := range []int{n, 20_000, 4097, 333, 1} {
		t.Run(fmt.Sprintf("batch %d", batch), func(t *testing.T) {
			s, err := New(size, 1, 5)
			if err != nil {
				t.Fatal(err)
			}
			above, below := false, false
			for first := 0; first < n; first += batch {
				m := min(batch, n-first)
				if s.limit >= rareLimit {
					above = true
				}
				s.OfferRun(int64(first), runValues(first, m))
				if s.limit < rareLimit {
					below = true
				}
				checkHistogram(t, s)
			}
			if !above || !below {
				t.Fatalf("the threshold was above rareLimit: %v, below: %v; want both", above, below)
			}
			rows := make([]int64, n)
			for i := range rows {
				rows[i] = int64(i)
			}
			checkSample(t, s, bruteForce(s, rows))
		})
	}
}

// TestSharedBoundSwitchesLoops: lanes sharing a Bound, each offered its
// batches from a goroutine of its own, one of them in long runs, two of
// them with every fifth row left out (OfferAt), go from one loop to the
// other at different times (the shared bound falls below rareLimit while
// a lane's own threshold is above it), and merged hold exactly the rows
// of smallest key of the rows offered, with one value a row or two.
func TestSharedBoundSwitchesLoops(t *testing.T) {
	const size, n, lanes = 400, 120_000, 4
	batches := []int{20_000, 1000, 64, 5000} // lane l's batch size
	for _, p := range []int{1, 2} {
		for rep := range 3 {
			t.Run(fmt.Sprintf("p %d run %d", p, rep), func(t *testing.T) {
				b := NewBound(size)
				ss := make([]*Sample, lanes)
				offered := make([][]int64, lanes)
				var wg sync.WaitGroup
				for l := range ss {
					s, err := New(size, p, 17)
					if err != nil {
						t.Fatal(err)
					}
					s.Share(b)
					ss[l] = s
					wg.Go(func() {
						// Lane l takes the rows [l n/lanes, (l+1) n/lanes) in
						// its own batch size; lanes 1 and 3 leave out every
						// fifth.
						lo, hi := l*n/lanes, (l+1)*n/lanes
						for first := lo; first < hi; first += batches[l] {
							m := min(batches[l], hi-first)
							var at []int
							var vals []float64
							for i := range m {
								row := int64(first + i)
								if l%2 == 1 && row%5 == 0 {
									continue
								}
								at = append(at, i)
								offered[l] = append(offered[l], row)
								for j := range p {
									vals = append(vals, valueOf(row, j))
								}
							}
							if l%2 == 1 {
								s.OfferAt(int64(first), at, vals)
							} else {
								s.OfferRun(int64(first), vals)
							}
						}
					})
				}
				wg.Wait()
				if b.t.Load() >= rareLimit {
					t.Fatalf("the shared bound %#x never fell below rareLimit", b.t.Load())
				}
				for _, o := range ss[1:] {
					if err := ss[0].Merge(o); err != nil {
						t.Fatal(err)
					}
				}
				var rows []int64
				for _, o := range offered {
					rows = append(rows, o...)
				}
				checkSample(t, ss[0], bruteForce(ss[0], rows))
			})
		}
	}
}

// runValues returns the values of the rows first, ..., first+m-1.
func runValues(first, m int) []float64 {
	vals := make([]float64, m)
	for i := range vals {
		vals[i] = valueOf(int64(first+i), 0)
	}
	return vals
}

// checkHistogram fails unless s's histogram, when it has one, counts
// exactly its buffered keys.
func checkHistogram(t *testing.T, s *Sample) {
	t.Helper()
	if s.hist == nil {
		return
	}
	want := make([]int32, len(s.hist))
	for _, k := range s.keys {
		want[k>>s.shift]++
	}
	if !slices.Equal(s.hist, want) {
		t.Fatalf("the histogram does not count the %d buffered keys", len(s.keys))
	}
}
