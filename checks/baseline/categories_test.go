package baseline

import (
	"maps"
	"testing"
	"unsafe"
)

// TestCategoriesKeepNoBatchText counts texts that point into a buffer, as
// a batch's strings do, then overwrites the buffer, as a recycled or
// reused batch would: the counts must still name the values counted, at
// their first sight, on a repeat and through a merge.
func TestCategoriesKeepNoBatchText(t *testing.T) {
	buf := []byte("northsouthnorth")
	at := func(i, n int) string { return unsafe.String(&buf[i], n) }
	c, o := NewCategories(4), NewCategories(4)
	c.Add(at(0, 5))  // north, new
	c.Add(at(5, 5))  // south, new
	c.Add(at(10, 5)) // north again, from other bytes
	o.Add(at(5, 5))  // south, merged into a known key
	o.Add(at(10, 5))
	o.Add(at(0, 2)) // "no", merged as a new key
	c.Merge(o)
	for i := range buf {
		buf[i] = 'x'
	}
	want := map[string]int64{"north": 3, "south": 2, "no": 1}
	if !maps.Equal(c.Counts, want) {
		t.Fatalf("counts after the buffer changed: %v, want %v", c.Counts, want)
	}
	if c.N != 6 {
		t.Errorf("N = %d, want 6", c.N)
	}
}
