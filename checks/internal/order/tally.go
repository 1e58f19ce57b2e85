package order

import (
	"cmp"
	"iter"
	"math"
	"slices"
)

// TallyLimit is the most distinct values a Tally counts before it keeps
// the values themselves. Counting them takes about 2.1 MiB at most (a
// table of 2^17 slots of 16 bytes, at most half full, and a grid of 2^16
// counts of 2 bytes, with the few that overflow);
// beyond it a column is taken to hold values of fine resolution, for
// which counting saves little.
const TallyLimit = 1 << 16

// Tally is an exact multiset of values: while it has seen at most
// TallyLimit distinct values, each distinct value and how often it
// occurred; past that, the values themselves, in Chunks (it has then
// spilled). Measured values are mostly of limited resolution (a
// temperature to 0.001 °C, a pressure to 0.01 hPa): ten million of them
// may take ten thousand distinct values, whose counts take 160 KB where
// the values take 80 MB. Either way its order statistics (Quantiles7) are
// exact. Values are told apart by their bits, so -0 and 0 are counted
// apart (and compare equal). The zero value is ready to use.
//
// A float64 tally counts the values of the decimal resolution of its
// first part, near them, in a grid (see grid): by their position, with
// neighbouring values in neighbouring counts. Every other value is
// counted in an open-addressing hash table. A value's place depends on
// the value alone, so each is counted in one place.
type Tally[T int64 | float64] struct {
	// slots is the table; a count of 0 marks an empty slot. used is the
	// number of occupied slots, distinct the number of distinct values
	// (in the table and the grid), n the number of values.
	slots    []slot
	used     int
	distinct int
	grid     grid
	n        int64
	raw      Chunks[T]
	spilled  bool
	// warm keeps the sum of the keys addHashed reads ahead, only so that
	// the compiler keeps those reads.
	warm uint64
	// miss holds a part's values the grid does not count, reused from
	// part to part.
	miss []T
}

// slot is one entry of a Tally's table: a value's bits and its count.
type slot struct {
	key   uint64
	count int64
}

// grid counts the values x that are k/scale for a whole k in [lo,
// lo+len(counts)), exactly: rounded to float64, k/scale gives back x's
// bits (so -0, which would be k = 0, is not one of them). Its scale is
// the least power of ten that makes 7/8 of a tally's first values (up to
// gridSample of them) whole numbers of 1/scale; its span is four times
// theirs around their middle, from gridMin to gridMax counts, and centred
// on their median when gridMax counts do not reach that far (values in
// far apart clusters). Counting
// there takes a multiplication, a division and one count in 128 KiB at
// most, and values close together, as most of a column's are, share
// cache lines; the table would spend a cache miss on most values. The
// counts keep their low 16 bits (a quarter of the memory of 64-bit counts,
// so that fewer of them fall out of the caches; ten million values of
// 3 decimals in four lanes put a few hundred in a count) and, in wraps,
// how many times a count went past 2^16 − 1, for the few that did.
type grid struct {
	tried  bool    // the first part has been seen
	scale  float64 // a power of ten, at most 10^gridDigits
	lo     int64
	counts []uint16 // nil: no grid; the low 16 bits of each count
	// wraps holds, for the counts that went past 2^16 − 1, how many
	// times they did; nil while none has.
	wraps map[int]int64
	// lof and size are lo and len(counts) as float64.
	lof, size float64
}

// Bounds of a grid.
const (
	gridSample = 1024
	gridDigits = 9
	gridMin    = 1 << 10
	gridMax    = 1 << 16
)

