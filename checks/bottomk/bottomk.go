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
	"math/rand/v2"
	"slices"

	"github.com/assay-project/assay/checks/internal/order"
)

// Sample keeps the Size rows of smallest key among the rows offered, P
// values each. The key of data row r is Key(seed, r); equal keys are
// ordered by row number, so the sample is a function of the seed and of
// the set of rows offered. With independent uniform keys every subset of
// Size rows is equally likely to hold the smallest keys, so the sample is
// a uniform sample without replacement; samples of disjoint sets of rows
// merge into the sample of their union (Cohen & Kaplan 2007, "Summarizing
// data using bottom-k sketches", PODC, sections 2 and 3).
//
// How it is kept. The rows whose key is at most a threshold (at first
// every row) are appended to a buffer; when the buffer holds more than
// about 1.25 Size rows, the key of rank Size is found by radix selection
// (order.KeysOfRanks) and only the rows up to it are kept, in place, in
// the order they came; the threshold drops to that key. A row costs one
// key and one comparison, and after n rows about Size (1 + ln(n/Size))
// have entered the buffer. Keys are not stored: each selection computes
// them again from the rows.
//
// The kept rows are in row order when the rows were offered in increasing
// order (as a lane of the engine offers them) and merged; otherwise they
// are put in row order before a selection, a merge or a read. So a sample
// that holds every row offered holds them in row order.
//
// A Sample is not safe for concurrent use; give each goroutine its own
// and merge them.
type Sample struct {
	size, p int
	seed    uint64
	seen    int64
	bound   int    // the buffer's length that triggers a selection
	limit   uint64 // rows of a larger key are not kept
	rows    []int64
	vals    []float64 // p values per kept row
	// sorted says that rows is ascending.
	sorted bool
	// coarse drops the low bits of every key (0 but in tests, which use
	// it to make ties).
	coarse uint
}

// slack is the buffer beyond Size, as a share of it: the rows with a key
// below the threshold accumulate up to (1 + 1/slack) Size before a
// selection brings them back to Size. A quarter (own measurement,
// BenchmarkOffer: a half costs 40% more memory for a few percent less
// time).
const slack = 4

// minSlack is the least room beyond Size, so that small samples (a plot's
// 500 points) do not select every few rows.
const minSlack = 1024

// New returns an empty sample of at most size rows of p values each,
// whose keys come from seed.
func New(size, p int, seed uint64) (*Sample, error) {
	if size < 1 {
		return nil, fmt.Errorf("sample size must be at least 1, got %d", size)
	}
	if p < 1 {
		return nil, fmt.Errorf("a sampled row needs at least 1 value, got %d", p)
	}
	return &Sample{size: size, p: p, seed: seed, bound: size + max(size/slack, minSlack), limit: math.MaxUint64, sorted: true}, nil
}

// Key is the sampling key of data row row under seed: the first output of
// the PCG generator (math/rand/v2, O'Neill 2014, "PCG: a family of simple
// fast space-efficient statistically good algorithms for random number
// generation", with the DXSM output function) seeded with seed and the
// row number, a well-mixed function of the two.
func Key(seed uint64, row int64) uint64 {
	var g rand.PCG
	g.Seed(seed, uint64(row))
	return g.Uint64()
}

// key is row's key in this sample.
func (s *Sample) key(row int64) uint64 { return Key(s.seed, row) >> s.coarse }

// Size is the most rows the sample keeps.
func (s *Sample) Size() int { return s.size }

// P is the number of values per row.
func (s *Sample) P() int { return s.p }

// Seed is the seed of the keys.
func (s *Sample) Seed() uint64 { return s.seed }

// Seen is the number of rows offered (merged samples included).
func (s *Sample) Seen() int64 { return s.seen }

// Complete reports whether the sample holds every row offered.
func (s *Sample) Complete() bool { return s.seen <= int64(s.size) }

