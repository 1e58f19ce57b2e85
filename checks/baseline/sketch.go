package baseline

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// SketchK is the accuracy parameter k of the quantile sketches a baseline
// keeps. With k = 200 a sketch holds at most about 3k = 600 values however
// many it has seen, and in our tests (sketch_test.go) the rank error of
// any quantile stays below 1% of n; see Sketch for the bound.
const SketchK = 200

// sketchSeed seeds the coins that choose which half of a compacted level
// survives, so that the same values in the same order give the same sketch.
const sketchSeed = 0x6b6c6c

// Sketch is a mergeable quantile sketch after Karnin, Lang & Liberty
// (2016), "Optimal quantile approximation in streams", FOCS 2016, §3
// (KLL): a stack of compactors, level h holding values of weight 2^h.
// Level h may hold capacity(h) = max(8, ceil(k (2/3)^(H-1-h))) values,
// H the number of levels. When the sketch holds more than the sum of the
// capacities, the lowest full level is sorted and compacted: of its pairs
// of neighbours one value (the first or the second of every pair, by one
// coin per compaction) moves up a level with twice the weight; an odd
// value out stays. The weights always sum to N exactly.
//
// Error bound: each compaction moves the rank of any x by at most the
// weight of one item of that level; KLL's analysis (Theorem 3, with the
// coins random) bounds the rank error of every query by eps N with
// probability 1 - delta for k = O((1/eps) sqrt(log(1/delta))), that is
// eps ~ O(1/k). Our coins come from PCG seeded with a fixed seed and the
// number of compactions so far, so the sketch is deterministic; the
// bound we state is the measured one: |rank error| < 0.01 N at k = 200
// (sketch_test.go, 1e6 values, several orders of input).
type Sketch struct {
	K int `json:"k"`
	// N is how many values the sketch has seen.
	N int64 `json:"n"`
	// Compactions counts compactions so far; it seeds the next coin.
	Compactions uint64 `json:"compactions"`
	// Levels[h] holds the values of weight 2^h.
	Levels [][]float64 `json:"levels"`

	held, limit int   // size() and totalCapacity(), cached by Add; limit 0 when not known
	caps        []int // capacity of each level, for len(Levels) levels
}

// NewSketch returns an empty sketch with accuracy parameter k >= 8.
func NewSketch(k int) (*Sketch, error) {
	if k < 8 {
		return nil, fmt.Errorf("sketch k must be at least 8, got %d", k)
	}
	return &Sketch{K: k, Levels: [][]float64{nil}}, nil
}

// minCapacity is the least capacity of a level. KLL's analysis needs 2;
// we keep 8 so that the low levels do not compact every few values (a
// larger floor only lowers the error, and costs 8 values per level).
const minCapacity = 8

// capacity is how many values level h of H levels may hold.
func (s *Sketch) capacity(h int) int {
	if len(s.caps) != len(s.Levels) {
		s.caps = make([]int, len(s.Levels))
		for i := range s.caps {
			c := math.Ceil(float64(s.K) * math.Pow(2.0/3.0, float64(len(s.Levels)-1-i)))
			s.caps[i] = max(minCapacity, int(c))
		}
	}
	return s.caps[h]
}

func (s *Sketch) size() int {
	n := 0
	for _, l := range s.Levels {
		n += len(l)
	}
	return n
}

func (s *Sketch) totalCapacity() int {
	n := 0
	for h := range s.Levels {
		n += s.capacity(h)
	}
	return n
}

// Add offers one value; NaN is the caller's to keep out.
func (s *Sketch) Add(x float64) {
	s.Levels[0] = append(s.Levels[0], x)
	s.N++
	s.held++
	if s.limit == 0 {
		s.held, s.limit = s.size(), s.totalCapacity()
	}
	if s.held > s.limit {
		s.compress()
		s.held, s.limit = s.size(), s.totalCapacity()
	}
}

// compress compacts levels until the sketch fits its capacity.
func (s *Sketch) compress() {
	for s.size() > s.totalCapacity() {
		h := 0
		for h < len(s.Levels) && len(s.Levels[h]) < s.capacity(h) {
			h++
		}
		if h == len(s.Levels) {
			return
		}
		s.compact(h)
	}
}

// compact halves level h into level h+1.
func (s *Sketch) compact(h int) {
	if h+1 == len(s.Levels) {
		s.Levels = append(s.Levels, nil)
	}
	l := s.Levels[h]
	slices.Sort(l)
	var keep []float64
	if len(l)%2 == 1 {
		keep = []float64{l[len(l)-1]}
		l = l[:len(l)-1]
	}
	coin := int(rand.New(rand.NewPCG(sketchSeed, s.Compactions)).Uint64() & 1)
	s.Compactions++
	up := s.Levels[h+1]
	for i := coin; i < len(l); i += 2 {
		up = append(up, l[i])
	}
	s.Levels[h+1] = up
	s.Levels[h] = append(l[:0], keep...)
}

// Merge folds o into s: the levels are concatenated and compacted. The
// result is a sketch of the union with the same kind of bound (KLL are
// fully mergeable, §3 of the paper).
func (s *Sketch) Merge(o *Sketch) error {
	if o.K != s.K {
		return fmt.Errorf("cannot merge sketches of k %d and %d", s.K, o.K)
	}
	for len(s.Levels) < len(o.Levels) {
		s.Levels = append(s.Levels, nil)
	}
	for h, l := range o.Levels {
		s.Levels[h] = append(s.Levels[h], l...)
	}
	s.N += o.N
	s.Compactions += o.Compactions
	s.compress()
	s.limit = 0
	return nil
}

// Weighted returns the sketch's values in ascending order with their
// weights (summing to N).
func (s *Sketch) Weighted() Weighted {
	var w Weighted
	type item struct{ x, w float64 }
	var items []item
	for h, l := range s.Levels {
		for _, x := range l {
			items = append(items, item{x, math.Ldexp(1, h)})
		}
	}
	slices.SortFunc(items, func(a, b item) int {
		switch {
		case a.x < b.x:
			return -1
		case a.x > b.x:
			return 1
		}
		return 0
	})
	for _, it := range items {
		w.X = append(w.X, it.x)
		w.W = append(w.W, it.w)
	}
	return w
}

// Weighted is a distribution given by values in ascending order and their
// positive weights: a sample (all weights 1) or a sketch.
type Weighted struct {
	X, W []float64
}

// Unit returns the sample x, sorted in place, with weight 1 each.
func Unit(x []float64) Weighted {
	slices.Sort(x)
	w := make([]float64, len(x))
	for i := range w {
		w[i] = 1
	}
	return Weighted{X: x, W: w}
}

// Total is the sum of the weights.
func (d Weighted) Total() float64 {
	t := 0.0
	for _, w := range d.W {
		t += w
	}
	return t
}

// Rank returns the total weight of values at or below x.
func (d Weighted) Rank(x float64) float64 {
	r := 0.0
	for i, v := range d.X {
		if v > x {
			break
		}
		r += d.W[i]
	}
	return r
}

// Quantile returns the smallest value whose cumulative weight reaches
// p times the total, 0 <= p <= 1 (the inverse of the step CDF); NaN
// when empty.
func (d Weighted) Quantile(p float64) float64 {
	if len(d.X) == 0 {
		return math.NaN()
	}
	target := p * d.Total()
	c := 0.0
	for i, v := range d.X {
		c += d.W[i]
		if c >= target {
			return v
		}
	}
	return d.X[len(d.X)-1]
}