// newGrid makes the grid of a tally whose first values are xs; without
// counts when no scale up to 10^gridDigits fits them.
func newGrid(xs []float64) grid {
	xs = xs[:min(len(xs), gridSample)]
	for d := range gridDigits + 1 {
		scale := math.Pow10(d)
		ks := make([]int64, 0, len(xs))
		for _, x := range xs {
			m := math.RoundToEven(x * scale)
			if !(math.Abs(m) < 1<<53) {
				continue
			}
			if k := int64(m); math.Float64bits(float64(k)/scale) == math.Float64bits(x) {
				ks = append(ks, k)
			}
		}
		if len(ks) == 0 || 8*len(ks) < 7*len(xs) {
			continue
		}
		slices.Sort(ks)
		lo, hi := ks[0], ks[len(ks)-1]
		size := min(gridMax, max(gridMin, 4*(hi-lo+1)))
		mid := lo + (hi-lo)/2
		if size == gridMax && 4*(hi-lo+1) > gridMax {
			mid = ks[len(ks)/2]
		}
		g := grid{tried: true, scale: scale, lo: mid - size/2, counts: make([]uint16, size)}
		g.lof, g.size = float64(g.lo), float64(size)
		return g
	}
	return grid{tried: true}
}

// index returns the count of x in the grid; false if x is not counted
// there. x is k/scale rounded for the k that x·scale rounds to, or for
// none.
func (g *grid) index(x float64) (int, bool) {
	f := math.RoundToEven(x*g.scale) - g.lof
	if !(f >= 0 && f < g.size) {
		return 0, false
	}
	j := int(f)
	return j, math.Float64bits(g.value(j)) == math.Float64bits(x)
}

// count is the count of j.
func (g *grid) count(j int) int64 {
	c := int64(g.counts[j])
	if g.wraps != nil {
		c += g.wraps[j] << 16
	}
	return c
}

// set makes c the count of j.
func (g *grid) set(j int, c int64) {
	g.counts[j] = uint16(c)
	if w := c >> 16; w != g.wraps[j] {
		if g.wraps == nil {
			g.wraps = map[int]int64{}
		}
		g.wraps[j] = w
	}
}

// value is the value counted by counts[j].
func (g *grid) value(j int) float64 { return float64(g.lo+int64(j)) / g.scale }

// Add adds the values of part; the caller keeps part (it is copied once
// the tally has spilled). The grid, when there is one, counts the values
// it can; the others go to the table (addHashed). Which value makes the
// tally spill may then differ from the order of part, but not what it
// holds: a tally spills once it has seen more than TallyLimit distinct
// values, whatever their order.
func (t *Tally[T]) Add(part []T) {
	t.n += int64(len(part))
	if t.spilled {
		t.raw.Add(slices.Clone(part))
		return
	}
	if !t.grid.tried && len(part) > 0 {
		t.startGrid(part)
	}
	if t.grid.counts != nil {
		if part = t.addGridded(part); t.spilled {
			return
		}
	}
	t.addHashed(part)
}

// startGrid makes the grid of a float64 tally from its first part.
func (t *Tally[T]) startGrid(part []T) {
	t.grid.tried = true
	var zero T
	if _, ok := any(zero).(float64); !ok {
		return
	}
	xs := make([]float64, min(len(part), gridSample))
	for i := range xs {
		xs[i] = float64(part[i])
	}
	t.grid = newGrid(xs)
}

// addGridded counts the values of part the grid holds and returns the
// others. The grid has at most TallyLimit counts, so the limit of
// distinct values is tested once, after the part: past it, the tally
// spills, with the values returned.
//
// The loop is grid.index written out, on copies of the grid's fields
// that stay in registers.
func (t *Tally[T]) addGridded(part []T) []T {
	counts, scale, lo, lof, size := t.grid.counts, t.grid.scale, t.grid.lo, t.grid.lof, t.grid.size
	miss := t.miss[:0]
	fresh := 0
	for _, x := range part {
		if f := math.RoundToEven(float64(x)*scale) - lof; f >= 0 && f < size {
			j := int(f)
			if math.Float64bits(float64(lo+int64(j))/scale) == math.Float64bits(float64(x)) {
				c := counts[j] + 1
				counts[j] = c
				switch {
				case c > 1:
				case c == 1 && t.grid.wraps == nil: // a new value, no count having wrapped
					fresh++
				default: // the count was 0 or a multiple of 2^16, or it wrapped
					fresh += t.grid.carry(j, c)
				}
				continue
			}
		}
		miss = append(miss, x)
	}
	if t.distinct += fresh; t.distinct > TallyLimit {
		t.spill()
		t.raw.Add(miss)
		return nil
	}
	t.miss = miss
	return miss
}

