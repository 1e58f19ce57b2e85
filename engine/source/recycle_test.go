package source

import (
	"context"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// TestSizeClass checks the size classes on sizes around their bounds: a
// class holds the size asked, wastes at most a quarter of it (64 bytes for
// the smallest), is the class of its own size, and classes grow with
// sizes.
func TestSizeClass(t *testing.T) {
	tests := []struct {
		n, class, size int
	}{
		{0, 0, 64}, {1, 0, 64}, {64, 0, 64}, {65, 1, 80}, {80, 1, 80}, {81, 2, 96},
		{128, 4, 128}, {129, 5, 160}, {262148, 4*12 + 1, 327680}, {1 << 19, 4 * 13, 1 << 19},
		{1 << maxClassBits, numClasses - 1, 1 << maxClassBits}, {1<<maxClassBits + 1, numClasses, 5 << (maxClassBits - 2)},
	}
	for _, tc := range tests {
		if c, s := sizeClass(tc.n); c != tc.class || s != tc.size {
			t.Errorf("sizeClass(%d) = %d, %d; want %d, %d", tc.n, c, s, tc.class, tc.size)
		}
	}
	prev := 0
	for n := 1; n <= 1<<20; n += 1 + n/97 {
		c, s := sizeClass(n)
		if s < n || (n > 64 && 4*s > 5*n+4*(s/8)) || c < prev {
			t.Fatalf("sizeClass(%d) = %d, %d after class %d", n, c, s, prev)
		}
		if c2, s2 := sizeClass(s); c2 != c || s2 != s {
			t.Fatalf("sizeClass(%d) = %d, %d; its size's class is %d, %d", n, c, s, c2, s2)
		}
		prev = c
	}
}

// countingMem counts the allocations that reach an allocator.
type countingMem struct {
	*memory.CheckedAllocator
	allocs int
}

func (m *countingMem) Allocate(n int) []byte {
	m.allocs++
	return m.CheckedAllocator.Allocate(n)
}

// TestRecycler checks that a freed buffer serves the next allocation of
// its class (or, in poison mode, is overwritten and given back), that
// growing within the class stays in place, that no more than
// recycleLimit bytes are kept, and that close gives everything back.
func TestRecycler(t *testing.T) {
	mem := &countingMem{CheckedAllocator: checkedMem(t)}
	r := newRecycler(mem)
	a := r.Allocate(1000)
	if poisonFreed {
		if len(a) != 1000 || a[999] != fillByte {
			t.Fatalf("poison mode: Allocate(1000) gave %d bytes ending in %#x; want 1000 of %#x", len(a), a[len(a)-1], fillByte)
		}
	} else if len(a) != 1000 || cap(a) != 1024 {
		t.Fatalf("Allocate(1000) gave len %d, cap %d; want 1000, 1024", len(a), cap(a))
	}
	a[0] = 7
	grown := 1020 // within the class
	if poisonFreed {
		grown = 1000 // poison mode allocates exact sizes
	}
	if b := r.Reallocate(grown, a); &b[0] != &a[0] || len(b) != grown || b[0] != 7 {
		t.Errorf("Reallocate within the buffer moved it or lost its bytes")
	}
	big := r.Reallocate(5000, a)
	if big[0] != 7 || len(big) != 5000 {
		t.Errorf("Reallocate to another class lost the bytes")
	}
	c := r.Allocate(900) // a's class again: a was freed by the move
	if poisonFreed {
		if &c[0] == &a[0] || a[0] != poisonByte {
			t.Errorf("poison mode: a freed buffer was reused or not overwritten")
		}
	} else if &c[0] != &a[0] {
		t.Errorf("the freed buffer was not reused")
	}
	r.Free(c)
	r.Free(big)
	var held [][]byte
	for range 2 * recycleLimit / (1 << 20) {
		held = append(held, r.Allocate(1<<20))
	}
	for _, b := range held {
		r.Free(b)
	}
	if r.kept > recycleLimit {
		t.Errorf("%d bytes kept; the limit is %d", r.kept, recycleLimit)
	}
	huge := r.Allocate(1<<maxClassBits + 1)
	r.Free(huge)
	r.close()
	r.Free(r.Allocate(100)) // after close: straight back
	if mem.CurrentAlloc() != 0 || r.kept != 0 {
		t.Errorf("after close %d bytes are out, %d kept; want none", mem.CurrentAlloc(), r.kept)
	}
}

// TestScanReusesMemory scans a Parquet file of many batches through a Set
// and checks that the memory of released batches serves the next ones
// (few allocations reach the allocator); that the bytes of a text column
// are not recycled, so that a string kept past its batch keeps its value;
// and that in poison mode the codes of a batch read as poison once it is
// released: what the engine's tests built with -tags assay_poison rely on
// to find readers of released memory.
func TestScanReusesMemory(t *testing.T) {
	fx := textFixture(40000)
	rec := fx.record(t)
	defer rec.Release()
	path := filepath.Join(t.TempDir(), "many.parquet")
	writeRecord(t, path, rec, parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(10000)), pqarrow.DefaultWriterProps())
	mem := &countingMem{CheckedAllocator: checkedMem(t)}
	s, err := Open([]string{path}, Options{Allocator: mem, BatchRows: 1000})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	// kept is the first text of 8 bytes or more and codes the first
	// batch's codes, as the arrays hold them, not copied.
	var kept, want string
	var codes []int32
	before := mem.allocs
	err = s.Scan(context.Background(), []string{"req"}, func(b *Batch) error {
		col := b.Record.Column(0).(*array.String)
		for i := 0; kept == "" && i < col.Len(); i++ {
			if v := col.Value(i); len(v) >= 8 {
				kept, want = v, strings.Clone(v)
			}
		}
		if codes == nil && b.Codes != nil {
			codes = b.Codes[0].Indices().(*array.Int32).Int32Values()
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if want == "" || codes == nil {
		t.Fatal("no text of 8 bytes or no codes in the file")
	}
	if kept != want {
		t.Errorf("a string kept past its batch reads %q; want %q", kept, want)
	}
	if poisonFreed {
		for i, c := range codes {
			if uint32(c) != 0xA5A5A5A5 {
				t.Fatalf("poison mode: code %d kept past its batch reads %d; want poison", i, c)
			}
		}
		return
	}
	// Each batch's texts take an allocation (54 in all at the time of
	// writing); without reuse its offsets and codes would take two more
	// (132 in all).
	if n := mem.allocs - before; n >= 80 {
		t.Errorf("%d allocations for 40 batches; want the offsets and codes to reuse memory", n)
	}
}