// Offer offers data row row with its P values (copied).
func (s *Sample) Offer(row int64, vals []float64) {
	s.seen++
	if s.key(row) > s.limit {
		return
	}
	s.keep(row, vals[:s.p])
}

// OfferRun offers the rows first, first+1, ..., P values each from vals
// (row first+i holds vals[i*P : (i+1)*P]).
func (s *Sample) OfferRun(first int64, vals []float64) {
	n := len(vals) / s.p
	s.seen += int64(n)
	if s.p == 1 {
		for i, v := range vals {
			row := first + int64(i)
			if s.key(row) <= s.limit {
				s.keep1(row, v)
			}
		}
		return
	}
	for i := range n {
		row := first + int64(i)
		if s.key(row) <= s.limit {
			s.keep(row, vals[i*s.p:(i+1)*s.p])
		}
	}
}

// OfferAt offers the rows first+at[i], P values each from vals (row
// first+at[i] holds vals[i*P : (i+1)*P]).
func (s *Sample) OfferAt(first int64, at []int, vals []float64) {
	s.seen += int64(len(at))
	for i, k := range at {
		row := first + int64(k)
		if s.key(row) <= s.limit {
			s.keep(row, vals[i*s.p:(i+1)*s.p])
		}
	}
}

// keep1 appends a row of one value to the buffer.
func (s *Sample) keep1(row int64, v float64) {
	s.note(row)
	s.rows = append(s.rows, row)
	s.vals = append(s.vals, v)
	if len(s.rows) >= s.bound {
		s.reduce()
	}
}

// keep appends a row to the buffer.
func (s *Sample) keep(row int64, vals []float64) {
	s.note(row)
	s.rows = append(s.rows, row)
	s.vals = append(s.vals, vals...)
	if len(s.rows) >= s.bound {
		s.reduce()
	}
}

// note makes room for one more row, growing the buffer by doubling up to
// its bound (never beyond, so a full buffer holds no spare capacity), and
// records whether row keeps the rows ascending.
func (s *Sample) note(row int64) {
	if n := len(s.rows); n > 0 && row <= s.rows[n-1] {
		s.sorted = false
	}
	if len(s.rows) < cap(s.rows) {
		return
	}
	c := min(max(2*cap(s.rows), 64), s.bound)
	s.rows = slices.Grow(s.rows, c-len(s.rows))
	s.vals = slices.Grow(s.vals, (c-len(s.rows))*s.p)
}

// reduce keeps the Size rows of smallest key, in place and in row order,
// and lowers the threshold to the largest kept key.
func (s *Sample) reduce() {
	s.order()
	if len(s.rows) <= s.size {
		return
	}
	k, ties := s.cut(s.rows, nil)
	n := s.filter(s.rows, s.vals, nil, nil, k, ties, s.rows, s.vals)
	s.rows, s.vals = s.rows[:n], s.vals[:n*s.p]
	s.limit = k
}

// cut returns the key of rank Size among the rows of a and b (together
// more than Size, disjoint), and how many rows of that key the sample
// keeps: all of them (-1) unless the key of rank Size+1 is the same (a
// tie, which 64-bit keys make rare), when only the first so many of them
// by row number belong to the sample.
func (s *Sample) cut(a, b []int64) (uint64, int) {
	n := len(a) + len(b)
	ks := order.KeysOfRanks(n, []int{s.size - 1, s.size}, s.scan(a, b))
	if ks[1] != ks[0] {
		return ks[0], -1
	}
	below := 0
	s.scan(a, b)(func(keys []uint64) {
		for _, k := range keys {
			if k < ks[0] {
				below++
			}
		}
	})
	return ks[0], s.size - below
}

// scan yields the keys of the rows of a, then b, a block at a time.
func (s *Sample) scan(a, b []int64) func(func([]uint64)) {
	return func(fn func([]uint64)) {
		var buf [1024]uint64
		for _, rows := range [][]int64{a, b} {
			for len(rows) > 0 {
				m := min(len(rows), len(buf))
				for i, r := range rows[:m] {
					buf[i] = s.key(r)
				}
				fn(buf[:m])
				rows = rows[m:]
			}
		}
	}
}

