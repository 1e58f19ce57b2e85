package order

import (
	"math"
	"slices"
)

// FloatKey maps x to an unsigned integer in the same order: the sign bit
// of a positive number (+0 included) is set, every bit of a negative one
// (-0 included) is flipped, so that -Inf < ... < -0 < +0 < ... < +Inf in
// both. NaNs map beyond ±Inf, by their sign bit. FloatOfKey undoes it.
func FloatKey(x float64) uint64 {
	b := math.Float64bits(x)
	return b ^ (uint64(int64(b)>>63) | 1<<63)
}

// FloatOfKey is the float64 whose FloatKey is k.
func FloatOfKey(k uint64) float64 {
	return math.Float64frombits(k ^ (uint64(int64(^k)>>63) | 1<<63))
}

// IntKey maps x to an unsigned integer in the same order, by flipping its
// sign bit; IntOfKey undoes it.
func IntKey(x int64) uint64 { return uint64(x) ^ 1<<63 }

// IntOfKey is the int64 whose IntKey is k.
func IntOfKey(k uint64) int64 { return int64(k ^ 1<<63) }

// Quantiles7 returns the p-quantiles of c's values, each p in [0, 1] (NaN
// for another p), by definition 7 of Hyndman & Fan (1996), as Quantiles7
// of the values would: the same order statistics and the same arithmetic,
// so the same bits (a zero read where -0 and +0 both occur may take either
// sign there; here -0 ranks below +0). It neither copies nor reorders the
// values: the order statistics are found by radix selection over c's
// parts (see keySelector), in about two passes. The values must hold no
// NaN; it returns NaNs for no values.
func (c *Chunks[T]) Quantiles7(ps ...float64) []float64 {
	switch c := any(c).(type) {
	case *Chunks[float64]:
		return quantilesOfKeys(c.n, ps, 0, keyScan{floats: c.parts}.each, FloatOfKey)
	case *Chunks[int64]:
		return quantilesOfKeys(c.n, ps, 0, keyScan{ints: c.parts}.each, IntOfKey)
	}
	panic("order: Chunks of an unknown type") // unreachable: T is int64 or float64
}

// DeviationQuantiles7 returns the p-quantiles, as Chunks.Quantiles7, of
// the absolute deviations |x − center| of c's values, each computed as
// math.Abs(x − center) when it is read: with p = 0.5, the MAD about
// center (unscaled). The values are neither copied nor changed.
func DeviationQuantiles7(c *Chunks[float64], center float64, ps ...float64) []float64 {
	return quantilesOfKeys(c.n, ps, 0, keyScan{floats: c.parts, dev: true, center: center}.each, FloatOfKey)
}

// keyBlock is how many keys a keyScan hands over at a time: 8 KiB, which
// stays in the first-level cache while it is read back.
const keyBlock = 1024

// keyScan reads the keys of a Chunks' values: FloatKey of the floats, of
// their absolute deviations from center when dev is set, or IntKey of
// the ints. Its loops are written out per case so that the key is
// computed inline.
type keyScan struct {
	floats [][]float64
	ints   [][]int64
	dev    bool
	center float64
}

// each calls fn with the keys of the values, in order, a block of at most
// keyBlock at a time, in a buffer fn must not keep.
func (s keyScan) each(fn func([]uint64)) {
	buf := make([]uint64, keyBlock)
	for _, p := range s.floats {
		for len(p) > 0 {
			m := min(len(p), keyBlock)
			keys := buf[:m]
			if s.dev {
				for i, x := range p[:m] {
					keys[i] = FloatKey(math.Abs(x - s.center))
				}
			} else {
				for i, x := range p[:m] {
					keys[i] = FloatKey(x)
				}
			}
			fn(keys)
			p = p[m:]
		}
	}
	for _, p := range s.ints {
		for len(p) > 0 {
			m := min(len(p), keyBlock)
			keys := buf[:m]
			for i, x := range p[:m] {
				keys[i] = IntKey(x)
			}
			fn(keys)
			p = p[m:]
		}
	}
}

