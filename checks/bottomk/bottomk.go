// Package bottomk keeps a uniform random sample of the rows of a stream
// by bottom-k sampling: every row gets a pseudo-random key computed from
// a seed and its data-row number, and the sample is the k rows of
// smallest key. Because the key depends on nothing else, the sample of a
// stream does not depend on how it was cut into batches, dealt to
// workers or merged: samples of disjoint rows merge into exactly the
// sample of their union.
package bottomk

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/assay-project/assay/checks/internal/order"
)

// Sample keeps the Size rows of smallest key among the rows offered, P
// values each. The key of data row r is Key(seed, r), a one-to-one
// function of r, so no two rows share a key and the sample is a function
// of the seed and of the set of rows offered. With keys that behave as
// independent uniform draws every subset of Size rows is equally likely
// to hold the smallest keys, so the sample is a uniform sample without
// replacement; samples of disjoint sets of rows merge into the sample of
// their union (Cohen & Kaplan 2007, "Summarizing data using bottom-k
// sketches", PODC, section 2).
//
// How it is kept. The rows whose key is at most a threshold (at first
// every row) are appended to a buffer, as their key and values (the row
// number is read back from the key), and counted in a histogram of their
// keys' leading bits; until the first selection the buffer holds every
// row offered, by row number, and no key is computed. When the buffer
// holds 1.25 Size rows (at least Size + 1024), the rows up to the end of the histogram's bucket that
// holds the key of rank Size are kept, in place, in the order they came,
// and the threshold drops to that bucket's end: one pass over the buffer.
// The first time, and whenever a bucket would keep too many, the key of
// rank Size is found exactly by radix selection (order.KeysOfRanks)
// instead. A row costs one key and one comparison, and after n rows about
// Size (1 + ln(n/Size)) have entered the buffer.
//
// The kept rows are in row order when the rows were offered in increasing
// order (as a lane of the engine offers them) and merged; otherwise they
// are put in row order before a selection, a merge or a read. So a sample
// that holds every row offered holds them in row order.
//
// A Sample is not safe for concurrent use; give each goroutine its own
// and merge them. Samples that are offered disjoint parts of one stream
// and merged at the end (the engine's lanes) may share a Bound, through
// which each drops the rows that no sample of the stream needs.
// Without it each lane keeps a full Size of candidates of its own.
type Sample struct {
	size, p int
	seed    uint64
	base    uint64 // mix(seed), the start of the keys' Weyl sequence
	seen    int64
	bound   int    // the buffer's length that triggers a selection
	limit   uint64 // rows of a larger key are not kept
	// hist counts the buffered rows by key >> shift, 1 << histBits
	// buckets that cover [0, limit]; nil before the first selection.
	hist  []int32
	shift uint
	// keys holds the buffered rows' keys, or while keyed is false (no
	// selection has run: the buffer holds every row offered) their row
	// numbers, whose keys are computed only if a selection comes.
	keys  []uint64
	keyed bool
	vals  []float64 // P values per buffered row
	// parts are the rows of merged samples, each in row order, not yet
	// merged with the buffer (see consolidate).
	parts []part
	// last is the largest row buffered or offered in a run; sorted says
	// that the buffered rows are in row order.
	last   int64
	sorted bool
	// shared is the bound shared with the samples of the other lanes of
	// a run, nil when alone; pub counts the rows kept since the last
	// publication by key >> sharedShift.
	shared *Bound
	pub    []int32
	unpub  int // rows offered since the last publication
	// fill is the buffer's length that triggers a selection and the most
	// it grows to: the bound, or for a shared sample that holds m <= Size
	// rows after dropping those above the shared bound, max(2m, m +
	// minSlack) (at most the bound), so that a lane holds about twice its
	// share of the candidates: four lanes over 10M rows held 2.1M rows
	// of a sample of 10⁶ instead of 5M (bottomk's BenchmarkLanes).
	fill int
}