// carry completes the count of j, whose low 16 bits an addition by one
// has just made c, 0 or 1: it records a wrap past 2^16 − 1, and returns
// 1 when the value is new to the grid.
func (g *grid) carry(j int, c uint16) int {
	if c == 0 {
		g.set(j, g.count(j)+1<<16)
		return 0
	}
	if g.wraps[j] == 0 {
		return 1
	}
	return 0
}

// addHashed adds the values of part to the table.
//
// The table outgrows the caches (2 MiB at most, one per column and lane),
// so finding a value's slot is mostly a wait for memory. addHashed
// therefore takes the values a block at a time: it first computes the
// slot each value's hash names and reads it, in a loop whose reads do not
// depend on one another, so the processor has many of them in flight at
// once; then it probes for each value in turn, from slots now in cache. A
// block has room in the table made for it first, so that no value of it
// moves the slots the first loop named; near TallyLimit, where that room
// would exceed the limit, values are counted one by one.
func (t *Tally[T]) addHashed(part []T) {
	var slot [addBlock]uint64
	for len(part) > 0 {
		if t.spilled {
			t.raw.Add(slices.Clone(part))
			return
		}
		blk := part[:min(len(part), addBlock)]
		part = part[len(blk):]
		if !t.reserve(len(blk)) {
			t.addEach(blk)
			continue
		}
		mask := uint64(len(t.slots) - 1)
		var warm uint64
		for i, x := range blk {
			slot[i] = mix(bitsOf(x)) & mask
			warm += t.slots[slot[i]].key
		}
		t.warm = warm
		for i, x := range blk {
			k := bitsOf(x)
			j := t.probe(k, slot[i])
			if t.slots[j].count == 0 {
				t.slots[j].key = k
				t.used++
				t.distinct++
			}
			t.slots[j].count++
		}
	}
}

// addBlock is how many values addHashed hashes and reads ahead of
// probing: more than a processor has reads in flight, few enough that
// their slots stay in the first-level cache.
const addBlock = 64

// reserve grows the table until c more distinct values keep it at most
// half full; false if that would take more than TallyLimit distinct
// values (the table is left as it is then).
func (t *Tally[T]) reserve(c int) bool {
	if t.distinct+c > TallyLimit {
		return false
	}
	for 2*(t.used+c) > len(t.slots) {
		t.grow()
	}
	return true
}

// addEach adds the values of part to the table one at a time, spilling at
// the value that would exceed TallyLimit distinct values.
func (t *Tally[T]) addEach(part []T) {
	for i, x := range part {
		if !t.count(bitsOf(x), 1) {
			t.spill()
			t.raw.Add(slices.Clone(part[i:]))
			return
		}
	}
}

// countValue adds c occurrences of x, in the grid or the table; false
// when that would exceed TallyLimit distinct values (nothing is added
// then).
func (t *Tally[T]) countValue(x T, c int64) bool {
	if t.grid.counts != nil {
		if j, ok := t.grid.index(float64(x)); ok {
			had := t.grid.count(j)
			if had == 0 {
				if t.distinct >= TallyLimit {
					return false
				}
				t.distinct++
			}
			t.grid.set(j, had+c)
			return true
		}
	}
	return t.count(bitsOf(x), c)
}

// count adds c occurrences of the value with bits k to the table, growing
// it as needed; false when that would exceed TallyLimit distinct values
// (nothing is added then).
func (t *Tally[T]) count(k uint64, c int64) bool {
	if !t.reserve(1) {
		if i, ok := t.find(k); ok {
			t.slots[i].count += c
			return true
		}
		return false
	}
	i, ok := t.find(k)
	if !ok {
		t.slots[i].key = k
		t.used++
		t.distinct++
	}
	t.slots[i].count += c
	return true
}

// find returns the slot of k, or the empty slot where k belongs, by
// linear probing from the slot its hash names.
func (t *Tally[T]) find(k uint64) (int, bool) {
	i := t.probe(k, mix(k)&uint64(len(t.slots)-1))
	return int(i), t.slots[i].count != 0
}

