// Package gof tests whether a sample comes from a reference distribution:
// Kolmogorov-Smirnov, Anderson-Darling and Cramér-von Mises against a fully
// specified reference or one fitted to the same sample, Shapiro-Wilk for
// normality and Pearson's chi-square for discrete, categorical and binned
// data. Every test returns a Result with its statistic, p-value, the n it
// used, how the p-value was obtained, and an effect size that does not grow
// with n.
//
// # Tests and p-values
//
//	test        reference                      function       p-value
//	KS          fully specified                Specified      exact, Marsaglia, Tsang & Wang (2003), n <= 1000; asymptotic above
//	AD          fully specified                Specified      Marsaglia & Marsaglia (2004)
//	CvM         fully specified                Specified      Csörgő & Faraway (1996)
//	KS          normal, mean and sd estimated  Normal         Dallal & Wilkinson (1986) for p <= 0.1, bootstrap above
//	AD, CvM     normal, mean and sd estimated  Normal         Stephens; D'Agostino & Stephens (1986), table 4.9
//	AD          exponential, scale estimated   Exponential    Stephens (1974); D'Agostino & Stephens (1986)
//	KS, CvM     exponential, scale estimated   Exponential    parametric bootstrap (exact Monte Carlo)
//	KS, AD, CvM any fitted family              Estimated      parametric bootstrap
//	SW          normal                         ShapiroWilk    Royston (1992, 1995)
//	chi-square  cell probabilities             ChiSquare      chi-square, df = cells - 1 - estimated
//	KS          fully specified, resolution h  KSAtResolution continuous KS at the boundary statistic (conservative)
//
// # Which measure to judge
//
// A p-value answers "could this sample come from the reference?". With
// millions of rows every real column is "not exactly" any textbook family and
// the p-value falls to zero however small the misfit. The distance
// D = sup_x |F_n(x) - F(x)| between the empirical and the reference CDF
// (Result.Effect, or Distance) estimates a property of the data, not of n: it
// is the largest difference in cumulative share anywhere on the axis, so a
// tolerance such as "D above 0.05 fails" means the same at 30 rows and at 30
// million. Judge p-values at small n (hundreds of rows), D at any n.
//
// # Finite resolution
//
// Values recorded to a resolution h (a temperature to 0.01) are tied. With
// enough rows the ties alone make the continuous KS and Anderson-Darling
// tests reject a column that is normal by construction: each recorded value
// carries the probability of its whole rounding cell. KSAtResolution
// compares the empirical CDF with the reference only at cell boundaries,
// which rounding cannot move (see its documentation); DetectResolution finds h.
//
// # Samples
//
// The tests take a Sorted sample. At scale a test that needs every value runs
// on a uniform sample drawn while streaming (package checks/bottomk); the
// caller reports that a sample was used and its size (Result.N).
//
// Nothing here depends on the engine or on the family-fitting package: a
// reference is anything with a CDF method (gonum's distuv types qualify), and
// a parametric bootstrap needs only a way to draw from a fitted reference and
// a way to refit.
package gof

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/assay-project/assay/checks/internal/order"
)

// CDF is a reference distribution: CDF(x) = P(X <= x). gonum's
// stat/distuv types satisfy it.
type CDF interface {
	CDF(x float64) float64
}

// survivor is implemented by references that compute P(X > x) without the
// cancellation of 1 - CDF(x) in the upper tail (gonum's distuv types do).
// Anderson-Darling uses it for ln(1 - F).
type survivor interface {
	Survival(x float64) float64
}

// survival returns P(X > x) under ref, from its Survival method when it has
// one.
func survival(ref CDF, x float64) float64 {
	if s, ok := ref.(survivor); ok {
		return s.Survival(x)
	}
	return 1 - ref.CDF(x)
}

// Fitted is a reference whose parameters were estimated from data and that
// can draw samples for a parametric bootstrap. Draw fills dst with
// independent draws using only rng, so that a bootstrap repeats exactly from
// its seed.
type Fitted interface {
	CDF
	Draw(rng *rand.Rand, dst []float64)
}

// Refit estimates a family's parameters from a sample (in ascending order)
// and returns the fitted reference. The bootstrap calls it once per
// replicate; it must use the same estimator that produced the reference
// under test.
type Refit func(sorted []float64) (Fitted, error)

// Sorted is a sample in ascending order without NaN or infinite values. Make
// one with Sort; the tests never modify it.
type Sorted struct {
	x []float64
}

// Sort copies x, rejects NaN and infinite values and sorts the copy, by
// radix sort on the values' order-preserving bits (order.SortFloat64:
// eight linear passes, -0 before +0). Sorting is the costliest part of
// every test here; sort once and run several tests on the result.
func Sort(x []float64) (Sorted, error) {
	return SortInPlace(slices.Clone(x))
}

