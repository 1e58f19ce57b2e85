package checks

import (
	"fmt"
	"hash/maphash"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// poorHashes are row hashes that collide far more than a real one, each
// with its name; nil stands for the check's own seeded hash.
var poorHashes = []struct {
	name string
	hash func([]byte) uint64
}{
	{"seeded", nil},
	{"constant", func([]byte) uint64 { return 42 }},
	{"length", func(b []byte) uint64 { return uint64(len(b)) }},
	{"last byte", func(b []byte) uint64 { return uint64(b[len(b)-1]) }},
	{"top bits only", func(b []byte) uint64 { return maphash.Bytes(fixedSeed, b) &^ (1<<60 - 1) }},
}

var fixedSeed = maphash.MakeSeed()

// randomColumn draws n cells of typ from a small domain, so values repeat,
// with about 10% missing and 5% that did not parse.
func randomColumn(rng *rand.Rand, name string, typ arrow.DataType, n int) col {
	c := col{name: name, typ: typ}
	for range n {
		var v any
		switch k := rng.IntN(20); {
		case k < 2:
			v = nil
		case k < 3:
			v = bad(fmt.Sprintf("?%d", rng.IntN(3)))
		case typ == tFloat:
			v = []float64{0, math.Copysign(0, -1), math.NaN(), 1.5, -2, 1e300}[rng.IntN(6)]
		case typ == tString:
			v = strings.Repeat("ab", rng.IntN(4)) + fmt.Sprint(rng.IntN(5))
		default:
			v = rng.IntN(40) - 20
		}
		c.vals = append(c.vals, v)
	}
	return c
}

// cellText is how duplicates tell cells apart, written out the slow way:
// one NaN, -0 as 0, a cell that did not parse by its text (key) or not at
// all (unique).
func cellText(v any) (string, bool) {
	switch x := v.(type) {
	case nil:
		return "null", true
	case bad:
		return "bad " + string(x), true
	case float64:
		switch {
		case math.IsNaN(x):
			return "NaN", true
		case x == 0:
			return "0", true
		}
	}
	return fmt.Sprintf("%T %v", v, v), true
}

// bruteDuplicates counts, of the rows that count, those whose value (or
// combination) occurs more than once, and the distinct such values.
func bruteDuplicates(cols []col, key bool) DuplicateState {
	seen := map[string]int64{}
	var s DuplicateState
	for i := range cols[0].vals {
		if v := cols[0].vals[i]; !key && (v == nil || fmt.Sprintf("%T", v) == "checks.bad") {
			continue
		}
		var parts []string
		for _, c := range cols {
			t, _ := cellText(c.vals[i])
			parts = append(parts, t)
		}
		seen[strings.Join(parts, "|")]++
		s.Of++
	}
	for _, m := range seen {
		if m > 1 {
			s.Rows += m
			s.Groups++
		}
	}
	return s
}

// randomBatches cuts n random rows of cols into batches of random sizes.
func randomBatches(t *testing.T, mem memory.Allocator, rng *rand.Rand, cols []col) []*source.Batch {
	t.Helper()
	var bs []*source.Batch
	for lo := 0; lo < len(cols[0].vals); {
		hi := min(lo+1+rng.IntN(40), len(cols[0].vals))
		part := make([]col, len(cols))
		for k, c := range cols {
			part[k] = col{c.name, c.typ, c.vals[lo:hi]}
		}
		bs = append(bs, newBatch(t, mem, int64(lo+1), part...))
		lo = hi
	}
	release(t, bs...)
	return bs
}

// TestDuplicatesExact counts duplicates on random data with repeats,
// missing values and cells that did not parse, spread over many batches,
// against a count by the values themselves: with the seeded hashes the
// first pass is already exact, with poor ones it can only count too many,
// and the second pass is exact whatever the hash.
func TestDuplicatesExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	const n = 300
	cases := []struct {
		kind  string
		cols  []col
		words bool
	}{
		{"unique", []col{randomColumn(rng, "i", tInt, n)}, true},
		{"unique", []col{randomColumn(rng, "x", tFloat, n)}, true},
		{"unique", []col{randomColumn(rng, "t", tTime, n)}, true},
		{"unique", []col{randomColumn(rng, "s", tString, n)}, false},
		{"key", []col{randomColumn(rng, "i", tInt, n)}, true},
		{"key", []col{randomColumn(rng, "x", tFloat, n)}, true},
		{"key", []col{randomColumn(rng, "s", tString, n)}, false},
		{"key", []col{randomColumn(rng, "i", tInt, n), randomColumn(rng, "s", tString, n)}, false},
	}
	for _, tc := range cases {
		var names []string
		for _, c := range tc.cols {
			names = append(names, c.name)
		}
		mem := checkedMem(t)
		bs := randomBatches(t, mem, rng, tc.cols)
		want := bruteDuplicates(tc.cols, tc.kind == "key")
		if want.Groups < 3 {
			t.Fatalf("%s %v: the data repeats too little (%+v) to test anything", tc.kind, names, want)
		}
		for _, h := range poorHashes {
			t.Run(fmt.Sprintf("%s %v %s hash", tc.kind, names, h.name), func(t *testing.T) {
				var spec rules.Spec = rules.UniqueSpec{}
				if tc.kind == "key" {
					spec = rules.KeySpec{}
				}
				c := compile(t, newRule(spec, atMost(0), names...), envOf(bs[0], 5))
				if got := c.(*dupCheck).words; got != tc.words {
					t.Errorf("hashed from the value's bits: %v, want %v", got, tc.words)
				}
				if h.hash != nil {
					hashes(t, c, h.hash)
				}
				first := c.NewAccumulator().(*HashAccumulator)
				observe(t, first, bs...)
				runs := first.found()
				if h.hash == nil && (runs.rows != want.Rows || runs.groups != want.Groups) {
					t.Errorf("first pass counts %d rows in %d groups, want %d in %d", runs.rows, runs.groups, want.Rows, want.Groups)
				}
				if runs.rows < want.Rows {
					t.Errorf("first pass counts %d rows, fewer than the %d duplicated", runs.rows, want.Rows)
				}
				second := first.SecondPass().(*DuplicateAccumulator)
				observe(t, second, bs...)
				if second.DuplicateState != want {
					t.Errorf("second pass %+v, want %+v", second.DuplicateState, want)
				}
			})
		}
	}
}

