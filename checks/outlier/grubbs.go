package outlier

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Alternative says which extreme a one-outlier test examines.
type Alternative int

const (
	// TwoSided tests the value farthest from the mean, on either side.
	TwoSided Alternative = iota
	// Greater tests the largest value.
	Greater
	// Less tests the smallest value.
	Less
)

func (a Alternative) String() string {
	switch a {
	case TwoSided:
		return "two-sided"
	case Greater:
		return "greater"
	case Less:
		return "less"
	}
	return fmt.Sprintf("Alternative(%d)", int(a))
}

// tails is how many tails the level is split over: 2 for TwoSided, 1 for
// the one-sided alternatives, 0 for an unknown one.
func (a Alternative) tails() float64 {
	switch a {
	case TwoSided:
		return 2
	case Greater, Less:
		return 1
	}
	return 0
}

// GrubbsResult is the outcome of Grubbs' test on one sample.
type GrubbsResult struct {
	G        float64 // the statistic
	Index    int     // position of the value tested, 0-based
	Value    float64 // the value tested
	Critical float64 // critical value of G at the level asked
	P        float64 // p-value (see Grubbs)
	Outlier  bool    // G > Critical
}

// Grubbs runs Grubbs' (1950, 1969) test for one outlier in a sample from
// a normal distribution, as given in the NIST/SEMATECH e-Handbook, section
// 1.3.5.17.1. With x̄ and s the mean and sample sd (divisor n − 1),
//
//	G = max |x_i − x̄| / s    (TwoSided)
//	G = (x_max − x̄) / s       (Greater)
//	G = (x̄ − x_min) / s       (Less)
//
// and the value is an outlier when G exceeds GrubbsCritical(n, alpha, alt).
// The p-value inverts the same relation: with u = n G² / (n−1)² and
// t = sqrt((n−2) u / (1−u)),
//
//	P = min(1, k n P(T_{n−2} > t)),  k = 2 two-sided, 1 one-sided,
//
// the Bonferroni bound that defines the critical value (P < alpha exactly
// when G > Critical); it is 0 when u >= 1, the largest G a sample of n can
// reach. A sample with s = 0 has G = 0 and P = 1. It needs n >= 3 and
// 0 < alpha < 1.
func Grubbs(x []float64, alpha float64, alt Alternative) (GrubbsResult, error) {
	n := len(x)
	crit, err := grubbsCritical(n, alpha, alt)
	if err != nil {
		return GrubbsResult{}, fmt.Errorf("grubbs test: %w", err)
	}
	if err := checkAll(x); err != nil {
		return GrubbsResult{}, fmt.Errorf("grubbs test: %w", err)
	}
	mean, ss := meanSS(x)
	sd := math.Sqrt(ss / float64(n-1))
	imin, imax := 0, 0
	for i, v := range x {
		if v < x[imin] {
			imin = i
		}
		if v > x[imax] {
			imax = i
		}
	}
	pick := imax
	switch alt {
	case Less:
		pick = imin
	case TwoSided:
		if mean-x[imin] > x[imax]-mean {
			pick = imin
		}
	}
	res := GrubbsResult{Index: pick, Value: x[pick], Critical: crit, P: 1}
	if sd == 0 {
		return res, nil
	}
	res.G = math.Abs(x[pick]-mean) / sd
	res.P = grubbsP(res.G, n, alt.tails())
	res.Outlier = res.G > crit
	return res, nil
}

// GrubbsCritical is the critical value of Grubbs' G for n values at level
// alpha (NIST/SEMATECH e-Handbook 1.3.5.17.1):
//
//	G_crit = (n−1)/√n · sqrt(t² / (n − 2 + t²)),
//
// t the upper alpha/(2n) (two-sided) or alpha/n (one-sided) quantile of
// Student's t with n − 2 degrees of freedom. It returns NaN for n < 3, alpha
// outside (0, 1) or an unknown alternative.
func GrubbsCritical(n int, alpha float64, alt Alternative) float64 {
	c, err := grubbsCritical(n, alpha, alt)
	if err != nil {
		return math.NaN()
	}
	return c
}

func grubbsCritical(n int, alpha float64, alt Alternative) (float64, error) {
	k := alt.tails()
	if k == 0 {
		return 0, fmt.Errorf("unknown alternative %v", alt)
	}
	if n < 3 {
		return 0, fmt.Errorf("%d values, need at least 3", n)
	}
	if !(alpha > 0 && alpha < 1) {
		return 0, fmt.Errorf("alpha is %v, want 0 < alpha < 1", alpha)
	}
	fn := float64(n)
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: fn - 2}.Quantile(1 - alpha/(k*fn))
	return (fn - 1) / math.Sqrt(fn) * math.Sqrt(t*t/(fn-2+t*t)), nil
}

func grubbsP(g float64, n int, tails float64) float64 {
	fn := float64(n)
	u := fn * g * g / ((fn - 1) * (fn - 1))
	if u >= 1 {
		return 0
	}
	t := math.Sqrt((fn - 2) * u / (1 - u))
	return min(1, tails*fn*distuv.StudentsT{Mu: 0, Sigma: 1, Nu: fn - 2}.Survival(t))
}