// slack is the buffer beyond Size, as a share of it: the rows with a key
// below the threshold accumulate up to (1 + 1/slack) Size before a
// selection brings them back to about Size. Own choice by measurement
// (checks' BenchmarkSampledObserve, three samples of 10⁶ in each of four
// lanes over 10M rows; buffers 16 bytes a row): 1/2 took 65 ns of CPU a
// row and 288 MB, 1/4 74-86 ns and 240 MB, 1/8 85-98 ns and 216 MB.
// Lanes that share a Bound hold less (see fill).
const slack = 4

// minSlack is the least room beyond Size, so that small samples (a plot's
// 500 points) do not select every few rows.
const minSlack = 1024

// histBits is the width of the histogram's bucket index: 4,096 counts
// (16 KiB). With m rows buffered, a bucket holds about m/4096 of them,
// which is about how many rows beyond Size a selection by buckets keeps.
const histBits = 12

// New returns an empty sample of at most size rows of p values each,
// whose keys come from seed.
func New(size, p int, seed uint64) (*Sample, error) {
	if size < 1 {
		return nil, fmt.Errorf("sample size must be at least 1, got %d", size)
	}
	if p < 1 {
		return nil, fmt.Errorf("a sampled row needs at least 1 value, got %d", p)
	}
	return &Sample{size: size, p: p, seed: seed, base: mix(seed), bound: size + max(size/slack, minSlack),
		fill: size + max(size/slack, minSlack), limit: math.MaxUint64, sorted: true}, nil
}

// The constants of SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable
// pseudorandom number generators", OOPSLA, the SplitMix algorithm and its
// 64-bit mixing function, Stafford's 2011 "Mix13"), and the inverses modulo 2⁶⁴ of the odd
// multipliers, which undo the mixing.
const (
	gamma    = 0x9e3779b97f4a7c15 // the golden-ratio increment
	mul1     = 0xbf58476d1ce4e5b9
	mul2     = 0x94d049bb133111eb
	gammaInv = 0xf1de83e19937733d
	mul1Inv  = 0x96de1b173f119089
	mul2Inv  = 0x319642b2d24d8ec3
)

// mix is SplitMix64's output function, a bijection of the 64-bit words.
func mix(z uint64) uint64 {
	z = (z ^ z>>30) * mul1
	z = (z ^ z>>27) * mul2
	return z ^ z>>31
}

// unmix inverts mix: each xorshift x ^ x>>s (s >= 22) is undone by
// x ^ x>>s ^ x>>2s, each product by the inverse multiplier.
func unmix(z uint64) uint64 {
	z ^= z>>31 ^ z>>62
	z *= mul2Inv
	z ^= z>>27 ^ z>>54
	z *= mul1Inv
	return z ^ z>>30 ^ z>>60
}

// Key is the sampling key of data row row under seed: output number row
// of SplitMix64 seeded with mix(seed), mix(mix(seed) + row·γ). For a
// given seed it is one-to-one in row, and SplitMix64's outputs pass the
// BigCrush battery of statistical tests (Steele, Lea & Flood 2014, their
// tests with TestU01), so the keys of distinct rows behave as independent
// uniform draws.
func Key(seed uint64, row int64) uint64 { return mix(mix(seed) + uint64(row)*gamma) }

// key is row's key in this sample.
func (s *Sample) key(row int64) uint64 { return mix(s.base + uint64(row)*gamma) }

// rowOf is the row whose key is k.
func (s *Sample) rowOf(k uint64) int64 { return int64((unmix(k) - s.base) * gammaInv) }

// P is the number of values per row.
func (s *Sample) P() int { return s.p }

// Seen is the number of rows offered (merged samples included).
func (s *Sample) Seen() int64 { return s.seen }

// Complete reports whether the sample holds every row offered.
func (s *Sample) Complete() bool { return s.seen <= int64(s.size) }

// part is a run of rows in row order: their keys (or row numbers when not
// keyed) and values.
type part struct {
	keys  []uint64
	vals  []float64
	keyed bool
}

// rowAt is the row of a buffered entry e: e itself when the entries are
// row numbers, the row whose key is e when keyed.
func (s *Sample) rowAt(e uint64, keyed bool) int64 {
	if keyed {
		return s.rowOf(e)
	}
	return int64(e)
}