// TestDuplicatesMergeInterleaved: two accumulators that saw the even and
// the odd batches, merged, hold the same hashes as one that saw them all
// and give the same results in both passes (the second pass also split
// between two accumulators taken from the merged first pass).
func TestDuplicatesMergeInterleaved(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	const n = 400
	mem := checkedMem(t)
	cols := []col{randomColumn(rng, "i", tInt, n), randomColumn(rng, "x", tFloat, n), randomColumn(rng, "s", tString, n)}
	bs := randomBatches(t, mem, rng, cols)
	for _, tc := range []struct {
		name string
		rule *rules.Rule
	}{
		{"key int", newRule(rules.KeySpec{}, atMost(0), "i")},
		{"unique float", newRule(rules.UniqueSpec{}, atMost(0), "x")},
		{"key three columns", newRule(rules.KeySpec{}, atMost(0), "s", "i", "x")},
	} {
		for _, h := range poorHashes {
			t.Run(tc.name+" "+h.name+" hash", func(t *testing.T) {
				c := compile(t, tc.rule, envOf(bs[0], 7))
				if h.hash != nil {
					hashes(t, c, h.hash)
				}
				one := c.NewAccumulator().(*HashAccumulator)
				observe(t, one, bs...)
				// halves observes the even batches into one accumulator,
				// the odd ones into another, and merges them.
				halves := func(make func() Accumulator) Accumulator {
					even, odd := make(), make()
					for i, b := range bs {
						observe(t, []Accumulator{even, odd}[i%2], b)
					}
					if err := even.Merge(odd); err != nil {
						t.Fatalf("Merge: %v", err)
					}
					return even
				}
				merged := halves(c.NewAccumulator).(*HashAccumulator)
				sorted := func(a *HashAccumulator) []uint64 {
					all := slices.Concat(a.Hashes...)
					if int64(len(all)) != a.Of {
						t.Errorf("%d hashes kept for Of %d", len(all), a.Of)
					}
					slices.Sort(all)
					return all
				}
				if merged.Of != one.Of || !slices.Equal(sorted(merged), sorted(one)) {
					t.Errorf("merged halves hold %d hashes, not the %d of one accumulator", merged.Of, one.Of)
				}
				sameResult(t, "first pass", merged.Finish(), one.Finish(), 0)
				whole := one.SecondPass()
				observe(t, whole, bs...)
				split := halves(merged.SecondPass)
				sameResult(t, "second pass", split.Finish(), whole.Finish(), 0)
			})
		}
	}
}

