package bottomk

import (
	"math"
	"sync/atomic"
)

// sharedShift maps a key to its bucket of a Bound: its 12 leading bits.
const sharedShift = 64 - histBits

// Bound is a threshold shared by the samples that are offered disjoint
// parts of one stream of rows and merged into one at the end (the lanes
// of a run). Each sample counts the rows it keeps by the 12 leading bits
// of their keys and, every few thousand rows, adds its counts to the
// bound's and lowers the bound to the end of the first bucket at which
// the counts of all the samples reach Size. A sample then keeps no row of
// key above the bound, so the lanes together hold about the candidates
// of one sample of the whole stream, Size (1 + ln(n/Size)) after n rows,
// instead of a full sample each.
//
// Why the merged sample is unchanged. Let U be the rows offered to the
// samples sharing the bound. A count is a row of U kept when offered
// (each row is offered once, to one sample, and counted once), so when
// the counts of buckets 0..i reach Size, at least Size distinct rows of
// U have a key at most t, the end of bucket i. A row of key above t has
// at least Size rows of U of smaller key (no two rows share a key: Key
// is one-to-one in the row), so it is not in the sample of U, and
// dropping it changes nothing that the merge keeps. The counts are read
// while other samples add theirs: a count read is at most the true one,
// so a bound from any snapshot is at least a true one, and the bound only
// falls (compare-and-swap). So the merged sample is the same whatever the
// timing; only what each lane holds on the way depends on it. A Bound is
// safe for concurrent use; it must be shared by no sample whose rows are
// not merged with the others (another run's).
type Bound struct {
	size int
	seen atomic.Int64
	t    atomic.Uint64
	hist [1 << histBits]atomic.Int64
}

// NewBound returns a bound for samples of size rows.
func NewBound(size int) *Bound {
	b := &Bound{size: size}
	b.t.Store(math.MaxUint64)
	return b
}

// Share makes s drop the rows above b, which the other samples of the
// stream share; every sample sharing b must be merged into one.
func (s *Sample) Share(b *Bound) {
	s.shared = b
	s.pub = make([]int32, 1<<histBits)
}

// joinShared adds n rows to the stream's count and, once the stream has
// more rows than Size, computes the keys of the buffered rows and counts
// them.
func (s *Sample) joinShared(n int) {
	if total := s.shared.seen.Add(int64(n)); s.keyed || total <= int64(s.size) {
		return
	}
	s.toKeys()
	for _, k := range s.keys {
		s.pub[k>>sharedShift]++
	}
	m := len(s.keys)
	s.fill = min(s.bound, max(2*m, m+minSlack))
}

// publishRows is the most rows a shared sample is offered between two
// publications of its counts, so that a publication (two passes over
// 4,096 counts) costs under a nanosecond a row however short the runs.
// A sample publishes every Size rows when that is less (at least every
// minSlack rows).
const publishRows = 1 << 14

// published notes n more rows offered, and publishes the counts every
// min(publishRows, max(Size, minSlack)) rows.
func (s *Sample) published(n int) {
	if s.unpub += n; s.unpub >= min(publishRows, max(s.size, minSlack)) {
		s.publish()
		s.unpub = 0
	}
}

// publish adds the counts of the rows kept since the last publication to
// the bound's, and lowers the bound to the end of the bucket at which the
// counts reach Size.
func (s *Sample) publish() {
	b := s.shared
	for i, c := range s.pub {
		if c != 0 {
			b.hist[i].Add(int64(c))
			s.pub[i] = 0
		}
	}
	cum := int64(0)
	for i := range b.hist {
		if cum += b.hist[i].Load(); cum >= int64(b.size) {
			t := uint64(i)<<sharedShift | (1<<sharedShift - 1)
			for {
				old := b.t.Load()
				if t >= old || b.t.CompareAndSwap(old, t) {
					return
				}
			}
		}
	}
}
