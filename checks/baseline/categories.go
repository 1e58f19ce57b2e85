package baseline

import (
	"cmp"
	"slices"
	"strings"
)

// Categories counts the values of a text column in bounded memory with the
// frequent-items summary of Misra & Gries (1982), "Finding repeated
// elements", Science of Computer Programming 2(2):143-152: at most Cap
// counters; when a new value finds none free, every counter drops by one
// and those at zero are freed. A value's count is then underestimated by
// at most (N - sum of counters) / (Cap + 1); while a column has at most
// Cap distinct values the counts are exact. Summaries merge by adding the counters and
// keeping the Cap largest, subtracting the (Cap+1)-th largest from each
// (Agarwal et al. 2012, "Mergeable summaries", PODS, §3), with the same
// bound for the union.
//
// Counts is changed only through Add and Merge, which keep its keys as
// copies of their own (see Add).
type Categories struct {
	Cap    int
	Counts map[string]int64
	// N counts the values offered; N minus the sum of Counts is the mass
	// the summary no longer attributes to any value.
	N int64
	// keys holds every key of Counts under itself.
	keys map[string]string
}

// NewCategories returns an empty summary of at most cap counters.
func NewCategories(cap int) *Categories {
	return &Categories{Cap: cap, Counts: map[string]int64{}, keys: map[string]string{}}
}

// Add counts one value. v may point into a batch about to be released: a
// new value is kept as a copy, and a known one is counted under the copy
// Counts holds, never under v, since a Go map assignment stores its
// string key anew (Counts[v]++ would keep, for every counted value, the
// text of the last batch it came from alive).
func (c *Categories) Add(v string) {
	c.N++
	if k, ok := c.keys[v]; ok {
		c.Counts[k]++
		return
	}
	if len(c.Counts) < c.Cap {
		k := strings.Clone(v)
		c.keys[k] = k
		c.Counts[k] = 1
		return
	}
	for k, n := range c.Counts {
		if n == 1 {
			delete(c.Counts, k)
			delete(c.keys, k)
		} else {
			c.Counts[k] = n - 1
		}
	}
}

// Exact reports whether every count is exact.
func (c *Categories) Exact() bool {
	var s int64
	for _, n := range c.Counts {
		s += n
	}
	return s == c.N
}

// Merge folds o into c.
func (c *Categories) Merge(o *Categories) {
	for k, n := range o.Counts {
		if kept, ok := c.keys[k]; ok {
			c.Counts[kept] += n
		} else {
			c.keys[k] = k
			c.Counts[k] = n
		}
	}
	c.N += o.N
	if len(c.Counts) <= c.Cap {
		return
	}
	top := c.Top(len(c.Counts))
	cut := top[c.Cap].Count
	for _, t := range top {
		if n := t.Count - cut; n > 0 {
			c.Counts[c.keys[t.Value]] = n
		} else {
			delete(c.Counts, t.Value)
			delete(c.keys, t.Value)
		}
	}
}

// Category is a value and its count.
type Category struct {
	Value string `json:"value"`
	Count int64  `json:"count"`
}

// Top returns the k most frequent values, most frequent first, ties by
// value.
func (c *Categories) Top(k int) []Category {
	out := make([]Category, 0, len(c.Counts))
	for v, n := range c.Counts {
		out = append(out, Category{v, n})
	}
	slices.SortFunc(out, func(a, b Category) int {
		if a.Count != b.Count {
			return cmp.Compare(b.Count, a.Count)
		}
		return cmp.Compare(a.Value, b.Value)
	})
	return out[:min(k, len(out))]
}