// TestDuplicatesObserveAfterMerge: an accumulator that merged another and
// then observes more keeps other's hashes as they were.
func TestDuplicatesObserveAfterMerge(t *testing.T) {
	mem := checkedMem(t)
	b1 := newBatch(t, mem, 1, col{"i", tInt, []any{1, 2, 3}})
	b2 := newBatch(t, mem, 4, col{"i", tInt, []any{4, 5}})
	b3 := newBatch(t, mem, 6, col{"i", tInt, []any{1, 4}})
	release(t, b1, b2, b3)
	c := compile(t, newRule(rules.KeySpec{}, atMost(0), "i"), envOf(b1, 10))
	a, o := c.NewAccumulator().(*HashAccumulator), c.NewAccumulator().(*HashAccumulator)
	observe(t, a, b1)
	observe(t, o, b2)
	kept := slices.Clone(o.Hashes[0])
	if err := a.Merge(o); err != nil {
		t.Fatal(err)
	}
	observe(t, a, b3)
	if !slices.Equal(o.Hashes[0], kept) || cap(o.Hashes[0]) < 1 {
		t.Errorf("other's hashes changed from %v to %v", kept, o.Hashes[0])
	}
	if res := run(t, c, b1, b2, b3); res.Offending == nil || res.Offending.Count != 4 {
		t.Fatalf("one accumulator: %+v, want 4 rows", res.Offending)
	}
	second := a.SecondPass()
	observe(t, second, b1, b2, b3)
	if d := second.(*DuplicateAccumulator).DuplicateState; d != (DuplicateState{Of: 7, Rows: 4, Groups: 2}) {
		t.Errorf("merged then observed: %+v, want {7 4 2}", d)
	}
}

// TestFindRuns checks the sort by ranges against a count in a map, with
// enough hashes to cut the hash space into ranges, in chunks of uneven
// sizes, on uniform hashes with planted repeats and on hashes crowded into
// one range or a few values.
func TestFindRuns(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const n = 5 << rangeBits
	shapes := []struct {
		name string
		draw func() uint64
	}{
		{"uniform", rng.Uint64},
		{"one range", func() uint64 { return rng.Uint64() >> 20 }},
		{"few values", func() uint64 { return uint64(rng.IntN(50)) << 40 }},
		{"top and bottom", func() uint64 { return []uint64{0, math.MaxUint64}[rng.IntN(2)] ^ uint64(rng.IntN(1000)) }},
	}
	for _, s := range shapes {
		for _, chunkMost := range []int{1, 100, 1 << 16} {
			var chunks [][]uint64
			counts := map[uint64]int64{}
			var prev []uint64
			for left := n; left > 0; {
				ch := make([]uint64, min(left, 1+rng.IntN(chunkMost)))
				for i := range ch {
					if len(prev) > 0 && rng.IntN(10) == 0 {
						ch[i] = prev[rng.IntN(len(prev))]
					} else {
						ch[i] = s.draw()
					}
					counts[ch[i]]++
				}
				prev = ch
				chunks = append(chunks, ch)
				left -= len(ch)
			}
			var want hashRuns
			var suspects []uint64
			for h, m := range counts {
				if m > 1 {
					want.rows += m
					want.groups++
					suspects = append(suspects, h)
				}
			}
			slices.Sort(suspects)
			got := findRuns(chunks)
			if got.rows != want.rows || got.groups != want.groups || !slices.Equal(got.suspects.hashes, suspects) {
				t.Errorf("%s, chunks up to %d: %d rows in %d groups (%d suspects), want %d in %d (%d)", s.name, chunkMost,
					got.rows, got.groups, len(got.suspects.hashes), want.rows, want.groups, len(suspects))
			}
			if again := findRuns(chunks); again.rows != got.rows || !slices.Equal(again.suspects.hashes, suspects) {
				t.Errorf("%s: a second findRuns on the partitioned chunks differs", s.name)
			}
		}
	}
}

