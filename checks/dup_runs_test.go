package checks

import (
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/assay-project/assay/rules"
)

// TestFindRunsCases checks findRuns on hand-made hashes: the hash 0 (the
// table's empty slot, kept apart), runs of two and more, and enough
// hashes (2¹⁵, four ranges) that some ranges hold none or one hash and
// are skipped, one holds two equal ones, and the rest crowd into range 0.
func TestFindRunsCases(t *testing.T) {
	crowded := func(extra ...uint64) [][]uint64 {
		ch := make([]uint64, 0, 1<<15)
		for i := range uint64(1<<15 - len(extra)) {
			ch = append(ch, i/2+1) // range 0, every hash twice (an odd count leaves one alone)
		}
		return [][]uint64{append(ch, extra...)}
	}
	const n = 1<<15 - 3
	cases := []struct {
		name     string
		chunks   [][]uint64
		rows     int64
		groups   int64
		suspects []uint64
	}{
		{"none", nil, 0, 0, nil},
		{"one", [][]uint64{{7}}, 0, 0, nil},
		{"distinct", [][]uint64{{3, 1}, {2}}, 0, 0, nil},
		{"zero twice", [][]uint64{{0}, {5, 0}}, 2, 1, []uint64{0}},
		{"zero once", [][]uint64{{0, 5}, {5}}, 2, 1, []uint64{5}},
		{"runs of two and three", [][]uint64{{0, 5, 9}, {5, 0, 5}, {math.MaxUint64, math.MaxUint64}}, 7, 3, []uint64{0, 5, math.MaxUint64}},
		{"empty and lone ranges", crowded(3<<62|1, 2<<62|4, 2<<62|4), n - 1 + 2, n/2 + 1, append(seq[uint64](1, n/2), 2<<62|4)},
	}
	for _, tc := range cases {
		got := findRuns(tc.chunks)
		if got.rows != tc.rows || got.groups != tc.groups || !slices.Equal(got.suspects.hashes, tc.suspects) {
			t.Errorf("%s: %d rows in %d groups, %d suspects; want %d in %d, %d", tc.name,
				got.rows, got.groups, len(got.suspects.hashes), tc.rows, tc.groups, len(tc.suspects))
		}
	}
}

// seq returns lo, lo+1, ..., hi.
func seq[T int | uint64](lo, hi T) []T {
	var out []T
	for x := lo; x <= hi; x++ {
		out = append(out, x)
	}
	return out
}

// TestHashTable enters hashes of several shapes into a hashTable, reset
// between shapes, and compares what add reports with a map: whether each
// hash was new.
func TestHashTable(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	shapes := []struct {
		name string
		draw func() uint64
	}{
		{"uniform", rng.Uint64},
		{"small", func() uint64 { return uint64(rng.IntN(3000)) }},
		{"low bits alike", func() uint64 { return uint64(rng.IntN(3000)) << 50 }},
		{"top bits alike", func() uint64 { return 5<<60 | uint64(rng.IntN(3000)) }},
		{"with zero", func() uint64 { return uint64(rng.IntN(3)) }},
	}
	var tab hashTable
	for _, s := range shapes {
		for _, n := range []int{1, 2, 3, 1000, 4000} {
			hs := make([]uint64, n)
			for i := range hs {
				hs[i] = s.draw()
			}
			tab.reset(n)
			seen := map[uint64]bool{}
			for _, h := range hs {
				if got, want := tab.add(h), !seen[h]; got != want {
					t.Fatalf("%s, %d hashes: add(%#x) = %v, want %v", s.name, n, h, got, want)
				}
				seen[h] = true
			}
			held := slices.Sorted(maps.Keys(seen))
			for _, h := range held {
				if tab.add(h) {
					t.Errorf("%s, %d hashes: %#x entered again is new", s.name, n, h)
				}
			}
			if len(tab.slots) < 2*n {
				t.Errorf("%s: %d slots for %d hashes, want at least %d", s.name, len(tab.slots), n, 2*n)
			}
		}
	}
}

// TestEachSuspectRows checks which rows eachSuspect hands on, and their
// bytes, for unique and key rules over columns with nulls in several
// places (the rows that count are then not the batch's rows), with the
// seeded hash (the duplicated values' rows) and a constant one (every row
// that counts).
func TestEachSuspectRows(t *testing.T) {
	mem := checkedMem(t)
	patterns := []struct {
		name string
		vals []any
	}{
		{"no nulls", []any{1, 2, 3, 2, 5, 1, 7}},
		{"nulls between", []any{1, nil, 2, nil, nil, 2, 3, nil, 1}},
		{"leading nulls", []any{nil, nil, nil, 4, 4, 5}},
		{"trailing nulls", []any{6, 7, 6, nil, nil}},
		{"two values", []any{nil, 8, nil, nil, 8, nil}},
		{"all null", []any{nil, nil, nil}},
	}
	for _, p := range patterns {
		b := newBatch(t, mem, 1, col{"n", tInt, p.vals})
		release(t, b)
		for _, key := range []bool{false, true} {
			for _, constant := range []bool{false, true} {
				var spec rules.Spec = rules.UniqueSpec{}
				if key {
					spec = rules.KeySpec{}
				}
				c := compile(t, newRule(spec, atMost(0), "n"), envOf(b, 100))
				if constant {
					hashes(t, c, func([]byte) uint64 { return 1 })
				}
				counts := map[any]int{}
				for _, v := range p.vals {
					counts[v]++
				}
				var want []int
				for i, v := range p.vals {
					if (v != nil || key) && (constant || counts[v] > 1) {
						want = append(want, i)
					}
				}
				first := c.NewAccumulator().(*HashAccumulator)
				observe(t, first, b)
				var got []int
				if second, ok := first.SecondPass().(*DuplicateAccumulator); ok {
					err := second.eachSuspect(b, func(i int, bytes []byte) {
						got = append(got, i)
						if v := c.(*dupCheck).decode(string(bytes))["n"]; v != nil && v != int64(p.vals[i].(int)) || v == nil && p.vals[i] != nil {
							t.Errorf("%s, key %v: row %d decodes to %v, holds %v", p.name, key, i, v, p.vals[i])
						}
					})
					if err != nil {
						t.Fatal(err)
					}
				}
				if !slices.Equal(got, want) {
					t.Errorf("%s, key %v, constant hash %v: rows %v, want %v", p.name, key, constant, got, want)
				}
			}
		}
	}
}