// SortInPlace is Sort without the copy, for a caller that hands over x:
// it sorts x itself, which the result then holds; the caller must not
// use x afterwards.
func SortInPlace(x []float64) (Sorted, error) {
	if err := finite(x); err != nil {
		return Sorted{}, err
	}
	order.SortFloat64(x)
	return Sorted{x: x}, nil
}

// finite rejects a NaN or infinite value, naming its place.
func finite(x []float64) error {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("sample value %d is %v: goodness-of-fit tests need finite numbers", i+1, v)
		}
	}
	return nil
}

// Len is the sample size.
func (s Sorted) Len() int { return len(s.x) }

// Values returns the sorted values; the caller must not modify them.
func (s Sorted) Values() []float64 { return s.x }

// Test names a goodness-of-fit test.
type Test int

// The tests. KS, AD and CvM are statistics of the empirical distribution
// function (EDF); SW and ChiSq have their own entry points.
const (
	KS    Test = iota + 1 // Kolmogorov-Smirnov D
	AD                    // Anderson-Darling A²
	CvM                   // Cramér-von Mises W²
	SW                    // Shapiro-Wilk W
	ChiSq                 // Pearson's chi-square X²
)

var testNames = map[Test]string{
	KS:    "kolmogorov-smirnov",
	AD:    "anderson-darling",
	CvM:   "cramer-von-mises",
	SW:    "shapiro-wilk",
	ChiSq: "chi-square",
}

func (t Test) String() string { return enumName(testNames, t, "test") }

// MarshalText writes the test's name.
func (t Test) MarshalText() ([]byte, error) { return []byte(t.String()), nil }

// MethodKind says how a p-value was obtained.
type MethodKind int

// The kinds of p-value computation.
const (
	// Exact: the exact finite-n null distribution, to rounding.
	Exact MethodKind = iota + 1
	// Asymptotic: the limiting distribution as n grows.
	Asymptotic
	// Approximation: a published approximating formula (finite-n
	// corrections, fitted curves such as Stephens' or Royston's).
	Approximation
	// Bootstrap: a seeded parametric bootstrap (Monte Carlo); repeats
	// exactly for the same B and seed.
	Bootstrap
)

var kindNames = map[MethodKind]string{
	Exact:         "exact",
	Asymptotic:    "asymptotic",
	Approximation: "approximation",
	Bootstrap:     "bootstrap",
}

func (k MethodKind) String() string { return enumName(kindNames, k, "method") }

// enumName returns the name of v, or kind(v) for a value without one.
func enumName[T ~int](names map[T]string, v T, kind string) string {
	if s, ok := names[v]; ok {
		return s
	}
	return fmt.Sprintf("%s(%d)", kind, int(v))
}

// MarshalText writes the kind's name.
func (k MethodKind) MarshalText() ([]byte, error) { return []byte(k.String()), nil }

// Method describes how a result's p-value was computed.
type Method struct {
	Kind MethodKind
	// Source names the publication the computation follows.
	Source string
	// B and Seed are the replicates and seed of a bootstrap; zero otherwise.
	B    int
	Seed uint64
	// Conservative is set when the p-value is an upper bound of the true
	// one (the test rejects less often than its level).
	Conservative bool
}

// Statistic is a named value.
type Statistic struct {
	Name  string
	Value float64
}

// Result is the outcome of one goodness-of-fit test.
type Result struct {
	Test      Test
	Statistic Statistic
	// PValue is the probability, under the null hypothesis that the sample
	// comes from the reference, of a statistic at least as extreme as the
	// one observed. It lies in [0, 1].
	PValue float64
	// N is the number of values the test used.
	N      int
	Method Method
	// Effect is a measure of misfit that does not grow with n: the
	// Kolmogorov distance D for the continuous tests (for Shapiro-Wilk, to
	// the fitted normal), the total variation distance for chi-square.
	Effect Statistic
	// Estimates holds the parameters estimated from the sample by Normal
	// and Exponential (nil otherwise): "mean" and "sd", or "rate".
	Estimates map[string]float64
}

// Resampling sets the parametric bootstrap used where no published
// null distribution applies.
type Resampling struct {
	// B is the number of replicates; zero means DefaultB.
	B int
	// Seed seeds the replicates; the same seed gives the same p-value.
	Seed uint64
}

// DefaultB is the number of bootstrap replicates when Resampling.B is zero.
// With 999 replicates a p-value near 0.05 has a Monte Carlo standard error
// of about 0.007 (sqrt(p(1-p)/B)).
const DefaultB = 999

func (r Resampling) replicates() int {
	if r.B <= 0 {
		return DefaultB
	}
	return r.B
}