// TestSuspectSet asks the set about every member and about as many
// non-members, for sizes around its index's steps and for members crowded
// under one top-bit prefix (the binary-searched case).
func TestSuspectSet(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for _, crowd := range []uint{0, 40} {
		for _, size := range []int{0, 1, 2, 3, 9, 100, 1000, 50000} {
			members := map[uint64]bool{}
			var sorted []uint64
			for len(sorted) < size {
				h := rng.Uint64() >> crowd
				if !members[h] {
					members[h] = true
					sorted = append(sorted, h)
				}
			}
			slices.Sort(sorted)
			s := newSuspectSet(sorted)
			for _, h := range sorted {
				if !s.has(h) {
					t.Fatalf("size %d crowd %d: member %#x not found", size, crowd, h)
				}
			}
			probes := []uint64{0, math.MaxUint64}
			for range max(size, 100) {
				probes = append(probes, rng.Uint64()>>crowd)
			}
			for _, h := range sorted {
				probes = append(probes, h+1, h-1)
			}
			for _, h := range probes {
				if s.has(h) != members[h] {
					t.Fatalf("size %d crowd %d: has(%#x) = %v, want %v", size, crowd, h, s.has(h), members[h])
				}
			}
		}
	}
}

// TestDuplicatesSecondPassOnlyWhenNeeded: with no hash repeated the first
// pass is exact and asks for no second one; a collision between different
// values asks for one, which finds nothing.
func TestDuplicatesSecondPassOnlyWhenNeeded(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"i", tInt, []any{1, 2, nil, 3}}, col{"s", tString, []any{"a", "b", "c", nil}})
	release(t, b)
	for _, tc := range []struct {
		name   string
		rule   *rules.Rule
		hash   func([]byte) uint64
		second bool
	}{
		{"unique int", newRule(rules.UniqueSpec{}, atMost(0), "i"), nil, false},
		{"key int, one missing", newRule(rules.KeySpec{}, atMost(0), "i"), nil, false},
		{"key two columns", newRule(rules.KeySpec{}, atMost(0), "i", "s"), nil, false},
		{"unique string, colliding", newRule(rules.UniqueSpec{}, atMost(0), "s"), func([]byte) uint64 { return 1 }, true},
		{"key int, colliding", newRule(rules.KeySpec{}, atMost(0), "i"), func([]byte) uint64 { return 1 }, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, tc.rule, envOf(b, 10))
			if tc.hash != nil {
				hashes(t, c, tc.hash)
			}
			first := c.NewAccumulator().(*HashAccumulator)
			observe(t, first, b)
			second := first.SecondPass()
			if (second != nil) != tc.second {
				t.Fatalf("second pass %v, want one: %v", second, tc.second)
			}
			res := first.Finish()
			if second != nil {
				observe(t, second, b)
				res = second.Finish()
			}
			if res.Measure.Value != 0 || res.Offending != nil || !strings.HasPrefix(res.Message, "none of ") || strings.Contains(res.Message, "hash") {
				t.Errorf("result %v %+v %q, want 0, nothing listed, none", res.Measure.Value, res.Offending, res.Message)
			}
		})
	}
}