// Offer offers data row row with its P values (copied). Rows must not be
// offered twice.
func (s *Sample) Offer(row int64, vals []float64) {
	s.seen++
	s.offer(row, vals[:s.p])
}

// offer buffers row unless its key is above the threshold, which is
// the lowest of the samples merged, when it is known before their rows
// are consolidated.
func (s *Sample) offer(row int64, vals []float64) {
	if (s.keyed || len(s.parts) > 0) && s.key(row) > s.limit {
		return
	}
	s.keep(row, vals)
}

// OfferRun offers the rows first, first+1, ..., P values each from vals
// (row first+i holds vals[i*P : (i+1)*P]). The buffer is grown for
// reserveStep rows at a time, so the loop over the rows only computes keys
// and appends; for a shared sample that keeps every row (before its
// first selection), for the whole run at once.
//
// With one value a row the rows are taken in two stages, a chunk of up to
// reserveStep rows at a time: the first computes the keys and writes the
// rows of key at most the threshold to the buffer (keepRun, or
// keepRareRun when the threshold keeps few rows), the second counts the
// rows just written into the histograms (countRun). Counting only the
// kept rows, a few in ten once the threshold has fallen, costs less than
// counting every row with a weight of 0 or 1 in the loop that writes
// them; the buffer, the histograms and the threshold are the same after
// each chunk whichever loop took it.
func (s *Sample) OfferRun(first int64, vals []float64) {
	s.offerRows(first, nil, vals)
}

// OfferAt offers the rows first+at[i], P values each from vals (row
// first+at[i] holds vals[i*P : (i+1)*P]); at must be increasing. It takes
// them as OfferRun does (keepAtRun).
func (s *Sample) OfferAt(first int64, at []int, vals []float64) {
	s.offerRows(first, at, vals[:len(at)*s.p])
}

// offerRows offers the rows of a run: first+at[i], or first+i when at is
// nil, P values each from vals.
func (s *Sample) offerRows(first int64, at []int, vals []float64) {
	s.consolidate()
	n := len(vals) / s.p
	if n == 0 {
		return
	}
	rowOf := func(i int) int64 {
		if at == nil {
			return first + int64(i)
		}
		return first + int64(at[i])
	}
	s.seen += int64(n)
	if len(s.keys) > 0 && rowOf(0) <= s.last {
		s.sorted = false
	}
	s.last = rowOf(n - 1)
	if s.shared != nil {
		s.joinShared(n)
		defer s.published(n)
	}
	for i := 0; i < n; {
		if s.keyed || s.shared == nil {
			s.reserve(min(n-i, reserveStep))
		} else {
			s.reserve(n - i) // every row is kept: see reserve
		}
		keys, vs, hist := s.keys, s.vals, s.hist
		limit, shift := s.limit, s.shift
		pub := s.pub
		if s.shared != nil {
			limit = min(limit, s.shared.t.Load())
		}
		switch {
		case !s.keyed: // every row is kept, by its number
			m := min(n-i, cap(keys)-len(keys))
			if at == nil {
				for t := range m {
					keys = append(keys, uint64(first+int64(i+t)))
				}
			} else {
				for _, a := range at[i : i+m] {
					keys = append(keys, uint64(first+int64(a)))
				}
			}
			vs = append(vs, vals[i*s.p:(i+m)*s.p]...)
			i += m
		case s.p == 1:
			from := len(keys)
			var taken, m int
			room, vroom := keys[from:cap(keys)], vs[from:cap(keys)]
			switch {
			case at != nil:
				taken, m = s.keepAtRun(first, at[i:n], vals[i:n], limit, room, vroom)
			case limit < rareLimit:
				taken, m = s.keepRareRun(rowOf(i), vals[i:n], limit, room, vroom)
			default:
				taken, m = s.keepRun(rowOf(i), vals[i:n], limit, room, vroom)
			}
			keys, vs = keys[:from+m], vs[:from+m]
			countRun(keys[from:], hist, shift, pub)
			i += taken
		default:
			for ; i < n && len(keys) < cap(keys); i++ {
				if k := s.key(rowOf(i)); k <= limit {
					keys, vs = append(keys, k), append(vs, vals[i*s.p:(i+1)*s.p]...)
					if hist != nil {
						hist[k>>shift]++
					}
					if pub != nil {
						pub[k>>sharedShift]++
					}
				}
			}
		}
		s.keys, s.vals = keys, vs
		if len(s.keys) >= s.fill {
			s.reduce()
		}
	}
}