// probe returns the slot of k, or the empty slot where k belongs, by
// linear probing from slot i.
func (t *Tally[T]) probe(k, i uint64) uint64 {
	mask := uint64(len(t.slots) - 1)
	for ; ; i = (i + 1) & mask {
		if s := t.slots[i]; s.count == 0 || s.key == k {
			return i
		}
	}
}

// grow doubles the table (to 64 slots at first) and puts the entries
// back.
func (t *Tally[T]) grow() {
	old := t.slots
	t.slots = make([]slot, max(64, 2*len(old)))
	for _, s := range old {
		if s.count != 0 {
			j, _ := t.find(s.key)
			t.slots[j] = s
		}
	}
}

// mix is the 64-bit finaliser of SplitMix64 (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA; Stafford's
// "Mix13" constants), a bijection that spreads the bits of k.
func mix(k uint64) uint64 {
	k ^= k >> 30
	k *= 0xbf58476d1ce4e5b9
	k ^= k >> 27
	k *= 0x94d049bb133111eb
	return k ^ (k >> 31)
}

// spill turns the counts into values in Chunks and frees them.
func (t *Tally[T]) spill() {
	if t.spilled {
		return
	}
	if t.distinct > 0 {
		all := make([]T, 0, t.n)
		for x, c := range t.counted() {
			for range c {
				all = append(all, x)
			}
		}
		t.raw.Add(all)
	}
	t.spilled = true
	t.slots, t.used, t.distinct = nil, 0, 0
	t.grid.counts, t.grid.wraps, t.miss = nil, nil, nil
}

// Merge adds o's values to t and leaves o empty. When o's counts do not
// all fit in t, t spills, and the values of o's counts not yet added
// follow as values.
func (t *Tally[T]) Merge(o *Tally[T]) {
	switch {
	case t.n == 0 && !t.spilled:
		*t = *o
	case o.spilled:
		t.spill()
		t.raw.Splice(&o.raw)
		t.n += o.n
	case t.spilled:
		o.spill()
		t.raw.Splice(&o.raw)
		t.n += o.n
	default:
		var rest []T // o's values t had no room for
		for x, c := range o.counted() {
			if rest == nil && t.countValue(x, c) {
				continue
			}
			for range c {
				rest = append(rest, x)
			}
		}
		if rest != nil {
			t.spill()
			t.raw.Add(rest)
		}
		t.n += o.n
	}
	*o = Tally[T]{}
}

// Len is the number of values.
func (t *Tally[T]) Len() int64 { return t.n }

// All yields each distinct value with its count, in no particular order;
// spilled, each value with the count 1.
func (t *Tally[T]) All() iter.Seq2[T, int64] {
	if !t.spilled {
		return t.counted()
	}
	return func(yield func(T, int64) bool) {
		for _, part := range t.raw.Parts() {
			for _, x := range part {
				if !yield(x, 1) {
					return
				}
			}
		}
	}
}

// counted yields each distinct value counted in the grid and the table,
// with its count: onGrid's, then inTable's.
func (t *Tally[T]) counted() iter.Seq2[T, int64] {
	return func(yield func(T, int64) bool) {
		for x, c := range t.onGrid() {
			if !yield(x, c) {
				return
			}
		}
		for x, c := range t.inTable() {
			if !yield(x, c) {
				return
			}
		}
	}
}

// onGrid yields each distinct value counted in the grid, with its count,
// in ascending order (a value grows with its count's place).
func (t *Tally[T]) onGrid() iter.Seq2[T, int64] {
	return func(yield func(T, int64) bool) {
		for j := range t.grid.counts {
			if c := t.grid.count(j); c != 0 && !yield(T(t.grid.value(j)), c) {
				return
			}
		}
	}
}

// inTable yields each distinct value counted in the table, with its
// count, in the table's order.
func (t *Tally[T]) inTable() iter.Seq2[T, int64] {
	return func(yield func(T, int64) bool) {
		for _, s := range t.slots {
			if s.count != 0 && !yield(valueOf[T](s.key), s.count) {
				return
			}
		}
	}
}

