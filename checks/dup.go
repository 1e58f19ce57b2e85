package checks

import (
	"cmp"
	"encoding/binary"
	"fmt"
	"hash/maphash"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// dupCheck finds repeated values (unique) or repeated key combinations
// (key) in two passes, keeping memory to what the meaning needs.
//
// Each row's value (or combination) is written as bytes: per column a tag
// (0 missing, 1 value, 2 a cell that did not parse) and the value's bytes
// (8 for numbers and times, 1 for booleans, a length and the bytes for
// strings and unparsed text), so equal bytes mean equal values. Floats are
// written as their bits with -0 as 0 and every NaN as one value.
//
// Each row gets a 64-bit hash: of its bytes by default; when the rule has
// one column of integers, numbers or times, a row holding a value is hashed
// from the value's 64 bits alone by a seeded bijective mixer (see mix13),
// without writing bytes, so two different values never share a hash there.
// Either way the hash is a function of the row's cells, the same in both
// passes and in every batch.
//
// The first pass keeps the hashes themselves, 8 bytes a row (HashCounts),
// and finds those that occur more than once, range by range of their top
// bits in a hash table (findRuns). The
// second pass looks again at the rows whose hash occurred more than once,
// groups them by their actual bytes, so a hash collision cannot make a
// false duplicate, and counts exactly (DuplicateState), keeping per
// duplicated value its bytes, its count and its first MaxRowsListed rows.
type dupCheck struct {
	rule *rules.Rule
	env  *Env
	cols []column
	// key makes every row count, a missing value being one more value;
	// otherwise (unique) only the non-null values of the one column count.
	key bool
	// noun names what is counted: "values" or "rows".
	noun string
	// words is set when the rule has one column of integers, numbers or
	// times: a row holding a value is then hashed by word.
	words bool
	// hash hashes a row's bytes; a value's 64 bits x are hashed by
	// mix13(x ^ wordSeed), or by word when it is set. A test may put
	// poorer ones in their place.
	hash     func([]byte) uint64
	wordSeed uint64
	word     func(uint64) uint64
}

func newDupCheck(r *rules.Rule, env *Env, key bool) (*dupCheck, error) {
	c := &dupCheck{rule: r, env: env, key: key, noun: "values"}
	if key {
		c.noun = "rows"
	}
	for _, name := range r.Columns {
		col, err := bindColumn(env, name)
		if err != nil {
			return nil, err
		}
		if col.class == classOther {
			return nil, fmt.Errorf("column %q holds %s, which %s cannot compare", name, typeWords(col.typ), r.Kind)
		}
		c.cols = append(c.cols, col)
	}
	if len(c.cols) == 1 {
		switch c.cols[0].class {
		case classInteger, classNumber, classTime:
			c.words = true
		}
	}
	seed := maphash.MakeSeed()
	c.hash = func(b []byte) uint64 { return maphash.Bytes(seed, b) }
	c.wordSeed = rand.Uint64()
	return c, nil
}

// mix13 is Stafford's "Mix13" 64-bit finaliser (David Stafford 2011,
// "Better Bit Mixing - Improving on MurmurHash3's 64-bit Finalizer"), the
// output function of SplitMix64 (Steele, Lea & Flood 2014, "Fast Splittable
// Pseudorandom Number Generators", OOPSLA): xor-shifts by 30, 27 and 31
// around multiplications by two odd constants. Each step is invertible, so
// it is a bijection of uint64; every input bit flips each output bit with
// probability close to 1/2.
func mix13(x uint64) uint64 {
	x ^= x >> 30
	x *= 0xbf58476d1ce4e5b9
	x ^= x >> 27
	x *= 0x94d049bb133111eb
	return x ^ x>>31
}

func (c *dupCheck) Rule() *rules.Rule { return c.rule }

func (c *dupCheck) NewAccumulator() Accumulator {
	return &HashAccumulator{check: c}
}

// batchRows is one batch as a unique or key rule reads it.
type batchRows struct {
	n int
	// first is the rule's first column.
	first arrow.Array
	// counted tells the rows that count: unique, those holding a value in
	// the column; key, every row (the zero valid).
	counted valid
	// writers writes each column's cell of a row.
	writers []cellWriter
}

// rows reads batch b; the writers widen narrow numbers into s.
func (c *dupCheck) rows(b *source.Batch, s *hashScratch) (batchRows, error) {
	r := batchRows{n: int(b.Record.NumRows()), writers: make([]cellWriter, len(c.cols))}
	if len(s.ints) < len(c.cols) {
		s.ints, s.floats = make([][]int64, len(c.cols)), make([][]float64, len(c.cols))
	}
	for k, col := range c.cols {
		arr, err := col.in(b)
		if err != nil {
			return r, err
		}
		var invalid map[int]string
		if c.key {
			invalid = invalidTexts(b, col.index)
		}
		r.writers[k] = writerFor(arr, invalid, &s.ints[k], &s.floats[k])
		if k == 0 {
			r.first = arr
		}
	}
	if !c.key {
		r.counted = validOf(r.first)
	}
	return r, nil
}

// count is how many rows count.
func (r *batchRows) count() int {
	if r.counted.bits == nil {
		return r.n
	}
	return r.n - r.first.NullN()
}

// key writes the bytes of row i into buf, overwriting it.
func (r *batchRows) key(buf []byte, i int) []byte {
	buf = buf[:0]
	for _, w := range r.writers {
		buf = w(buf, i)
	}
	return buf
}

// hashScratch is what hashing reuses from one batch to the next: a row's
// bytes, and per column the values of narrow number types widened.
type hashScratch struct {
	buf    []byte
	ints   [][]int64
	floats [][]float64
}

// appendHashes appends to dst the hash of every row of r that counts, in
// row order.
func (c *dupCheck) appendHashes(dst []uint64, r *batchRows, s *hashScratch) []uint64 {
	if !c.words {
		for i := range r.n {
			if r.counted.at(i) {
				s.buf = r.key(s.buf, i)
				dst = append(dst, c.hash(s.buf))
			}
		}
		return dst
	}
	start := len(dst)
	if c.cols[0].class == classNumber {
		for i, x := range float64s(r.first, &s.floats[0]) {
			if r.counted.at(i) {
				dst = append(dst, floatKey(x))
			}
		}
	} else {
		for i, x := range int64s(r.first, &s.ints[0]) {
			if r.counted.at(i) {
				dst = append(dst, uint64(x))
			}
		}
	}
	if c.word != nil {
		for j := start; j < len(dst); j++ {
			dst[j] = c.word(dst[j])
		}
	} else {
		seed := c.wordSeed
		for j := start; j < len(dst); j++ {
			dst[j] = mix13(dst[j] ^ seed)
		}
	}
	// A key counts the rows without a value too (one per row, so row i is
	// at start+i); they are hashed by their bytes.
	if c.key && r.first.NullN() > 0 {
		v := validOf(r.first)
		for i := range r.n {
			if !v.at(i) {
				s.buf = r.key(s.buf, i)
				dst[start+i] = c.hash(s.buf)
			}
		}
	}
	return dst
}

// cellWriter appends the bytes of row i of one column to buf.
type cellWriter func(buf []byte, i int) []byte

const (
	tagNull byte = iota
	tagValue
	tagInvalid
)

// writerFor returns the cellWriter of one batch's array; invalid holds the
// text of the cells that did not parse, by row; narrow numbers are widened
// into *ints or *floats.
func writerFor(a arrow.Array, invalid map[int]string, ints *[]int64, floats *[]float64) cellWriter {
	v := validOf(a)
	var value cellWriter
	switch a := a.(type) {
	case *array.String:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.LargeString:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.StringView:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.Boolean:
		value = func(buf []byte, i int) []byte { return append(buf, byte(boolIndex(a.Value(i)))) }
	// Numbers are read (narrower types widened) on first use: the rows of
	// a one-column key are mostly hashed without their bytes.
	case *array.Float64, *array.Float32:
		var xs []float64
		value = func(buf []byte, i int) []byte {
			if xs == nil {
				xs = float64s(a, floats)
			}
			return binary.LittleEndian.AppendUint64(buf, floatKey(xs[i]))
		}
	default:
		var xs []int64
		value = func(buf []byte, i int) []byte {
			if xs == nil {
				xs = int64s(a, ints)
			}
			return binary.LittleEndian.AppendUint64(buf, uint64(xs[i]))
		}
	}
	return func(buf []byte, i int) []byte {
		if v.at(i) {
			return value(append(buf, tagValue), i)
		}
		if text, ok := invalid[i]; ok {
			return appendText(append(buf, tagInvalid), text)
		}
		return append(buf, tagNull)
	}
}

func appendText(buf []byte, s string) []byte {
	buf = binary.AppendUvarint(buf, uint64(len(s)))
	return append(buf, s...)
}

// invalidTexts maps the rows of b whose cell in column col did not parse to
// the text read; nil when there are none.
func invalidTexts(b *source.Batch, col int) map[int]string {
	cells := b.Invalid[col]
	if len(cells) == 0 {
		return nil
	}
	m := make(map[int]string, len(cells))
	for _, c := range cells {
		m[c.Row] = c.Text
	}
	return m
}

// HashCounts is the first-pass state of unique and key: Of is how many
// values (unique: non-null values) or rows (key) were hashed, the measure's
// denominator; Hashes holds their 64-bit hashes, Of in all, in chunks (one
// or more batches' worth each) in no particular order. The hashes that
// occur more than once are what the second pass looks at again.
type HashCounts struct {
	Of     int64
	Hashes [][]uint64
}

// HashAccumulator is the first pass of a unique or key rule.
type HashAccumulator struct {
	HashCounts
	check   *dupCheck
	scratch hashScratch
	// runs caches what findRuns found in Hashes, for Finish and SecondPass;
	// nil until one of them asks, and again after a Merge.
	runs *hashRuns
}

// chunkMax is the largest chunk Observe starts: one engine batch of hashes.
const chunkMax = 1 << 16

// Observe appends the hashes of the batch's values or key combinations to
// the last chunk when it has room for them, else to a new chunk holding at
// least as many hashes as are kept already, up to chunkMax: chunks never
// grow by copying, and small accumulators (the groups of a segmented rule)
// keep few.
func (a *HashAccumulator) Observe(b *source.Batch) error {
	r, err := a.check.rows(b, &a.scratch)
	if err != nil {
		return err
	}
	n := r.count()
	last := len(a.Hashes) - 1
	if last < 0 || cap(a.Hashes[last])-len(a.Hashes[last]) < n {
		size := max(n, min(max(int(a.Of), 64), chunkMax))
		a.Hashes = append(a.Hashes, make([]uint64, 0, size))
		last++
	}
	a.Hashes[last] = a.check.appendHashes(a.Hashes[last], &r, &a.scratch)
	a.Of += int64(n)
	a.runs = nil
	return nil
}

// Merge takes other's chunks of hashes, without copying them.
func (a *HashAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*HashAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Of += o.Of
	// Clip the chunks taken so that a later Observe never writes into
	// the room left in other's last one.
	for _, h := range o.Hashes {
		a.Hashes = append(a.Hashes, slices.Clip(h))
	}
	a.runs = nil
	return nil
}

// found returns what the hashes show, finding it once.
func (a *HashAccumulator) found() *hashRuns {
	if a.runs == nil {
		a.runs = findRuns(a.Hashes)
	}
	return a.runs
}

// Finish judges the duplicates as the hashes count them, without listing
// rows: a hash collision can only make this count too high, and the engine
// runs the second pass, whose Finish is exact. When no hash occurs twice,
// no value does either: the count is exact and there is no second pass.
// Finish reorders the hashes within each chunk.
func (a *HashAccumulator) Finish() report.Result {
	runs := a.found()
	s := DuplicateState{Of: a.Of, Rows: runs.rows, Groups: runs.groups}
	res := s.result(a.check)
	if runs.rows > 0 {
		res.Message += " (counted by hash; the second pass lists the rows)"
	}
	return res
}

// SecondPass returns a fresh accumulator that groups, by their actual
// bytes, the rows whose hash occurred more than once, sharing the set of
// those hashes; nil when no hash did, Finish being exact then.
func (a *HashAccumulator) SecondPass() Accumulator {
	runs := a.found()
	if runs.groups == 0 {
		return nil
	}
	return &DuplicateAccumulator{
		DuplicateState: DuplicateState{Of: a.Of},
		check:          a.check,
		suspects:       &runs.suspects,
		groups:         map[string]*dupGroup{},
	}
}

// hashRuns is what the first pass learns from its hashes: rows of them lie
// in runs of equal hashes longer than one, groups is the number of those
// runs and suspects the set of their hashes.
type hashRuns struct {
	rows, groups int64
	suspects     suspectSet
}

// rangeBits sets the size of the ranges findRuns looks at one at a time:
// about 2^rangeBits hashes, whose table (twice as many slots, 8 bytes
// each) a core's cache holds.
const rangeBits = 14

// findRuns finds the hashes that occur more than once, without a second
// copy of them all. It cuts the hash space into 2^b ranges by their top b
// bits, b chosen so that a range holds about 2^rangeBits of n uniform
// hashes; partitions each chunk in place by range with one stable
// counting pass (Knuth 1998, TAOCP vol. 3, §5.2.5; scratch of one chunk),
// which also counts each range's hashes; then, range by range, enters
// that range's hashes from every chunk into a hashTable of at least twice
// as many slots and sorts the hashes the table held already (repeats,
// few) to read off the runs. Ranges come in increasing order, so the
// suspects come out sorted. Time O(n) expected, memory beyond the hashes
// one chunk, one table and the repeats (a range holds every hash when a
// poor hash puts them all in one). The chunks are left partitioned.
func findRuns(chunks [][]uint64) *hashRuns {
	n, longest := 0, 0
	for _, ch := range chunks {
		n += len(ch)
		longest = max(longest, len(ch))
	}
	b := min(max(bits.Len(uint(n))-rangeBits, 0), 16)
	// top is the range of a hash: its top b bits (0 when b is 0, a shift
	// by 64 giving 0).
	top := func(h uint64) uint64 { return h >> (64 - b) }
	sizes := []int{n}
	if b > 0 {
		scratch := make([]uint64, longest)
		start := make([]int, 1<<b)
		sizes = make([]int, 1<<b)
		for _, ch := range chunks {
			clear(start)
			for _, h := range ch {
				start[top(h)]++
			}
			next := 0
			for k, m := range start {
				sizes[k] += m
				start[k] = next
				next += m
			}
			copy(scratch, ch)
			for _, h := range scratch[:len(ch)] {
				t := top(h)
				ch[start[t]] = h
				start[t]++
			}
		}
	}
	runs := &hashRuns{}
	var (
		suspects, repeats, scratch []uint64
		table                      hashTable
	)
	at := make([]int, len(chunks))
	for r, size := range sizes {
		if size < 2 {
			// A lone hash repeats nothing; skip it in its chunk.
			for k, ch := range chunks {
				if size == 0 {
					break
				}
				if j := at[k]; j < len(ch) && top(ch[j]) == uint64(r) {
					at[k]++
					size--
				}
			}
			continue
		}
		table.reset(size)
		repeats = repeats[:0]
		for k, ch := range chunks {
			j := at[k]
			for ; j < len(ch) && top(ch[j]) == uint64(r); j++ {
				if !table.add(ch[j]) {
					repeats = append(repeats, ch[j])
				}
			}
			at[k] = j
		}
		if len(repeats) == 0 {
			continue
		}
		if len(scratch) < len(repeats) {
			scratch = make([]uint64, len(repeats))
		}
		order.SortUint64(repeats, scratch)
		// A hash held m times in the repeats occurred m+1 times.
		for i := 0; i < len(repeats); {
			j := i + 1
			for j < len(repeats) && repeats[j] == repeats[i] {
				j++
			}
			runs.rows += int64(j - i + 1)
			runs.groups++
			suspects = append(suspects, repeats[i])
			i = j
		}
	}
	runs.suspects = newSuspectSet(suspects)
	return runs
}

// hashTable is a set of 64-bit hashes by open addressing with linear
// probing (Knuth 1998, TAOCP vol. 3, §6.4, Algorithm L), the slot of h
// being the top bits of h times 2^64/φ (Fibonacci hashing, §6.4), so that
// hashes alike in their top bits (one range of findRuns) or in their low
// bits spread over the slots. An empty slot holds 0; the hash 0 is kept
// apart.
type hashTable struct {
	slots []uint64
	shift uint
	zero  bool
}

// reset empties the table and makes room for n hashes in at least 2n
// slots, so that a probe meets on average fewer than three slots.
func (t *hashTable) reset(n int) {
	tb := bits.Len(uint(2*n - 1))
	if cap(t.slots) < 1<<tb {
		t.slots = make([]uint64, 1<<tb)
	}
	t.slots = t.slots[:1<<tb]
	clear(t.slots)
	t.shift = uint(64 - tb)
	t.zero = false
}

// add enters h and reports whether it was new.
func (t *hashTable) add(h uint64) bool {
	if h == 0 {
		was := t.zero
		t.zero = true
		return !was
	}
	mask := uint64(len(t.slots) - 1)
	for s := (h * 0x9e3779b97f4a7c15) >> t.shift; ; s = (s + 1) & mask {
		switch t.slots[s] {
		case 0:
			t.slots[s] = h
			return true
		case h:
			return false
		}
	}
}

// suspectSet is a sorted set of hashes with two indexes by their top bits.
// The hashes whose top b bits are t are hashes[start[t]:start[t+1]], 2^b
// being between half the set's size and its size; bit u of seen is set
// when some hash has u for its top b+4 bits. A hash not in the set finds
// its bit clear 15 times in 16 or more, so most rows, which are not
// suspects, cost one bit test that the branch predictor gets right; the
// others read two index entries and compare one or two hashes, the few
// runs that a poor hash makes long being binary-searched. Memory: 8 bytes
// a hash and at most 10 of index.
type suspectSet struct {
	hashes []uint64
	start  []int
	seen   []uint64
	shift  uint // 64-b
}

// seenBits is how many more top bits seen tells apart than start.
const seenBits = 4

func newSuspectSet(sorted []uint64) suspectSet {
	b := max(bits.Len(uint(len(sorted)))-1, 0)
	s := suspectSet{
		hashes: sorted,
		start:  make([]int, 1<<b+1),
		seen:   make([]uint64, (1<<(b+seenBits)+63)/64),
		shift:  uint(64 - b),
	}
	for _, h := range sorted {
		s.start[h>>s.shift+1]++
		u := h >> (s.shift - seenBits)
		s.seen[u/64] |= 1 << (u % 64)
	}
	for t := 1; t < len(s.start); t++ {
		s.start[t] += s.start[t-1]
	}
	return s
}

// seenBit is h's bit of seen, 1 when h may be in the set, 0 when it is
// not. Small enough to be inlined in a loop over a batch's hashes.
func (s *suspectSet) seenBit(h uint64) int {
	u := h >> (s.shift - seenBits)
	return int(s.seen[u/64] >> (u % 64) & 1)
}

// has reports whether h is in the set.
func (s *suspectSet) has(h uint64) bool {
	if s.seenBit(h) == 0 {
		return false
	}
	t := h >> s.shift
	lo, hi := s.start[t], s.start[t+1]
	if hi-lo > 8 {
		_, ok := slices.BinarySearch(s.hashes[lo:hi], h)
		return ok
	}
	for ; lo < hi; lo++ {
		if s.hashes[lo] >= h {
			return s.hashes[lo] == h
		}
	}
	return false
}

// DuplicateState is the exact outcome of unique and key: of Of values or
// rows, Rows belong to one of Groups values (combinations) that occur more
// than once. The measure is Rows/Of.
type DuplicateState struct {
	Of     int64
	Rows   int64
	Groups int64
}

// DuplicateAccumulator is the second pass of a unique or key rule.
type DuplicateAccumulator struct {
	DuplicateState
	check    *dupCheck
	suspects *suspectSet // shared, read only
	groups   map[string]*dupGroup
	scratch  hashScratch
	hashes   []uint64 // the hashes of one batch
	hits     []int    // the places in hashes of one batch's suspects
}

// dupGroup is the rows sharing one value's bytes.
type dupGroup struct {
	count int64
	rows  []rowRef // the first rows, at most MaxRowsListed, in row order
}

// rowRef locates a row for the listing.
type rowRef struct {
	row, line int64
	source    int
}

// Observe groups the batch's suspect rows by their bytes.
func (a *DuplicateAccumulator) Observe(b *source.Batch) error {
	limit := a.check.env.MaxRowsListed
	return a.eachSuspect(b, func(i int, key []byte) {
		g := a.groups[string(key)]
		if g == nil {
			g = &dupGroup{}
			a.groups[string(key)] = g
		}
		a.count(g.count, 1)
		g.count++
		if len(g.rows) < limit {
			g.rows = append(g.rows, rowRef{row: b.Row(i), line: b.Line(i), source: b.Source})
		}
	})
}

// eachSuspect calls f with the index and the bytes of every row of b that
// counts and whose hash is a suspect. The bytes are overwritten by the next
// call.
func (a *DuplicateAccumulator) eachSuspect(b *source.Batch, f func(i int, key []byte)) error {
	r, err := a.check.rows(b, &a.scratch)
	if err != nil {
		return err
	}
	a.hashes = a.check.appendHashes(slices.Grow(a.hashes[:0], r.count()), &r, &a.scratch)
	// Most rows are not suspects: their bit of seen is clear. The places
	// of the others are listed without a branch per row, then asked has.
	s := a.suspects
	hits := slices.Grow(a.hits[:0], len(a.hashes))[:len(a.hashes)]
	m := 0
	for j, h := range a.hashes {
		hits[m] = j
		m += s.seenBit(h)
	}
	hits = slices.DeleteFunc(hits[:m], func(j int) bool { return !s.has(a.hashes[j]) })
	a.hits = hits
	// Hash j belongs to the j-th row that counts (from 0): row j when
	// every row counts.
	i, j := -1, -1 // row i is the j-th that counts
	for _, hit := range hits {
		if r.counted.bits == nil {
			i = hit
		}
		for j < hit && r.counted.bits != nil {
			i++
			if r.counted.at(i) {
				j++
			}
		}
		a.scratch.buf = r.key(a.scratch.buf, i)
		f(i, a.scratch.buf)
	}
	return nil
}

// count updates Rows and Groups for a group of had rows that gains more.
func (a *DuplicateAccumulator) count(had, more int64) {
	dup := func(n int64) int64 {
		if n > 1 {
			return n
		}
		return 0
	}
	a.Rows += dup(had+more) - dup(had)
	if had < 2 && had+more >= 2 {
		a.Groups++
	}
}

// Merge folds other's groups into a. Both must come from the same first
// pass, whose Of they share.
func (a *DuplicateAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*DuplicateAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	for key, og := range o.groups {
		g := a.groups[key]
		if g == nil {
			g = &dupGroup{}
			a.groups[key] = g
		}
		// Add other's rows one group at a time: Rows and Groups then
		// count what the merged groups hold.
		a.count(g.count, og.count)
		g.count += og.count
		g.rows = append(g.rows, og.rows...)
		slices.SortFunc(g.rows, func(x, y rowRef) int { return cmp.Compare(x.row, y.row) })
		g.rows = g.rows[:min(len(g.rows), a.check.env.MaxRowsListed)]
	}
	return nil
}

// Finish judges the share of values (rows) in a duplicated group and lists
// the groups, largest first (then by first row), each with its rows in
// order, up to MaxRowsListed rows; a row's score is its group's size.
func (a *DuplicateAccumulator) Finish() report.Result {
	res := a.DuplicateState.result(a.check)
	limit := a.check.env.MaxRowsListed
	if res.Offending == nil || limit <= 0 {
		return res
	}
	var dups []*dupGroup
	keys := map[*dupGroup]string{}
	for k, g := range a.groups {
		if g.count > 1 {
			dups = append(dups, g)
			keys[g] = k
		}
	}
	slices.SortFunc(dups, func(x, y *dupGroup) int {
		if c := cmp.Compare(y.count, x.count); c != 0 {
			return c
		}
		return cmp.Compare(x.rows[0].row, y.rows[0].row)
	})
	for _, g := range dups {
		if len(res.Offending.Rows) >= limit {
			break
		}
		values := a.check.decode(keys[g])
		for _, r := range g.rows[:min(len(g.rows), limit-len(res.Offending.Rows))] {
			res.Offending.Rows = append(res.Offending.Rows, report.Row{
				Row:    r.row,
				Line:   r.line,
				Source: sourceName(a.check.env, r.source),
				Values: values,
				Score:  report.Number(g.count),
			})
		}
	}
	return res
}

// result judges the state.
func (s DuplicateState) result(c *dupCheck) report.Result {
	res := NewResult(c.rule, share(s.Rows, s.Of))
	what := "value"
	if c.key {
		what = "key"
	}
	res.Message = fmt.Sprintf("%s share their %s with another row", countOf(s.Rows, s.Of, c.noun), what)
	if s.Groups > 0 {
		res.Message += fmt.Sprintf(" (%s duplicated %s", thousands(s.Groups), what)
		if s.Groups > 1 {
			res.Message += "s"
		}
		res.Message += ")"
	}
	if s.Rows > 0 {
		res.Offending = &report.Offending{Count: s.Rows, Rows: []report.Row{}}
	}
	return res
}

// decode turns a row's bytes back into the values a listing shows, the way
// Value shows them.
func (c *dupCheck) decode(key string) map[string]any {
	values := make(map[string]any, len(c.cols))
	b := []byte(key)
	for _, col := range c.cols {
		tag := b[0]
		b = b[1:]
		switch {
		case tag == tagNull:
			values[col.name] = nil
		case tag == tagInvalid || col.class == classString:
			n, k := binary.Uvarint(b)
			values[col.name] = string(b[k : k+int(n)])
			b = b[k+int(n):]
		case col.class == classBoolean:
			values[col.name] = b[0] == 1
			b = b[1:]
		default:
			bits := binary.LittleEndian.Uint64(b)
			b = b[8:]
			switch col.class {
			case classNumber:
				values[col.name] = float(math.Float64frombits(bits))
			case classTime:
				values[col.name] = timeText(col.typ, int64(bits))
			default:
				values[col.name] = int64(bits)
			}
		}
	}
	return values
}