// quantilesOfKeys returns the type-7 quantiles of the n values whose keys
// scan yields, reading each order statistic back from its key by value.
// A prefix of at most budget keys is gathered (see keySelector); budget 0
// means n/8, and at least gatherMin.
func quantilesOfKeys[T int64 | float64](n int, ps []float64, budget int, scan func(func([]uint64)), value func(uint64) T) []float64 {
	out := make([]float64, len(ps))
	if n == 0 {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	ranks := ranks7(n, ps)
	keys := make([]uint64, len(ranks))
	if budget == 0 {
		budget = max(n/8, gatherMin)
	}
	if len(ranks) > 0 {
		s := keySelector{scan: scan, budget: budget}
		s.find(n, ranks, keys)
	}
	at := func(r int) T { return value(keys[slices.Index(ranks, r)]) }
	for i, p := range ps {
		if !(p >= 0 && p <= 1) {
			out[i] = math.NaN()
			continue
		}
		h := 1 + float64(n-1)*p
		j := math.Floor(h)
		g := h - j
		if g == 0 {
			out[i] = float64(at(int(j) - 1))
			continue
		}
		out[i] = interpolate7(at(int(j)-1), at(int(j)), g)
	}
	return out
}

// ranks7 are the 0-based ranks of the order statistics the type-7
// p-quantiles of n values read, ascending without repeats: j−1 for each
// valid p, and j when g > 0 (see Quantile7).
func ranks7(n int, ps []float64) []int {
	ranks := make([]int, 0, 2*len(ps))
	for _, p := range ps {
		if !(p >= 0 && p <= 1) {
			continue
		}
		h := 1 + float64(n-1)*p
		j := int(math.Floor(h)) // x_(j) is rank j-1; x_(j+1) is rank j
		ranks = append(ranks, j-1)
		if h > float64(j) { // g > 0, so j < n
			ranks = append(ranks, j)
		}
	}
	slices.Sort(ranks)
	return slices.Compact(ranks)
}

// digitBits is the width of the digit each level of keySelector counts:
// 16 bits, 65,536 counts (512 KiB), four levels for a 64-bit key.
const digitBits = 16

// gatherMin is the fewest keys keySelector gathers rather than counts:
// below it, clearing and summing 65,536 counts costs more than copying
// the keys and selecting among them.
const gatherMin = 1 << 16

// keySelector finds the keys of given ranks among keys it reads in
// passes, by most-significant-digit radix selection (the distribution
// counting of Knuth 1998, The Art of Computer Programming vol. 3, 2nd ed.,
// §5.2.5, applied to selection), 16 bits a level. At each level the
// wanted ranks lie in a few digit prefixes (nodes; at first one, every
// key); one pass over the keys gathers those of each node of at most
// budget keys, to select the ranks among them (Select, in expected
// linear time), and counts those of each larger node by their next 16
// bits, which says in which longer prefix each of its ranks lies: the
// nodes of the next level. A node whose 64 bits are all fixed is its
// own key. So common data costs two passes (count, then gather) and
// copies at most budget keys per wanted digit; ties or a narrow range
// cost one pass more per level, at most four levels.
type keySelector struct {
	scan   func(fn func([]uint64))
	budget int
	slot   []int32 // slot[d]: 1 + the first node whose prefix ends in digit d, or 0
}

// keyNode is a prefix of the keys, at a level, that holds wanted ranks.
type keyNode struct {
	prefix uint64   // the keys k with k>>shift == prefix
	count  int      // how many keys have it
	ranks  []int    // wanted ranks among those keys, ascending
	out    []uint64 // where their keys go
	next   int32    // 1 + the next node whose prefix ends in the same digit, or 0
	// counts of the keys by their next digit (a large node), or the
	// stretch of the gathered keys where its keys go (a small one)
	counts        []int
	start, filled int
}

// digitMask keeps a digit.
const digitMask = 1<<digitBits - 1

// find writes to out[i] the key of rank ranks[i] (ascending, distinct,
// within [0, n)) among the n keys.
func (s *keySelector) find(n int, ranks []int, out []uint64) {
	s.slot = make([]int32, 1<<digitBits)
	nodes := []keyNode{{count: n, ranks: ranks, out: out}}
	for shift := uint(64); len(nodes) > 0; shift -= digitBits {
		if shift == 0 { // every key of a node is its prefix
			for _, nd := range nodes {
				for i := range nd.out {
					nd.out[i] = nd.prefix
				}
			}
			return
		}
		nodes = s.level(nodes, shift)
	}
}

// level reads the keys once for the nodes of the level whose prefixes
// are shift bits short of a key: it gathers and selects for the small
// nodes and returns the nodes of the next level, in the large ones.
func (s *keySelector) level(nodes []keyNode, shift uint) []keyNode {
	sub := shift - digitBits
	gathered := 0
	for i := range nodes {
		nd := &nodes[i]
		if nd.count <= s.budget {
			nd.start, nd.filled = gathered, gathered
			gathered += nd.count
		} else {
			nd.counts = make([]int, 1<<digitBits)
		}
		d := nd.prefix & digitMask
		nd.next = s.slot[d]
		s.slot[d] = int32(i + 1)
	}
	buf := make([]uint64, gathered)
	slot := s.slot
	switch {
	case len(nodes) == 1 && nodes[0].counts != nil: // the first level, or a narrow range
		prefix, counts := nodes[0].prefix, nodes[0].counts
		s.scan(func(keys []uint64) {
			for _, k := range keys {
				if k>>shift == prefix {
					counts[(k>>sub)&digitMask]++
				}
			}
		})
	case len(nodes) == 1: // one digit to gather
		prefix := nodes[0].prefix
		s.scan(func(keys []uint64) {
			f := nodes[0].filled
			for _, k := range keys {
				if k>>shift == prefix {
					buf[f] = k
					f++
				}
			}
			nodes[0].filled = f
		})
	default:
		s.scan(func(keys []uint64) {
			for _, k := range keys {
				p := k >> shift
				i := slot[p&digitMask]
				for i != 0 && nodes[i-1].prefix != p {
					i = nodes[i-1].next
				}
				if i == 0 {
					continue
				}
				nd := &nodes[i-1]
				if nd.counts != nil {
					nd.counts[(k>>sub)&digitMask]++
				} else {
					buf[nd.filled] = k
					nd.filled++
				}
			}
		})
	}
	var next []keyNode
	for _, nd := range nodes {
		slot[nd.prefix&digitMask] = 0
		if nd.counts == nil {
			part := buf[nd.start : nd.start+nd.count]
			SelectRanks(part, nd.ranks)
			for i, r := range nd.ranks {
				nd.out[i] = part[r]
			}
			continue
		}
		below, i := 0, 0 // keys with a smaller digit; next rank to place
		for d, c := range nd.counts {
			j := i
			for j < len(nd.ranks) && nd.ranks[j] < below+c {
				j++
			}
			if j > i {
				child := keyNode{prefix: nd.prefix<<digitBits | uint64(d), count: c, out: nd.out[i:j]}
				for _, r := range nd.ranks[i:j] {
					child.ranks = append(child.ranks, r-below)
				}
				next = append(next, child)
				if i = j; i == len(nd.ranks) {
					break
				}
			}
			below += c
		}
	}
	return next
}

// KeysOfRanks returns the keys of the given ranks (0-based, ascending,
// distinct, within [0, n)) among the n keys that scan yields, a block at a
// time (in buffers it may reuse), by radix selection (see keySelector):
// about two passes over the keys, which are neither stored nor reordered.
// Up to gatherMin keys are instead gathered and selected among (Select).
func KeysOfRanks(n int, ranks []int, scan func(fn func([]uint64))) []uint64 {
	out := make([]uint64, len(ranks))
	if n <= gatherMin {
		all := make([]uint64, 0, n)
		scan(func(keys []uint64) { all = append(all, keys...) })
		SelectRanks(all, ranks)
		for i, r := range ranks {
			out[i] = all[r]
		}
		return out
	}
	s := keySelector{scan: scan, budget: max(n/8, gatherMin)}
	s.find(n, ranks, out)
	return out
}