// DeviationQuantiles7 returns the p-quantiles, as Tally.Quantiles7, of the
// absolute deviations |x − center| of t's values, each computed as
// math.Abs(x − center) (so, with p = 0.5, the MAD about center exactly as
// order.DeviationQuantiles7 finds it from the values): counted, from a
// tally of the deviations of the distinct values, which are no more
// numerous; spilled, by radix selection over the values.
func DeviationQuantiles7Tally(t *Tally[float64], center float64, ps ...float64) []float64 {
	if t.spilled {
		return DeviationQuantiles7(&t.raw, center, ps...)
	}
	var d Tally[float64]
	for x, c := range t.counted() {
		d.count(bitsOf(math.Abs(x-center)), c)
	}
	d.n = t.n
	return d.Quantiles7(ps...)
}

// Spilled reports whether t keeps the values themselves.
func (t *Tally[T]) Spilled() bool { return t.spilled }

// Quantiles7 returns the p-quantile of the values for each p of ps, by
// definition 7 of Hyndman & Fan (1996) (see Quantile7, whose arithmetic
// it repeats, so the two agree to the last bit). From counts, the order
// statistics are read off the distinct values in ascending order and
// their running counts; spilled, from the values (Chunks.Quantiles7).
// Values must not be NaN.
func (t *Tally[T]) Quantiles7(ps ...float64) []float64 {
	if t.spilled {
		return t.raw.Quantiles7(ps...)
	}
	type entry struct {
		x T
		c int64
	}
	// The grid's values come in ascending order (onGrid); only the
	// table's are sorted, then merged with them.
	entries := make([]entry, 0, t.distinct)
	for x, c := range t.onGrid() {
		entries = append(entries, entry{x, c})
	}
	gridded := len(entries)
	for x, c := range t.inTable() {
		entries = append(entries, entry{x, c})
	}
	// -0 and 0, counted apart, sort -0 first, so that which of them a rank
	// holds does not depend on where the table put them.
	ascending := func(a, b entry) int {
		if c := cmp.Compare(a.x, b.x); c != 0 {
			return c
		}
		return cmp.Compare(bitsOf(b.x), bitsOf(a.x))
	}
	slices.SortFunc(entries[gridded:], ascending)
	if gridded > 0 && gridded < len(entries) {
		entries = merged(entries[:gridded], entries[gridded:], ascending)
	}
	// at returns the value of 0-based rank r.
	at := func(r int64) T {
		i, _ := slices.BinarySearchFunc(entries, r, func(e entry, r int64) int {
			return cmp.Compare(e.c-1, r)
		})
		return entries[i].x
	}
	for i := 1; i < len(entries); i++ {
		entries[i].c += entries[i-1].c // running counts: ranks below entries[i].c hold values up to x
	}
	out := make([]float64, len(ps))
	for k, p := range ps {
		if t.n == 0 || !(p >= 0 && p <= 1) {
			out[k] = math.NaN()
			continue
		}
		h := 1 + float64(t.n-1)*p
		j := math.Floor(h)
		lo := at(int64(j) - 1)
		g := h - j
		if g == 0 {
			out[k] = float64(lo)
			continue
		}
		hi := at(int64(j))
		if hi == lo {
			out[k] = float64(lo)
			continue
		}
		out[k] = (1-g)*float64(lo) + g*float64(hi)
	}
	return out
}

// merged returns the elements of a and b, each sorted by cmp, in one
// slice sorted by cmp.
func merged[E any](a, b []E, cmp func(E, E) int) []E {
	out := make([]E, 0, len(a)+len(b))
	for len(a) > 0 && len(b) > 0 {
		if cmp(b[0], a[0]) < 0 {
			out, b = append(out, b[0]), b[1:]
		} else {
			out, a = append(out, a[0]), a[1:]
		}
	}
	return append(append(out, a...), b...)
}

// bitsOf and valueOf convert a value to the bits the table keys it by and
// back.
func bitsOf[T int64 | float64](x T) uint64 {
	switch v := any(x).(type) {
	case float64:
		return math.Float64bits(v)
	case int64:
		return uint64(v)
	}
	panic("unreachable")
}

func valueOf[T int64 | float64](k uint64) T {
	var x T
	switch p := any(&x).(type) {
	case *float64:
		*p = math.Float64frombits(k)
	case *int64:
		*p = int64(k)
	}
	return x
}
