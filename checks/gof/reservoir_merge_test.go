package gof

import (
	"math"
	"slices"
	"testing"
)

// TestReservoirMergeInterleaved: reservoirs fed interleaved batches of a
// stream (batch i to reservoir i mod w, as the engine deals batches to
// workers) merge, while together they hold every value, into the values
// one reservoir fed the whole stream holds, in the same order; past the
// size they merge into a sample of the right size drawn from the stream.
func TestReservoirMergeInterleaved(t *testing.T) {
	tests := []struct {
		name           string
		size, n, batch int
		gap            int // positions skipped after each batch (rows without a value)
		workers        int
	}{
		{"two workers", 100, 90, 10, 0, 2},
		{"three workers, uneven last batch", 100, 95, 7, 0, 3},
		{"positions with gaps", 100, 80, 8, 3, 2},
		{"exactly full", 60, 60, 6, 0, 2},
		{"one worker saw nothing", 100, 10, 10, 0, 2},
		{"more workers than batches", 50, 20, 10, 0, 4},
		{"sampled", 50, 1000, 16, 1, 3},
		{"runs across pieces of 64k", 200_000, 190_000, 30_000, 0, 3},
		{"four lanes of 64k batches", 1_000_000, 1_000_000, 1 << 16, 0, 4},
		{"sampled across pieces", 100_000, 400_000, 1 << 16, 2, 4},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			one, _ := NewReservoir(tc.size, 7)
			shards := make([]*Reservoir, tc.workers)
			for w := range shards {
				shards[w], _ = NewReservoir(tc.size, uint64(100+w))
			}
			var stream []float64
			pos := int64(0)
			for i, k := 0, 0; i < tc.n; i, k = i+tc.batch, k+1 {
				vs := seq(i, min(i+tc.batch, tc.n))
				stream = append(stream, vs...)
				one.AddAllAt(pos, vs)
				shards[k%tc.workers].AddAllAt(pos, vs)
				pos += int64(len(vs) + tc.gap)
			}
			for _, s := range shards[1:] {
				if err := shards[0].Merge(s); err != nil {
					t.Fatal(err)
				}
			}
			got, want := shards[0].Values(), one.Values()
			if shards[0].Seen() != int64(tc.n) || shards[0].Complete() != one.Complete() {
				t.Fatalf("merged: seen %d complete %v, want %d %v", shards[0].Seen(), shards[0].Complete(), tc.n, one.Complete())
			}
			if one.Complete() {
				if !slices.Equal(got, want) {
					t.Errorf("merged values\n%v\nwant\n%v", got, want)
				}
				return
			}
			if len(got) != tc.size {
				t.Fatalf("merged sample of %d values, want %d", len(got), tc.size)
			}
			sorted := slices.Clone(got)
			slices.Sort(sorted)
			for i, v := range sorted {
				if _, in := slices.BinarySearch(stream, v); !in || i > 0 && sorted[i-1] == v {
					t.Fatalf("merged sample holds %v, not a distinct value of the stream", v)
				}
			}
		})
	}
}

// TestReservoirAddAllContinues: AddAll places its values after the ones
// offered before, so a reservoir fed by AddAll alone merges as it always
// did: the receiver's values, then the other's.
func TestReservoirAddAllContinues(t *testing.T) {
	a, _ := NewReservoir(100, 1)
	b, _ := NewReservoir(100, 2)
	a.AddAll(seq(0, 5))
	a.AddAll(seq(5, 9))
	a.Add(9)
	b.AddAll(seq(10, 20))
	if err := a.Merge(b); err != nil {
		t.Fatal(err)
	}
	if got := a.Values(); !slices.Equal(got, seq(0, 20)) {
		t.Errorf("merged %v, want 0..19", got)
	}
}

// TestChunks: values stored in pieces read back in order, across piece
// boundaries, and set replaces the value at its index.
func TestChunks(t *testing.T) {
	tests := []struct {
		name    string
		size    int
		batches []int // lengths of successive adds
	}{
		{"small reservoir, one piece", 500, []int{100, 400}},
		{"exactly one piece", chunkLen, []int{chunkLen}},
		{"across pieces in one add", 3*chunkLen + 7, []int{3*chunkLen + 7}},
		{"across pieces in odd adds", 2*chunkLen + 1, []int{1000, chunkLen, chunkLen - 999}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var c chunks
			var want []float64
			for _, n := range tc.batches {
				vs := seq(len(want), len(want)+n)
				c.add(vs, tc.size)
				want = append(want, vs...)
			}
			for _, i := range []int{0, chunkLen - 1, chunkLen, len(want) - 1} {
				if i < len(want) {
					c.apply([]replacement{{i, -float64(i)}})
					want[i] = -float64(i)
				}
			}
			if got := c.all(); c.n != len(want) || !slices.Equal(got, want) {
				t.Errorf("%d values read back differently (n %d)", len(want), c.n)
			}
			for k, p := range c.parts[:len(c.parts)-1] {
				if len(p) != chunkLen {
					t.Errorf("piece %d of %d holds %d values, want %d", k, len(c.parts), len(p), chunkLen)
				}
			}
		})
	}
}

