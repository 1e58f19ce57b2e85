package relate

import (
	"fmt"
	"math"
)

// CorrMethod names a correlation coefficient.
type CorrMethod int

// The coefficients.
const (
	Pearson  CorrMethod = iota + 1 // product-moment r
	Spearman                       // rank correlation rho
	Kendall                        // rank correlation tau-b
)

var corrNames = map[CorrMethod]string{Pearson: "pearson", Spearman: "spearman", Kendall: "kendall"}

func (c CorrMethod) String() string { return enumName(corrNames, c, "correlation") }

// MarshalText writes the method's name.
func (c CorrMethod) MarshalText() ([]byte, error) { return []byte(c.String()), nil }

// PMethod says how a p-value was computed.
type PMethod int

// The ways of computing a p-value.
const (
	// Exact: the permutation distribution of the statistic, to rounding.
	Exact PMethod = iota + 1
	// Edgeworth: the Edgeworth series of Best & Roberts (1975, AS 89).
	Edgeworth
	// StudentT: Student's t on n-2 degrees of freedom.
	StudentT
	// Normal: the standard normal limit.
	Normal
)

var pMethodNames = map[PMethod]string{
	Exact:     "exact",
	Edgeworth: "edgeworth",
	StudentT:  "student-t",
	Normal:    "normal",
}

func (p PMethod) String() string { return enumName(pMethodNames, p, "p-method") }

// MarshalText writes the method's name.
func (p PMethod) MarshalText() ([]byte, error) { return []byte(p.String()), nil }

// enumName returns the name of v, or kind(v) for a value without one.
func enumName[T ~int](names map[T]string, v T, kind string) string {
	if s, ok := names[v]; ok {
		return s
	}
	return fmt.Sprintf("%s(%d)", kind, int(v))
}

// Statistic is a named test statistic.
type Statistic struct {
	Name  string
	Value float64
}

// Correlation is a correlation coefficient with the two-sided test of no
// association.
type Correlation struct {
	Method CorrMethod
	// Estimate is r, rho or tau-b, in [-1, 1].
	Estimate float64
	// Statistic is the test statistic as R's cor.test names it: t
	// (Pearson), S = (n³-n)(1-rho)/6 (Spearman), T = concordant pairs
	// (Kendall, exact) or z (Kendall, normal approximation).
	Statistic Statistic
	// PValue is two-sided: the probability under independence of a
	// coefficient at least as far from zero as the one observed.
	PValue float64
	N      int64
	// Ties is set when x or y has tied values (rank methods).
	Ties    bool
	PMethod PMethod
}

// checkPairs rejects slices of different lengths, too few pairs and values
// that are not finite, naming the first bad row (1-based).
func checkPairs(what string, x, y []float64, least int) error {
	if len(x) != len(y) {
		return fmt.Errorf("%s: x has %d values and y has %d", what, len(x), len(y))
	}
	if len(x) < least {
		return fmt.Errorf("%s needs at least %d pairs, got %d", what, least, len(x))
	}
	for i := range x {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return fmt.Errorf("%s: pair %d is (%v, %v); only finite values can be used", what, i+1, x[i], y[i])
		}
	}
	return nil
}