// rareLimit is the threshold below which OfferRun takes a chunk with a
// branch per row (keepRareRun): it keeps a row in 16 or fewer, so the
// branch is mispredicted about that often. Above it every row is written
// without a branch (keepRun), as a kept row at random would mispredict a
// branch too often. Own choice by measurement (BenchmarkKeepRun).
const rareLimit = 1 << 60

// keepRun writes the rows row, row+1, ... of values vals whose key is at
// most limit to keys and vs from place 0 on, in order, until it has
// taken every row or filled keys (vs is as long), and returns how many
// rows it took and how many it wrote. Without branches: every row is
// written at place m, which advances past the kept ones only.
func (s *Sample) keepRun(row int64, vals []float64, limit uint64, keys []uint64, vs []float64) (taken, kept int) {
	vs = vs[:len(keys)]
	z, m, i := s.base+uint64(row)*gamma, 0, 0
	for ; i < len(vals) && m < len(keys); i++ {
		m = put(keys, vs, m, mix(z), vals[i], limit)
		z += gamma
	}
	return i, m
}

// put writes the row of key k and value v at place m, without a branch,
// and returns the next place: m+1 when k is at most limit (the row is
// kept), else m (the next row overwrites it).
func put(keys []uint64, vs []float64, m int, k uint64, v float64, limit uint64) int {
	keep := 0
	if k <= limit {
		keep = 1
	}
	keys[m], vs[m] = k, v
	return m + keep
}

// keepRareRun is keepRun with a branch per row, for a limit that keeps
// few rows.
func (s *Sample) keepRareRun(row int64, vals []float64, limit uint64, keys []uint64, vs []float64) (taken, kept int) {
	vs = vs[:len(keys)]
	z, m, i := s.base+uint64(row)*gamma, 0, 0
	for ; i < len(vals) && m < len(keys); i++ {
		if k := mix(z); k <= limit {
			keys[m], vs[m] = k, vals[i]
			m++
		}
		z += gamma
	}
	return i, m
}

// keepAtRun is keepRun for the rows first+at[0], first+at[1], ...: every
// row is written, without a branch, and its key computed from its number.
func (s *Sample) keepAtRun(first int64, at []int, vals []float64, limit uint64, keys []uint64, vs []float64) (taken, kept int) {
	vs = vs[:len(keys)]
	vals = vals[:len(at)]
	m, i := 0, 0
	for ; i < len(at) && m < len(keys); i++ {
		m = put(keys, vs, m, s.key(first+int64(at[i])), vals[i], limit)
	}
	return i, m
}

// countRun counts the keys of rows just kept into the histogram of the
// buffer (when hist is not nil: once a selection has run) and of the
// rows to publish to a shared bound (when pub is not nil).
func countRun(keys []uint64, hist []int32, shift uint, pub []int32) {
	switch {
	case hist != nil && pub != nil:
		for _, k := range keys {
			hist[k>>shift]++
			pub[k>>sharedShift]++
		}
	case hist != nil:
		for _, k := range keys {
			hist[k>>shift]++
		}
	case pub != nil:
		for _, k := range keys {
			pub[k>>sharedShift]++
		}
	}
}

// keep buffers a row, after consolidating the merged parts, unless its
// key is above the threshold.
func (s *Sample) keep(row int64, vals []float64) {
	s.consolidate()
	e, k := uint64(row), uint64(0)
	if s.keyed {
		if k = s.key(row); k > s.limit {
			return
		}
		e = k
	}
	s.note(row)
	s.keys = append(s.keys, e)
	s.vals = append(s.vals, vals...)
	s.counted(k)
}

// note records whether row keeps the buffered rows ascending, and makes
// room for it.
func (s *Sample) note(row int64) {
	if len(s.keys) > 0 && row <= s.last {
		s.sorted = false
	}
	s.last = max(s.last, row)
	s.reserve(1)
}

