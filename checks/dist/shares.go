package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// Shares is a categorical distribution: the expected share of each named
// category (the "categorical" family). It is a value; its slices are never
// modified after construction.
type Shares struct {
	labels []string
	p      []float64
}

// NewShares returns the distribution with the given categories and
// weights. Weights may be shares (0.5, 0.3, 0.2) or ratios (9:3:3:1 as 9, 3,
// 3, 1): each is divided by their sum. Labels must be distinct and weights
// finite, at least 0 and not all 0; a weight of 0 says the category should
// never occur.
func NewShares(labels []string, weights []float64) (Shares, error) {
	if len(labels) != len(weights) {
		return Shares{}, fmt.Errorf("categorical: %d categories but %d weights", len(labels), len(weights))
	}
	if len(labels) == 0 {
		return Shares{}, fmt.Errorf("categorical: no categories")
	}
	seen := make(map[string]bool, len(labels))
	var sum float64
	for i, l := range labels {
		if seen[l] {
			return Shares{}, fmt.Errorf("categorical: category %q is listed twice", l)
		}
		seen[l] = true
		w := weights[i]
		if !(w >= 0) || math.IsInf(w, 1) {
			return Shares{}, fmt.Errorf("categorical: the weight of %q must be a finite number of at least 0, got %s", l, num(w))
		}
		sum += w
	}
	if !(sum > 0) {
		return Shares{}, fmt.Errorf("categorical: the weights are all 0")
	}
	p := make([]float64, len(weights))
	for i, w := range weights {
		p[i] = w / sum
	}
	return Shares{labels: slices.Clone(labels), p: p}, nil
}

// FitShares returns the maximum-likelihood categorical distribution for
// observed counts: the observed shares c_i / Σc.
func FitShares(labels []string, counts []float64) (Shares, error) {
	if len(labels) == len(counts) {
		var n float64
		for i, c := range counts {
			if !(c >= 0 && isWhole(c)) {
				return Shares{}, fmt.Errorf("categorical: the count of %q must be a whole number of at least 0, got %s", labels[i], num(c))
			}
			n += c
		}
		if n == 0 && len(counts) > 0 {
			return Shares{}, fmt.Errorf("categorical: all counts are 0")
		}
	}
	return NewShares(labels, counts)
}

// Labels returns the categories in their given order.
func (s Shares) Labels() []string { return slices.Clone(s.labels) }

// Probs returns the shares in the order of Labels; they sum to 1.
func (s Shares) Probs() []float64 { return slices.Clone(s.p) }

// Share returns the share of a category and whether it is listed.
func (s Shares) Share(label string) (float64, bool) {
	i := slices.Index(s.labels, label)
	if i < 0 {
		return 0, false
	}
	return s.p[i], true
}

// Expected returns the expected counts n·p_i in a sample of n.
func (s Shares) Expected(n float64) []float64 {
	out := make([]float64, len(s.p))
	for i, p := range s.p {
		out[i] = n * p
	}
	return out
}

// LogLik returns the multinomial log-probability of the counts (in the
// order of Labels),
//
//	ln n! − Σ ln c_i! + Σ c_i ln p_i,  n = Σ c_i,
//
// −Inf when a category of share 0 was observed, NaN when the number of
// counts differs from the number of categories.
func (s Shares) LogLik(counts []float64) float64 {
	if len(counts) != len(s.p) {
		return math.NaN()
	}
	var n, ll float64
	for i, c := range counts {
		n += c
		lc, _ := math.Lgamma(c + 1)
		ll -= lc
		if c > 0 {
			ll += c * math.Log(s.p[i])
		}
	}
	ln, _ := math.Lgamma(n + 1)
	return ll + ln
}

// Rand draws the index of a category using r, by inversion of the
// cumulative shares.
func (s Shares) Rand(r *rand.Rand) int {
	u := r.Float64()
	var c float64
	for i, p := range s.p {
		c += p
		if u < c {
			return i
		}
	}
	// Rounding left the cumulative sum a hair below 1: the last category
	// with a positive share.
	for i := len(s.p) - 1; i > 0; i-- {
		if s.p[i] > 0 {
			return i
		}
	}
	return 0
}
