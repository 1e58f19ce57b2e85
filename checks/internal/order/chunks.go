package order

// Chunks are the values a rule keeps from a column, as a list of slices,
// one per batch, each allocated at its final size: nothing is copied as
// they grow (a slice grown by append copies its values again at each
// doubling and holds up to twice their size while it does), and two lists
// are joined by moving slices, not values. Flatten copies them once into
// one slice when an array is needed.
type Chunks[T int64 | float64] struct {
	parts [][]T
	n     int
}

// smallPart is the most values a part made of small parts holds: parts
// this small are appended to the last one instead of being kept apart, so
// that the slices' own headers (24 bytes each) stay small beside the
// values when parts are small (a segmented rule's groups see few rows of
// each batch). Such a part grows by doubling, which wastes at most
// smallPart values per list.
const smallPart = 1024

// Add appends part to c, which keeps it: the caller must not change it
// afterwards. An empty part is dropped; a small part is appended to a
// small last part; a part whose capacity exceeds its length by more than
// an eighth is copied to its length, so that values dropped after
// allocating (nulls, NaNs) do not hold memory.
func (c *Chunks[T]) Add(part []T) {
	if len(part) == 0 {
		return
	}
	if last := len(c.parts) - 1; last >= 0 && len(c.parts[last])+len(part) <= smallPart {
		c.parts[last] = append(c.parts[last], part...)
		c.n += len(part)
		return
	}
	if cap(part)-len(part) > len(part)/8 {
		part = append(make([]T, 0, len(part)), part...)
	}
	c.parts = append(c.parts, part)
	c.n += len(part)
}

// Splice moves o's parts to the end of c's and leaves o empty.
func (c *Chunks[T]) Splice(o *Chunks[T]) {
	c.parts = append(c.parts, o.parts...)
	c.n += o.n
	*o = Chunks[T]{}
}

// Len is the number of values.
func (c *Chunks[T]) Len() int { return c.n }

// Parts are the values in the order they were added, part by part, to
// read without copying; the caller must not change them.
func (c *Chunks[T]) Parts() [][]T { return c.parts }

// Copy returns the values in the order they were added, in a new slice
// of exactly their number; c keeps its parts.
func (c *Chunks[T]) Copy() []T {
	all := make([]T, 0, c.n)
	for _, p := range c.parts {
		all = append(all, p...)
	}
	return all
}

// Flatten returns the values in the order they were added, in one slice
// (of exactly their number when there were several parts, or one part of
// more than smallPart values), which c then holds as its only part (later
// calls return it at no cost). Each part is let go as soon as it is
// copied. The slice is c's own: reordering it reorders c.
func (c *Chunks[T]) Flatten() []T {
	switch len(c.parts) {
	case 0:
		return nil
	case 1:
		return c.parts[0]
	}
	all := make([]T, 0, c.n)
	for i, p := range c.parts {
		all = append(all, p...)
		c.parts[i] = nil
	}
	c.parts = [][]T{all}
	return all
}