// reserveStep is the most rows OfferRun makes room for at a time, so
// that a buffer grows with what it keeps, not with the length of a run.
const reserveStep = 4096

// reserve makes room for up to n more rows, growing the buffer eightfold
// (4,096, 32,768, 262,144 rows, then its fill), never beyond its fill,
// so a full buffer holds no spare capacity. Doubling copied the rows
// about once more in all: at 10M rows, three samples of 10⁶ in four lanes
// spent 1.1 s of CPU in those copies (whole-run profile), 0.18 s growing
// eightfold. The price: a lane that keeps more than 262,144 rows holds a
// buffer of its fill (the bound unless shared).
//
// A shared sample that keeps every row asks for a whole run, so that a
// lane of the engine (runs of 65,536 rows) holds 65,536 rows, then
// 524,288: as many as its fill of twice its rows when the stream passes
// Size, with four lanes of a sample of 10⁶, so it is not grown again
// then. BenchmarkLanes (shared): 76 -> 55 MB allocated and 63 -> 45
// allocations a run, about 10% less CPU. The price: a lane that ends
// with 65,537 to 262,144 rows, below Size, holds 524,288 where growing
// from 4,096 rows held 262,144 (checks' BenchmarkSampledObserve at 1M
// rows, three rules of 250,000 rows a lane: 114 MB allocated instead of
// 88 MB).
func (s *Sample) reserve(n int) {
	if cap(s.keys)-len(s.keys) >= n || cap(s.keys) >= s.fill {
		return
	}
	c := min(max(8*cap(s.keys), len(s.keys)+n, 64), s.fill)
	keys, vals := make([]uint64, len(s.keys), c), make([]float64, len(s.vals), c*s.p)
	copy(keys, s.keys)
	copy(vals, s.vals)
	s.keys, s.vals = keys, vals
}

// counted counts a row of key k just buffered, and reduces the buffer
// when it is full.
func (s *Sample) counted(k uint64) {
	if s.hist != nil {
		s.hist[k>>s.shift]++
	}
	if len(s.keys) >= s.fill {
		s.reduce()
	}
}

// setLimit sets the threshold, and the shift that maps the keys up to it
// to the histogram's buckets.
func (s *Sample) setLimit(k uint64) {
	s.limit = k
	s.shift = uint(max(0, bits.Len64(k)-histBits))
}

// reduce brings a full buffer back to about Size rows, in place and in
// row order, and lowers the threshold. The histogram says in which bucket
// the key of rank Size lies; the rows up to the end of that bucket are
// kept and the threshold drops to it. When that would keep more than half
// the slack (a first selection, or keys bunched in a bucket), the exact
// selection runs instead.
func (s *Sample) reduce() {
	s.order()
	if s.shared != nil && s.keyed {
		if t := s.shared.t.Load(); t < s.limit {
			s.drop(t)
		}
		if m := len(s.keys); m <= s.size {
			s.fill = min(s.bound, max(2*m, m+minSlack))
			return
		}
	}
	s.fill = s.bound
	if s.hist == nil {
		s.exact()
		return
	}
	cum, b := 0, 0
	for ; cum+int(s.hist[b]) < s.size; b++ {
		cum += int(s.hist[b])
	}
	if cum+int(s.hist[b]) > s.size+(s.bound-s.size)/2 {
		s.exact()
		return
	}
	s.drop(min(uint64(b)<<s.shift|(1<<s.shift-1), s.limit))
}

// exact keeps exactly the Size rows of smallest key (more than Size are
// buffered), in place and in row order, and lowers the threshold to the
// largest kept key.
func (s *Sample) exact() {
	s.toKeys()
	keys := s.keys
	k := order.KeysOfRanks(len(keys), []int{s.size - 1}, func(fn func([]uint64)) { fn(keys) })[0]
	s.drop(k)
}

// toKeys turns the buffer's row numbers into their keys, in place.
func (s *Sample) toKeys() {
	if !s.keyed {
		keysOfRows(s, s.keys)
		s.keyed = true
	}
}

