package checks

import (
	"maps"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
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
		{"empty and lone ranges", crowded(3<<62|1, 2<<62|4, 2<<62|4), n - 1 + 2, n/2 + 1, append(seq(1, n/2), 2<<62|4)},
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
func seq(lo, hi uint64) []uint64 {
	var out []uint64
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
