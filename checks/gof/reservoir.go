package gof

import (
	"cmp"
	"fmt"
	"iter"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// Reservoir keeps a uniform random sample of at most Size values from a
// stream of unknown length, in O(Size) memory: after n values, every subset
// of min(n, Size) of them is equally likely to be the sample. It uses
// Algorithm L of Li, K.-H. (1994), "Reservoir-sampling algorithms of time
// complexity O(n(1 + log(N/n)))", ACM TOMS 20(4):481-493, which improves
// Vitter's (1985) Algorithm R ("Random sampling with a reservoir", ACM TOMS
// 11(1):37-57) by drawing how many values to skip instead of one random
// number per value: O(Size (1 + log(n/Size))) random draws in all.
//
// Reservoirs filled from disjoint shards merge into a uniform sample of
// the union (Merge). Everything is driven by the generator seeded in
// NewReservoir, so the sample repeats for the same seed and input order.
// Give each shard its own seed: reservoirs with equal seeds pick the same
// positions, and their samples are then not independent. A Reservoir is not
// safe for concurrent use; give each goroutine its own and merge them.
type Reservoir struct {
	size  int
	seen  int64
	items chunks
	rng   *rand.Rand
	// Algorithm L state once full: w is the largest of the size smallest
	// uniform keys of the values seen, next the 1-based position of the
	// next value to enter.
	w    float64
	next int64
	// runs says where in the stream the values came from while the
	// reservoir holds every value it was offered (items is then the
	// concatenation of the runs); Merge orders merged values by it.
	runs []run
	// pending holds up to replaceBlock replacements drawn by AddAllAt and
	// not yet written (see flush); it is empty between calls.
	pending []replacement
}

// run is a stretch of values that entered a reservoir together, in
// stream order, starting at position pos of the stream.
type run struct {
	pos int64
	n   int
}

// NewReservoir returns an empty reservoir of capacity size (at least 1)
// whose random choices come from PCG seeded with seed.
func NewReservoir(size int, seed uint64) (*Reservoir, error) {
	if size < 1 {
		return nil, fmt.Errorf("reservoir size must be at least 1, got %d", size)
	}
	return &Reservoir{
		size: size,
		rng:  rand.New(rand.NewPCG(seed, 0x7265736572766f69)),
	}, nil
}

// Size is the reservoir's capacity.
func (r *Reservoir) Size() int { return r.size }

// Seen is the number of values offered so far (merged reservoirs included).
func (r *Reservoir) Seen() int64 { return r.seen }

// Complete reports whether the reservoir holds every value seen, that is,
// whether no sampling has happened.
func (r *Reservoir) Complete() bool { return r.seen <= int64(r.size) }

// Values returns a copy of the sample: min(Seen, Size) values, in no
// particular order.
func (r *Reservoir) Values() []float64 { return r.items.all() }

// Add offers one value.
func (r *Reservoir) Add(v float64) {
	r.AddAll([]float64{v})
}

// AddAll offers the values in order, as following the values offered
// before. Once the reservoir is full, runs of values that Algorithm L
// skips cost nothing.
func (r *Reservoir) AddAll(vs []float64) {
	pos := int64(0)
	if n := len(r.runs); n > 0 {
		pos = r.runs[n-1].pos + int64(r.runs[n-1].n)
	}
	r.AddAllAt(pos, vs)
}

// AddAllAt offers the values in order, saying that they begin at position
// pos of the stream (a row number): the values of one call come from
// positions pos on, before the next call's and disjoint from another
// reservoir's. Positions matter only while a reservoir holds every value
// it was offered: Merge then puts the values of both in the order of
// their positions, so reservoirs fed interleaved parts of a stream
// (batches 0, 2, 4 and 1, 3, 5) merge into what one reservoir fed the
// whole stream would hold, in the same order. Sampling never depends on
// positions.
func (r *Reservoir) AddAllAt(pos int64, vs []float64) {
	if r.items.n < r.size && len(vs) > 0 {
		r.note(pos, min(r.size-r.items.n, len(vs)))
	}
	for len(vs) > 0 {
		if r.items.n < r.size {
			take := min(r.size-r.items.n, len(vs))
			r.items.add(vs[:take], r.size)
			r.seen += int64(take)
			vs = vs[take:]
			if r.items.n == r.size {
				r.resume()
			}
			continue
		}
		// Skip to the value at position next, if it is in this batch.
		gap := r.next - r.seen - 1
		if gap >= int64(len(vs)) {
			r.seen += int64(len(vs))
			break
		}
		r.seen += gap + 1
		if len(r.pending) == cap(r.pending) {
			r.flush()
		}
		r.pending = append(r.pending, replacement{r.rng.IntN(r.size), vs[gap]})
		vs = vs[gap+1:]
		r.w *= math.Exp(math.Log(r.uniform()) / float64(r.size))
		r.skip()
	}
	r.flush()
}

// flush writes the pending replacements, in the order drawn. They are
// written a block at a time because they land at random places of the
// sample (8 MB at 10⁶ values): in a tight loop the writes overlap their
// memory accesses.
func (r *Reservoir) flush() {
	if len(r.pending) == 0 {
		return
	}
	r.items.apply(r.pending)
	r.pending = r.pending[:0]
}

// note records that n values from position pos entered the reservoir,
// extending the last run when they continue it.
func (r *Reservoir) note(pos int64, n int) {
	if k := len(r.runs); k > 0 && r.runs[k-1].pos+int64(r.runs[k-1].n) == pos {
		r.runs[k-1].n += n
		return
	}
	r.runs = append(r.runs, run{pos: pos, n: n})
}

// uniform returns a draw in (0, 1].
func (r *Reservoir) uniform() float64 { return 1 - r.rng.Float64() }

// skip sets next past a geometric number of values: each value enters
// with probability w, so the gap is floor(ln U / ln(1 - w)).
func (r *Reservoir) skip() {
	g := math.Floor(math.Log(r.uniform()) / math.Log1p(-r.w))
	if !(g < 1<<62) || r.seen > math.MaxInt64-(1<<62) {
		r.next = math.MaxInt64
		return
	}
	r.next = r.seen + int64(g) + 1
}

// resume starts Algorithm L on a full reservoir holding a uniform sample of
// the seen values. Think of every value as carrying an independent uniform
// key and of the sample as the values with the size smallest keys; w, the
// largest of those keys, is then the size-th smallest of Seen uniforms,
// Beta(size, Seen - size + 1) distributed and independent of which values
// were kept. For Seen = Size this is Li's initial w = U^(1/size).
func (r *Reservoir) resume() {
	if r.pending == nil {
		r.pending = make([]replacement, 0, min(replaceBlock, r.size))
	}
	k := float64(r.size)
	if r.seen == int64(r.size) {
		r.w = math.Exp(math.Log(r.uniform()) / k)
	} else {
		r.w = distuv.Beta{Alpha: k, Beta: float64(r.seen) - k + 1, Src: r.rng}.Rand()
	}
	r.skip()
}

// Merge folds other, filled from values disjoint from the receiver's, into
// the receiver, leaving other unchanged. If both together saw at most Size
// values the receiver keeps them all, in the order of their positions in
// the stream (see AddAllAt). Otherwise the merged sample must be
// a uniform Size-subset of all nA + nB values; the number j of them that
// come from the receiver's values is then hypergeometric (Size draws
// without replacement from nA of one kind and nB of the other), and given
// j, those j are a uniform subset of the receiver's values, which a uniform
// j-subset of its uniform sample is (j <= min(nA, Size) always holds); the
// same for the other's Size - j. So Merge draws j by Size sequential
// draws weighted by the counts still unseen, takes uniform subsets of the
// two samples by partial Fisher-Yates shuffles, and restarts Algorithm L
// for the combined count (see resume). The random draws come from the
// receiver's generator.
func (r *Reservoir) Merge(other *Reservoir) error {
	if other.size != r.size {
		return fmt.Errorf("cannot merge reservoirs of sizes %d and %d", r.size, other.size)
	}
	total := r.seen + other.seen
	if total <= int64(r.size) {
		r.items, r.runs = mergeRuns(&r.items, r.runs, &other.items, other.runs, r.size)
		r.seen = total
		if r.items.n == r.size {
			r.resume()
		}
		return nil
	}
	r.runs = nil // the merged sample is no longer every value
	remA, remB := r.seen, other.seen
	j := 0
	for range r.size {
		if r.rng.Int64N(remA+remB) < remA {
			j++
			remA--
		} else {
			remB--
		}
	}
	// The receiver's subset is picked in place and kept; the other's is
	// picked in a copy and appended after it.
	r.pick(&r.items, j)
	r.items.truncate(j)
	b := other.items.clone()
	r.pick(&b, r.size-j)
	b.truncate(r.size - j)
	for _, part := range b.parts {
		r.items.add(part, r.size)
	}
	r.seen = total
	r.resume()
	return nil
}

// mergeRuns returns the values of two complete reservoirs, each the
// concatenation of its runs, in the order of the runs' positions (the
// receiver's first among equal positions), in new pieces for a reservoir
// of size values, and the merged runs. Each run is copied once, from its
// pieces to the new ones.
func mergeRuns(a *chunks, ra []run, b *chunks, rb []run, size int) (chunks, []run) {
	type piece struct {
		run
		from *chunks
		at   int
	}
	pieces := make([]piece, 0, len(ra)+len(rb))
	for _, side := range []struct {
		vals *chunks
		runs []run
	}{{a, ra}, {b, rb}} {
		at := 0
		for _, r := range side.runs {
			pieces = append(pieces, piece{r, side.vals, at})
			at += r.n
		}
	}
	slices.SortStableFunc(pieces, func(p, q piece) int { return cmp.Compare(p.pos, q.pos) })
	var vals chunks
	runs := make([]run, 0, len(pieces))
	for _, p := range pieces {
		for part := range p.from.span(p.at, p.at+p.n) {
			vals.add(part, size)
		}
		if k := len(runs); k > 0 && runs[k-1].pos+int64(runs[k-1].n) == p.pos {
			runs[k-1].n += p.n
		} else {
			runs = append(runs, p.run)
		}
	}
	return vals, runs
}

// pick moves a uniform random subset of k of c's values to its first k
// places, in place, by a partial Fisher-Yates shuffle (Durstenfeld 1964,
// "Algorithm 235: Random permutation", CACM 7(7):420): place i, in turn,
// swaps with a uniform place in [i, n). The places are drawn a block at a
// time before the block's swaps, so that the swaps run in a tight loop
// that overlaps their memory accesses (a sample of 10⁶ values spans 8 MB;
// swapping through the pieces one draw at a time took twice as long); the
// draws and the swaps, in their order, are those of the plain loop.
func (r *Reservoir) pick(c *chunks, k int) {
	var js [pickBlock]int
	for i0 := 0; i0 < k; i0 += pickBlock {
		m := min(pickBlock, k-i0)
		for t := range m {
			js[t] = i0 + t + r.rng.IntN(c.n-i0-t)
		}
		for t, j := range js[:m] {
			c.swap(i0+t, j)
		}
	}
}

// pickBlock is how many places pick draws before swapping.
const pickBlock = 512

// chunks holds a reservoir's values in pieces of at most chunkLen, so that
// filling a large reservoir never copies what it holds into a larger
// array (a slice grown by append peaks at about twice its size).
type chunks struct {
	parts [][]float64
	n     int
}

// A piece holds chunkLen values (512 KiB); value i is in piece
// i >> chunkBits. Every piece but the last is full.
const (
	chunkBits = 16
	chunkLen  = 1 << chunkBits
)

// add appends vs, in pieces sized for a reservoir of size values.
func (c *chunks) add(vs []float64, size int) {
	for len(vs) > 0 {
		k := len(c.parts) - 1
		if k < 0 || len(c.parts[k]) == chunkLen {
			c.parts = append(c.parts, make([]float64, 0, min(chunkLen, max(size-c.n, len(vs)))))
			k++
		}
		take := min(chunkLen-len(c.parts[k]), len(vs))
		c.parts[k] = append(c.parts[k], vs[:take]...)
		c.n += take
		vs = vs[take:]
	}
}

// replacement is a value that takes place i of the sample.
type replacement struct {
	i int
	v float64
}

// replaceBlock is how many replacements AddAllAt holds before writing
// them.
const replaceBlock = 256

// apply makes the replacements, in order.
func (c *chunks) apply(rs []replacement) {
	for _, x := range rs {
		c.parts[x.i>>chunkBits][x.i&(chunkLen-1)] = x.v
	}
}

// span yields values from..to-1 as sub-slices of the pieces, in order.
func (c *chunks) span(from, to int) iter.Seq[[]float64] {
	return func(yield func([]float64) bool) {
		for from < to {
			k, off := from>>chunkBits, from&(chunkLen-1)
			end := min(len(c.parts[k]), off+to-from)
			if !yield(c.parts[k][off:end]) {
				return
			}
			from += end - off
		}
	}
}

// swap exchanges values i and j.
func (c *chunks) swap(i, j int) {
	p, q := &c.parts[i>>chunkBits][i&(chunkLen-1)], &c.parts[j>>chunkBits][j&(chunkLen-1)]
	*p, *q = *q, *p
}

// truncate keeps the first k values (k <= n).
func (c *chunks) truncate(k int) {
	keep := (k + chunkLen - 1) >> chunkBits
	clear(c.parts[keep:])
	c.parts = c.parts[:keep]
	if keep > 0 {
		c.parts[keep-1] = c.parts[keep-1][:k-(keep-1)<<chunkBits]
	}
	c.n = k
}

// clone returns a copy of c that shares no memory with it.
func (c *chunks) clone() chunks {
	out := chunks{parts: make([][]float64, len(c.parts)), n: c.n}
	for i, p := range c.parts {
		out.parts[i] = slices.Clone(p)
	}
	return out
}

// all returns the values in order, as a new slice.
func (c *chunks) all() []float64 {
	out := make([]float64, 0, c.n)
	for _, p := range c.parts {
		out = append(out, p...)
	}
	return out
}
