package source

import (
	"math/bits"
	"sync"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// recycler is a memory.Allocator that keeps the buffers freed to it for
// later allocations, so that reading a file batch after batch reuses the
// memory of the batches already released instead of asking for fresh,
// zeroed memory each time (and leaving the old to the garbage collector).
//
// Buffers go by size class, four to each power of two (sizes 5/4, 6/4, 7/4
// and 8/4 of the power below, as size-class allocators commonly round), so
// that a buffer serves every request of its class and wastes at most a
// quarter. Memory comes from, and goes back to, the parent allocator;
// at most recycleLimit bytes are kept, and what does not fit goes back at
// once, as does everything once close has been called. Memory handed out
// is not zeroed: it may hold an earlier batch's bytes.
//
// A buffer must not be read once freed: an array's slices point into its
// buffers, so a consumer keeping one past the release of its batch must
// copy it. Strings are the exception the readers make: the bytes of text
// columns never come from a recycler (checks keep strings, and a Go map
// stores the key of every assignment, not only of the first). Built with
// the tag assay_poison, freed buffers are overwritten with poisonByte and
// never reused, and new ones are filled with fillByte, so that tests find
// any reader of released memory and any that counts on zeroed memory.
type recycler struct {
	parent memory.Allocator

	mu     sync.Mutex
	free   [numClasses][][]byte // freed buffers by class, each of its class's size
	kept   int                  // bytes in free
	closed bool
}

const (
	// recycleLimit is the most bytes a recycler keeps: a few batches of
	// every column.
	recycleLimit = 32 << 20
	// maxClassBits is the power of two of the largest class kept; larger
	// buffers come from and go back to the parent each time.
	maxClassBits = 25
	// numClasses counts the class of sizes up to 64 bytes and four in each
	// power of two from 64 up to 1<<maxClassBits.
	numClasses = 1 + 4*(maxClassBits-6)
	// poisonByte fills freed buffers in poison mode, fillByte new ones.
	poisonByte, fillByte = 0xA5, 0x5A
)

// newRecycler returns a recycler over parent.
func newRecycler(parent memory.Allocator) *recycler {
	return &recycler{parent: parent}
}

// sizeClass returns the class of a buffer of n bytes and the class's size:
// for n above 64 with 1<<(e-1) < n <= 1<<e, the smallest multiple m of
// q = 1<<(e-3) not below n (m/q being 5, 6, 7 or 8). Classes from
// numClasses on are not kept.
func sizeClass(n int) (class, size int) {
	if n <= 64 {
		return 0, 64
	}
	e := bits.Len(uint(n - 1))
	q := 1 << (e - 3)
	m := (n + q - 1) / q
	return 1 + 4*(e-7) + m - 5, m * q
}

// Allocate returns size bytes, a freed buffer of the class when there is
// one. In poison mode the bytes are fillByte, never zero as a fresh
// buffer's are, so that tests find readers that count on zeroes.
func (r *recycler) Allocate(size int) []byte {
	if poisonFreed {
		b := r.parent.Allocate(size)
		for i := range b {
			b[i] = fillByte
		}
		return b
	}
	class, cs := sizeClass(size)
	if class >= numClasses {
		return r.parent.Allocate(size)
	}
	r.mu.Lock()
	if l := r.free[class]; len(l) > 0 {
		b := l[len(l)-1]
		r.free[class] = l[:len(l)-1]
		r.kept -= cs
		r.mu.Unlock()
		return b[:size]
	}
	r.mu.Unlock()
	return r.parent.Allocate(cs)[:size:cs]
}

// Reallocate returns b resized to size bytes, in place when its class has
// room, else in a new buffer holding b's bytes, b being freed.
func (r *recycler) Reallocate(size int, b []byte) []byte {
	if size <= cap(b) {
		return b[:size]
	}
	nb := r.Allocate(size)
	copy(nb, b)
	r.Free(b)
	return nb
}

// Free takes b back: kept for reuse when it is of a class, the recycler is
// open and under its limit, else given back to the parent.
func (r *recycler) Free(b []byte) {
	full := b[:cap(b)]
	if poisonFreed {
		for i := range full {
			full[i] = poisonByte
		}
	}
	class, cs := sizeClass(cap(b))
	if class < numClasses && cs == cap(b) && !poisonFreed {
		r.mu.Lock()
		if !r.closed && r.kept+cs <= recycleLimit {
			r.free[class] = append(r.free[class], full)
			r.kept += cs
			r.mu.Unlock()
			return
		}
		r.mu.Unlock()
	}
	r.parent.Free(full)
}

// close gives the kept buffers back to the parent; buffers freed later go
// back at once.
func (r *recycler) close() {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.closed = true
	for c, l := range r.free {
		for _, b := range l {
			r.parent.Free(b)
		}
		r.free[c] = nil
	}
	r.kept = 0
}

var _ memory.Allocator = (*recycler)(nil)
