package checks

import (
	"cmp"
	"fmt"
	"math/rand/v2"
	"slices"
)

// RowSample keeps a uniform random sample of at most Size rows of P
// values from a stream of rows, in memory bounded by Size, by bottom-k
// sampling: each row gets a key, and the sample is the Size rows of
// smallest key. When the keys are independent uniform draws, every subset
// of Size rows is equally likely to hold the smallest keys, so the sample
// is a uniform sample without replacement (the argument of Cohen & Kaplan
// 2007, "Summarizing data using bottom-k sketches", PODC, section 2, and
// of the order-statistics view of reservoir sampling).
//
// A row's key is the first output of the PCG generator (math/rand/v2,
// O'Neill 2014, with the DXSM output function) seeded with the sample's
// seed and the row's data-row number, a well-mixed function of the two.
// Because the key depends on nothing else, the sample does not depend on
// how the rows were split into batches or shards: samples of disjoint rows
// merge into exactly the sample of their union, and a run repeats for the
// same seed.
type RowSample struct {
	Size int    // the most rows kept
	P    int    // values per row
	Seed uint64 // seeds the keys
	// Keys is a max-heap of the kept rows' keys; Values holds the rows, P
	// values each, in the order of Keys.
	Keys   []uint64
	Values []float64
	Seen   int64 // rows offered
}

// NewRowSample returns an empty sample of at most size rows of p values.
func NewRowSample(p, size int, seed uint64) *RowSample {
	return &RowSample{Size: size, P: p, Seed: seed}
}

// key is the sampling key of data row row: the first output of PCG seeded
// with the sample's seed and the row number.
func (s *RowSample) key(row int64) uint64 {
	var p rand.PCG
	p.Seed(s.Seed, uint64(row))
	return p.Uint64()
}

// Offer offers data row row with its values (copied).
func (s *RowSample) Offer(row int64, values []float64) {
	s.Seen++
	s.add(s.key(row), values)
}

// add keeps a row of key k if it is among the Size smallest keys seen.
func (s *RowSample) add(k uint64, values []float64) {
	if len(s.Keys) < s.Size {
		s.Keys = append(s.Keys, k)
		s.Values = append(s.Values, values...)
		s.up(len(s.Keys) - 1)
		return
	}
	if s.Size == 0 || k >= s.Keys[0] {
		return
	}
	s.Keys[0] = k
	copy(s.Values[:s.P], values)
	s.down(0)
}

// Merge adds the rows of o, a sample of rows disjoint from s's.
func (s *RowSample) Merge(o *RowSample) error {
	if o.P != s.P || o.Size != s.Size || o.Seed != s.Seed {
		return fmt.Errorf("cannot merge a sample of %d rows of %d values (seed %d) into one of %d rows of %d (seed %d)",
			o.Size, o.P, o.Seed, s.Size, s.P, s.Seed)
	}
	for i, k := range o.Keys {
		s.add(k, o.Values[i*s.P:(i+1)*s.P])
	}
	s.Seen += o.Seen
	return nil
}

// Columns returns the kept rows as P columns, in the order of their keys,
// so that what is computed from them does not depend on the order the
// rows came in.
func (s *RowSample) Columns() [][]float64 {
	n := len(s.Keys)
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return cmp.Compare(s.Keys[a], s.Keys[b]) })
	cols := make([][]float64, s.P)
	for j := range cols {
		cols[j] = make([]float64, n)
		for i, k := range order {
			cols[j][i] = s.Values[k*s.P+j]
		}
	}
	return cols
}

func (s *RowSample) swap(i, j int) {
	s.Keys[i], s.Keys[j] = s.Keys[j], s.Keys[i]
	a, b := s.Values[i*s.P:(i+1)*s.P], s.Values[j*s.P:(j+1)*s.P]
	for k := range a {
		a[k], b[k] = b[k], a[k]
	}
}

func (s *RowSample) up(i int) {
	for i > 0 {
		parent := (i - 1) / 2
		if s.Keys[parent] >= s.Keys[i] {
			return
		}
		s.swap(i, parent)
		i = parent
	}
}

func (s *RowSample) down(i int) {
	n := len(s.Keys)
	for {
		largest := i
		if l := 2*i + 1; l < n && s.Keys[l] > s.Keys[largest] {
			largest = l
		}
		if r := 2*i + 2; r < n && s.Keys[r] > s.Keys[largest] {
			largest = r
		}
		if largest == i {
			return
		}
		s.swap(i, largest)
		i = largest
	}
}