// keysOfRows replaces the row numbers in es by their keys.
func keysOfRows(s *Sample, es []uint64) {
	for i, e := range es {
		es[i] = s.key(int64(e))
	}
}

// drop keeps the buffered rows of key at most k, in place and in order,
// lowers the threshold to k and counts the kept rows into the histogram
// afresh.
func (s *Sample) drop(k uint64) {
	s.setLimit(k)
	if s.hist == nil {
		s.hist = make([]int32, 1<<histBits)
	}
	clear(s.hist)
	p, n := s.p, 0
	keys, vals, hist, shift := s.keys, s.vals, s.hist, s.shift
	if p == 1 {
		// Without branches, by put: every row is written at place n,
		// which advances only past the kept ones (a fifth of the rows, at
		// random, are dropped: a branch would be mispredicted that often);
		// the kept ones are counted after, as in OfferRun.
		for i, key := range keys {
			n = put(keys, vals, n, key, vals[i], k)
		}
		countRun(keys[:n], hist, shift, nil)
	} else {
		for i, key := range keys {
			if key > k {
				continue
			}
			hist[key>>shift]++
			keys[n] = key
			copy(vals[n*p:(n+1)*p], vals[i*p:(i+1)*p])
			n++
		}
	}
	s.keys, s.vals = keys[:n], vals[:n*p]
}

// order puts the buffered rows in row order, when they are not.
func (s *Sample) order() {
	if s.sorted {
		return
	}
	rows := make([]int64, len(s.keys))
	idx := make([]int, len(s.keys))
	for i, e := range s.keys {
		rows[i], idx[i] = s.rowAt(e, s.keyed), i
	}
	slices.SortFunc(idx, func(a, b int) int { return cmp.Compare(rows[a], rows[b]) })
	keys := make([]uint64, len(s.keys), cap(s.keys))
	vals := make([]float64, len(s.vals), cap(s.vals))
	for to, from := range idx {
		keys[to] = s.keys[from]
		copy(vals[to*s.p:(to+1)*s.p], s.vals[from*s.p:(from+1)*s.p])
	}
	s.keys, s.vals, s.sorted = keys, vals, true
	if len(rows) > 0 {
		s.last = rows[idx[len(idx)-1]]
	}
}

// Merge folds o, a sample of rows disjoint from s's, into s, which then
// keeps the Size rows of smallest key of both, in row order. It takes
// over o's rows and leaves o empty. The rows are not moved yet: the
// samples merged are kept as parts until the sample is read, offered
// more rows or holds more than four times its bound, and then merged in
// one pass (consolidate), so merging the engine's lanes one after the
// other copies the rows once.
func (s *Sample) Merge(o *Sample) error {
	if o.size != s.size || o.p != s.p || o.seed != s.seed {
		return fmt.Errorf("cannot merge a sample of %d rows of %d values (seed %d) into one of %d rows of %d (seed %d)",
			o.size, o.p, o.seed, s.size, s.p, s.seed)
	}
	o.order()
	s.parts = append(s.parts, o.parts...)
	if len(o.keys) > 0 {
		s.parts = append(s.parts, part{o.keys, o.vals, o.keyed})
	}
	s.seen += o.seen
	s.setLimit(min(s.limit, o.limit))
	*o = Sample{size: o.size, p: o.p, seed: o.seed, base: o.base, bound: o.bound, fill: o.bound, limit: math.MaxUint64, sorted: true}
	held := len(s.keys)
	for _, pt := range s.parts {
		held += len(pt.keys)
	}
	if held > 4*s.bound {
		s.consolidate()
	}
	return nil
}