// mergeByCopy is Merge's sampling branch as first written: both samples
// copied out, picked by the plain partial Fisher-Yates loop, and copied
// into new pieces. Merge must draw and keep exactly the same.
func mergeByCopy(r, other *Reservoir) {
	total := r.seen + other.seen
	r.runs = nil
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
	pick := func(c []float64, k int) []float64 {
		for i := range k {
			p := i + r.rng.IntN(len(c)-i)
			c[i], c[p] = c[p], c[i]
		}
		return c[:k]
	}
	a := pick(r.items.all(), j)
	b := pick(other.items.all(), r.size-j)
	r.items = chunks{}
	r.items.add(a, r.size)
	r.items.add(b, r.size)
	r.seen = total
	r.resume()
}

// TestReservoirMergeSameDraws: Merge, which picks the receiver's subset in
// place and draws places a block at a time, keeps the values, in the same
// order, that the plain copying merge keeps, leaves the other reservoir
// unchanged, and leaves the generator and Algorithm L where the plain one
// does (the same values are kept from what is offered next). Sizes across
// a piece (64k), receivers not full, and one side that hardly weighs.
func TestReservoirMergeSameDraws(t *testing.T) {
	tests := []struct {
		name         string
		size, na, nb int
		after        int
	}{
		{"small", 10, 25, 40, 100},
		{"one", 1, 3, 5, 50},
		{"receiver not full", 1000, 10, 5000, 3000},
		{"other not full", 1000, 5000, 3, 3000},
		{"across pieces", 150_000, 400_000, 300_000, 200_000},
		{"more than a block", 700, 900, 2500, 1000},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			fill := func(seed uint64, from, n int) *Reservoir {
				r, _ := NewReservoir(tc.size, seed)
				for pos := from; pos < from+n; pos += 1000 {
					r.AddAllAt(int64(pos), seq(pos, min(pos+1000, from+n)))
				}
				return r
			}
			got, want := fill(1, 0, tc.na), fill(1, 0, tc.na)
			other := fill(2, tc.na, tc.nb)
			before := other.Values()
			if err := got.Merge(other); err != nil {
				t.Fatal(err)
			}
			mergeByCopy(want, fill(2, tc.na, tc.nb))
			if !slices.Equal(got.Values(), want.Values()) || got.Seen() != want.Seen() {
				t.Fatalf("merged sample differs from the plain merge's (seen %d, %d)", got.Seen(), want.Seen())
			}
			if !slices.Equal(other.Values(), before) {
				t.Errorf("Merge changed the other reservoir")
			}
			more := seq(tc.na+tc.nb, tc.na+tc.nb+tc.after)
			got.AddAll(more)
			want.AddAll(more)
			if !slices.Equal(got.Values(), want.Values()) {
				t.Errorf("after %d more values the samples differ", tc.after)
			}
		})
	}
}

// addPlain is AddAllAt as first written, writing each replacement as it
// is drawn. AddAllAt, which writes them a block at a time, must keep the
// same sample.
func addPlain(r *Reservoir, pos int64, vs []float64) {
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
		gap := r.next - r.seen - 1
		if gap >= int64(len(vs)) {
			r.seen += int64(len(vs))
			return
		}
		r.seen += gap + 1
		r.items.apply([]replacement{{r.rng.IntN(r.size), vs[gap]}})
		vs = vs[gap+1:]
		r.w *= math.Exp(math.Log(r.uniform()) / float64(r.size))
		r.skip()
	}
}

// TestReservoirAddSameSample: AddAllAt keeps, value for value and in
// order, the sample the plain loop keeps, for batches smaller and larger
// than a block of replacements, and a reservoir of one.
func TestReservoirAddSameSample(t *testing.T) {
	tests := []struct {
		name           string
		size, n, batch int
	}{
		{"batches of 1", 50, 3000, 1},
		{"batches of 64k", 100_000, 1_000_000, 1 << 16},
		{"one batch", 1000, 200_000, 200_000},
		{"size one", 1, 10_000, 333},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, _ := NewReservoir(tc.size, 9)
			want, _ := NewReservoir(tc.size, 9)
			for pos := 0; pos < tc.n; pos += tc.batch {
				vs := seq(pos, min(pos+tc.batch, tc.n))
				got.AddAllAt(int64(pos), vs)
				addPlain(want, int64(pos), vs)
			}
			if !slices.Equal(got.Values(), want.Values()) || got.Seen() != want.Seen() || got.w != want.w || got.next != want.next {
				t.Errorf("sample differs from the plain loop's")
			}
		})
	}
}
