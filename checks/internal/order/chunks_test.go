package order

import (
	"slices"
	"testing"
)

// TestChunks: values come out of Parts, Copy and Flatten in the order
// they were added, whatever the parts and splices; a spliced list is left empty; parts
// with much unused capacity are copied to their length.
func TestChunks(t *testing.T) {
	part := func(lo, n, spare int) []int64 {
		p := make([]int64, n, n+spare)
		for i := range p {
			p[i] = int64(lo + i)
		}
		return p
	}
	tests := []struct {
		name  string
		build func() *Chunks[int64]
		want  int
	}{
		{"empty", func() *Chunks[int64] { return &Chunks[int64]{} }, 0},
		{"one part", func() *Chunks[int64] {
			var c Chunks[int64]
			c.Add(part(0, 5, 0))
			return &c
		}, 5},
		{"empty parts dropped", func() *Chunks[int64] {
			var c Chunks[int64]
			c.Add(nil)
			c.Add(part(0, 3, 1))
			c.Add(part(3, 0, 4))
			c.Add(part(3, 4, 0))
			return &c
		}, 7},
		{"big parts apart, small ones joined", func() *Chunks[int64] {
			var c Chunks[int64]
			c.Add(part(0, smallPart+1, 0))
			c.Add(part(smallPart+1, 1, 0))
			c.Add(part(smallPart+2, 2*smallPart, 5))
			for lo := 3*smallPart + 2; lo < 6*smallPart; lo += 3 {
				c.Add(part(lo, min(3, 6*smallPart-lo), 0))
			}
			if len(c.parts) != 6 { // 3070 values in small parts fill 3 parts of at most smallPart
				t.Errorf("%d parts, want 3 and the small ones in 3", len(c.parts))
			}
			return &c
		}, 6 * smallPart},
		{"spliced", func() *Chunks[int64] {
			var a, b, d Chunks[int64]
			a.Add(part(0, 2, 0))
			b.Add(part(2, 3, 0))
			b.Add(part(5, 1, 9))
			d.Add(part(6, 4, 0))
			a.Splice(&b)
			a.Splice(&Chunks[int64]{})
			a.Splice(&d)
			if b.Len() != 0 || b.Flatten() != nil || d.Len() != 0 {
				t.Errorf("spliced lists hold %d and %d values, want none", b.Len(), d.Len())
			}
			return &a
		}, 10},
	}
	for _, tc := range tests {
		c := tc.build()
		if c.Len() != tc.want {
			t.Errorf("%s: Len %d, want %d", tc.name, c.Len(), tc.want)
		}
		for _, p := range c.parts {
			if len(p) > smallPart && cap(p)-len(p) > len(p)/8 {
				t.Errorf("%s: a part of %d values has capacity %d", tc.name, len(p), cap(p))
			}
		}
		want := part(0, tc.want, 0)
		var read []int64
		for _, p := range c.Parts() {
			read = append(read, p...)
		}
		if cp := c.Copy(); !slices.Equal(cp, want) || cap(cp) != tc.want || !slices.Equal(read, want) {
			t.Errorf("%s: Copy %v, parts %v, want %v", tc.name, cp, read, want)
		}
		got := c.Flatten()
		if !slices.Equal(got, want) || cap(got) != tc.want && tc.want > smallPart {
			t.Errorf("%s: Flatten %v (capacity %d), want %v", tc.name, got, cap(got), want)
		}
		if again := c.Flatten(); !slices.Equal(again, want) || c.Len() != tc.want {
			t.Errorf("%s: second Flatten %v, want %v", tc.name, again, want)
		}
	}
}