// consolidate merges the parts and the buffer into one buffer of the rows
// of smallest key, at most Size of them, in row order, in one pass: the
// key of rank Size is found by radix selection over all the parts, then
// the parts are merged by row number, a run at a time (the lanes of the
// engine hold whole batches, so the runs of one part between rows of
// another are long).
func (s *Sample) consolidate() {
	if len(s.parts) == 0 {
		return
	}
	s.order()
	parts := append(s.parts, part{s.keys, s.vals, s.keyed})
	n, keyed := 0, false
	for _, pt := range parts {
		n += len(pt.keys)
		keyed = keyed || pt.keyed
	}
	if keyed = keyed || n > s.size; keyed {
		for i := range parts {
			if !parts[i].keyed {
				keysOfRows(s, parts[i].keys)
				parts[i].keyed = true
			}
		}
	}
	k := uint64(math.MaxUint64)
	if n > s.size {
		k = order.KeysOfRanks(n, []int{s.size - 1}, func(fn func([]uint64)) {
			for _, pt := range parts {
				fn(pt.keys)
			}
		})[0]
		s.setLimit(min(s.limit, k))
		n = s.size
	}
	keys, vals := make([]uint64, n), make([]float64, n*s.p)
	at := make([]int, len(parts))
	for w := 0; ; {
		// The part whose next row comes first, and the next row of the
		// others.
		first, next := -1, int64(math.MaxInt64)
		var firstRow int64
		for i, pt := range parts {
			if at[i] == len(pt.keys) {
				continue
			}
			switch r := s.rowAt(pt.keys[at[i]], keyed); {
			case first < 0 || r < firstRow:
				if first >= 0 {
					next = min(next, firstRow)
				}
				first, firstRow = i, r
			default:
				next = min(next, r)
			}
		}
		if first < 0 {
			break
		}
		pt := parts[first]
		e := at[first] + 1
		for e < len(pt.keys) && s.rowAt(pt.keys[e], keyed) < next {
			e++
		}
		w = s.take(pt.keys, pt.vals, at[first], e, k, keys, vals, w)
		at[first] = e
	}
	s.keys, s.vals, s.parts, s.keyed = keys, vals, nil, keyed
	if s.hist != nil {
		clear(s.hist)
		for _, key := range keys {
			s.hist[key>>s.shift]++
		}
	}
	if len(keys) > 0 {
		s.last = s.rowAt(keys[len(keys)-1], keyed)
	}
}

// take writes the rows from..to-1 of (ks, vs) whose key is at most k to
// (keys, vals) from place n on, and returns the next place.
func (s *Sample) take(ks []uint64, vs []float64, from, to int, k uint64, keys []uint64, vals []float64, n int) int {
	p := s.p
	if k == math.MaxUint64 {
		copy(keys[n:], ks[from:to])
		copy(vals[n*p:], vs[from*p:to*p])
		return n + to - from
	}
	for t := from; t < to; t++ {
		if ks[t] > k {
			continue
		}
		keys[n] = ks[t]
		if p == 1 {
			vals[n] = vs[t]
		} else {
			copy(vals[n*p:(n+1)*p], vs[t*p:(t+1)*p])
		}
		n++
	}
	return n
}

// trim brings the sample to its final rows: at most Size, in row order.
func (s *Sample) trim() {
	s.consolidate()
	s.order()
	if len(s.keys) > s.size {
		s.exact()
	}
}

// Len is the number of rows the sample holds: min(Seen, Size).
func (s *Sample) Len() int {
	s.trim()
	return len(s.keys)
}

// Rows returns the data-row numbers of the sampled rows, ascending, in a
// new slice.
func (s *Sample) Rows() []int64 {
	s.trim()
	rows := make([]int64, len(s.keys))
	for i, e := range s.keys {
		rows[i] = s.rowAt(e, s.keyed)
	}
	return rows
}

// Keys returns the keys of the sampled rows, in row order; the caller
// must not change them.
func (s *Sample) Keys() []uint64 {
	s.trim()
	if s.keyed {
		return s.keys
	}
	keys := slices.Clone(s.keys)
	keysOfRows(s, keys)
	return keys
}

// Values returns value j (0 <= j < P) of every sampled row, in row order,
// as a new slice.
func (s *Sample) Values(j int) []float64 {
	s.trim()
	out := make([]float64, len(s.keys))
	for i := range out {
		out[i] = s.vals[i*s.p+j]
	}
	return out
}

// Row returns the P values of the i-th sampled row in row order; the
// caller must not change them.
func (s *Sample) Row(i int) []float64 {
	s.trim()
	return s.vals[i*s.p : (i+1)*s.p]
}
