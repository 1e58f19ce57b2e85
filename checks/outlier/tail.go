package outlier

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// CDF is a fitted distribution: CDF(x) = P(X <= x). gonum's stat/distuv
// types and the families of package dist satisfy it.
type CDF interface {
	CDF(x float64) float64
}

// survivor is implemented by distributions that compute P(X > x) directly
// (gonum's distuv types and package dist's Dist do).
type survivor interface {
	Survival(x float64) float64
}

// Tail flags values in either tail of a fitted continuous distribution:
// x is outside when
//
//	min(F(x), 1 − F(x)) < Alpha / (2N).
//
// This is a Bonferroni correction for N values: each value is tested at
// the two-sided level Alpha/N, so when all N values come from F the chance
// that any is flagged is at most Alpha (Bonferroni's inequality), and close
// to Alpha for small Alpha. With parameters estimated from the same data the
// level is approximate. 1 − F(x) is taken from a Survival method when the
// distribution has one; far-tail scores are only as precise as that method
// (gonum v0.17.0's Normal.Survival computes 1 − erf and reaches 0 near
// x = 8.3 sd, where package dist's normal is still exact). For a discrete family 1 − F(x) = P(X > x), not
// P(X >= x), so the upper tail is tested slightly too often.
type Tail struct {
	Dist  CDF
	Alpha float64
	N     int
}

// NewTail returns the rule for n values from dist at family-wise level
// alpha, 0 < alpha < 1.
func NewTail(dist CDF, alpha float64, n int) (Tail, error) {
	if dist == nil {
		return Tail{}, fmt.Errorf("tail rule: no distribution")
	}
	if !(alpha > 0 && alpha < 1) {
		return Tail{}, fmt.Errorf("tail rule: alpha is %v, want 0 < alpha < 1", alpha)
	}
	if n < 1 {
		return Tail{}, fmt.Errorf("tail rule: %d values, need at least 1", n)
	}
	return Tail{Dist: dist, Alpha: alpha, N: n}, nil
}

// Prob is the smaller tail probability min(F(x), 1 − F(x)).
func (t Tail) Prob(x float64) float64 {
	lower := t.Dist.CDF(x)
	var upper float64
	if s, ok := t.Dist.(survivor); ok {
		upper = s.Survival(x)
	} else {
		upper = 1 - lower
	}
	return min(lower, upper)
}

// Outside reports whether Prob(x) < Alpha/(2N).
func (t Tail) Outside(x float64) bool { return t.Prob(x) < t.Alpha/(2*float64(t.N)) }

// Score is the standard normal deviate with the same one-sided tail
// probability, −Φ⁻¹(Prob(x)): 0 at the median, 3.09 at a tail probability
// of 0.001, 37 at 6e-300, +Inf where the probability underflows to 0. It
// orders values like the tail probability does, on a scale comparable with
// a z-score. Φ⁻¹ is Wichura's (1988) algorithm AS 241 (gonum's
// mathext.NormalQuantile), accurate in the far tail.
func (t Tail) Score(x float64) float64 {
	q := t.Prob(x)
	if !(q >= 0) {
		return math.NaN()
	}
	return -mathext.NormalQuantile(min(q, 0.5))
}