// filter writes to rows and vals, from the start, the rows of (ra, va)
// and (rb, vb) whose key is below k, and of those of key k the first ties
// by row number (all of them when ties is negative), merging the two
// ascending lists into one; it returns how many rows it wrote. The output
// may be ra and va themselves when rb is empty (it never overtakes what
// it reads).
func (s *Sample) filter(ra []int64, va []float64, rb []int64, vb []float64, k uint64, ties int, rows []int64, vals []float64) int {
	n, i, j := 0, 0, 0
	p := s.p
	for i < len(ra) || j < len(rb) {
		var row int64
		var v []float64
		if j == len(rb) || i < len(ra) && ra[i] < rb[j] {
			row, v = ra[i], va[i*p:(i+1)*p]
			i++
		} else {
			row, v = rb[j], vb[j*p:(j+1)*p]
			j++
		}
		key := s.key(row)
		if key > k || key == k && ties == 0 {
			continue
		}
		if key == k && ties > 0 {
			ties--
		}
		rows[n] = row
		copy(vals[n*p:(n+1)*p], v)
		n++
	}
	return n
}

// order puts the kept rows in row order, when they are not.
func (s *Sample) order() {
	if s.sorted {
		return
	}
	idx := make([]int, len(s.rows))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(s.rows[a], s.rows[b]) })
	rows := make([]int64, len(s.rows), cap(s.rows))
	vals := make([]float64, len(s.vals), cap(s.vals))
	for to, from := range idx {
		rows[to] = s.rows[from]
		copy(vals[to*s.p:(to+1)*s.p], s.vals[from*s.p:(from+1)*s.p])
	}
	s.rows, s.vals, s.sorted = rows, vals, true
}

// Merge folds o, a sample of rows disjoint from s's, into s, leaving o
// unchanged: s then keeps the Size rows of smallest key of both, in row
// order.
func (s *Sample) Merge(o *Sample) error {
	if o.size != s.size || o.p != s.p || o.seed != s.seed || o.coarse != s.coarse {
		return fmt.Errorf("cannot merge a sample of %d rows of %d values (seed %d) into one of %d rows of %d (seed %d)",
			o.size, o.p, o.seed, s.size, s.p, s.seed)
	}
	s.order()
	if !o.sorted {
		c := o.clone()
		c.order()
		o = c
	}
	s.seen += o.seen
	s.limit = min(s.limit, o.limit)
	n := len(s.rows) + len(o.rows)
	if n == len(s.rows) {
		return nil
	}
	k, ties := uint64(math.MaxUint64), -1
	if n > s.size {
		k, ties = s.cut(s.rows, o.rows)
		s.limit = k
		n = s.size
	}
	rows, vals := make([]int64, n), make([]float64, n*s.p)
	s.filter(s.rows, s.vals, o.rows, o.vals, k, ties, rows, vals)
	s.rows, s.vals = rows, vals
	return nil
}

// clone returns a copy of s that shares no memory with it.
func (s *Sample) clone() *Sample {
	c := *s
	c.rows, c.vals = slices.Clone(s.rows), slices.Clone(s.vals)
	return &c
}

// trim brings the sample to its final rows: at most Size, in row order.
func (s *Sample) trim() {
	s.order()
	if len(s.rows) > s.size {
		s.reduce()
	}
}

// Len is the number of rows the sample holds: min(Seen, Size).
func (s *Sample) Len() int {
	s.trim()
	return len(s.rows)
}

// Rows returns the data-row numbers of the sampled rows, ascending; the
// caller must not change them.
func (s *Sample) Rows() []int64 {
	s.trim()
	return s.rows
}

// Values returns value j (0 <= j < P) of every sampled row, in row order,
// as a new slice.
func (s *Sample) Values(j int) []float64 {
	s.trim()
	out := make([]float64, len(s.rows))
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
