package source

import (
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// nullArrays hands out all-null arrays, the stand-ins of skipped columns.
// It keeps, per data type, the longest one made so far and serves shorter
// lengths as slices of it, so that a scan allocates about one per type
// instead of one per column and batch. Arrays are immutable and counted by
// reference, so the same one may sit in many batches held by other
// goroutines; get may be called from several at once.
type nullArrays struct {
	mem  memory.Allocator
	mu   sync.Mutex
	byFP map[string]arrow.Array // by the type's fingerprint
}

func newNullArrays(mem memory.Allocator) *nullArrays {
	return &nullArrays{mem: mem, byFP: make(map[string]arrow.Array)}
}

// get returns an all-null array of type t and length n; the caller owns
// one reference to it.
func (na *nullArrays) get(t arrow.DataType, n int) arrow.Array {
	fp := t.Fingerprint()
	if fp == "" { // a type that cannot tell itself apart is not shared
		return array.MakeArrayOfNull(na.mem, t, n)
	}
	na.mu.Lock()
	defer na.mu.Unlock()
	a, ok := na.byFP[fp]
	if !ok || a.Len() < n {
		if ok {
			a.Release()
		}
		a = array.MakeArrayOfNull(na.mem, t, n)
		na.byFP[fp] = a
	}
	if a.Len() == n {
		a.Retain()
		return a
	}
	return array.NewSlice(a, 0, int64(n))
}

// release drops the arrays kept; those handed out live on in their batches.
func (na *nullArrays) release() {
	na.mu.Lock()
	defer na.mu.Unlock()
	for fp, a := range na.byFP {
		a.Release()
		delete(na.byFP, fp)
	}
}
