package gof

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/assay-project/assay/checks/internal/fsum"
)

// edfStatistic returns the statistic of test t of a sorted sample against
// ref, its name, and the Kolmogorov distance.
func edfStatistic(t Test, s Sorted, ref CDF) (Statistic, KSDistance) {
	switch t {
	case AD:
		a2, d := andersonDarling(s, ref)
		return Statistic{Name: "A2", Value: a2}, d
	case CvM:
		w2, d := cramerVonMises(s, ref)
		return Statistic{Name: "W2", Value: w2}, d
	}
	d := Distance(s, ref)
	return Statistic{Name: "D", Value: d.D}, d
}

// edfResult starts the result of EDF test t of a non-empty sample against
// ref: statistic, n and effect size, without the p-value.
func edfResult(t Test, s Sorted, ref CDF) (Result, error) {
	if err := t.needEDF(); err != nil {
		return Result{}, err
	}
	if len(s.x) == 0 {
		return Result{}, fmt.Errorf("%v needs at least one value", t)
	}
	st, d := edfStatistic(t, s, ref)
	return Result{Test: t, Statistic: st, N: len(s.x), Effect: Statistic{Name: "D", Value: d.D}}, nil
}

// needEDF reports an error unless t is a statistic of the empirical
// distribution function.
func (t Test) needEDF() error {
	if t == KS || t == AD || t == CvM {
		return nil
	}
	return fmt.Errorf("%v is not a test of the empirical distribution function: use kolmogorov-smirnov, anderson-darling or cramer-von-mises", t)
}

// Specified tests whether the sample comes from ref, whose parameters were
// fixed in advance (not estimated from this sample), by KS, AD or CvM. The
// p-values assume ref is continuous:
//
//   - KS: exact for n <= 1000 (Marsaglia, Tsang & Wang 2003), the
//     asymptotic Kolmogorov distribution with a 1/(6 sqrt n) shift above
//     (see ksExactMaxN for the crossover);
//   - AD: Marsaglia & Marsaglia (2004), limit distribution plus finite-n
//     correction;
//   - CvM: Csörgő & Faraway (1996), limit distribution plus the 1/n term.
//
// For data recorded at a finite resolution use KSAtResolution; for a
// discrete reference use chi-square (IntegerCells, ChiSquare).
func Specified(t Test, s Sorted, ref CDF) (Result, error) {
	res, err := edfResult(t, s, ref)
	if err != nil {
		return Result{}, err
	}
	n, st := res.N, res.Statistic.Value
	switch t {
	case KS:
		res.PValue, res.Method = ksPValue(n, st)
	case AD:
		res.PValue = adSpecifiedP(n, st)
		res.Method = Method{Kind: Approximation, Source: "Marsaglia & Marsaglia (2004)"}
	case CvM:
		res.PValue = cvmSpecifiedP(n, st)
		res.Method = Method{Kind: Approximation, Source: "Csörgő & Faraway (1996), eq. 1.8"}
	}
	return res, nil
}

// The smallest n for which the published p-value formulas for estimated
// parameters are used; below them the p-value is bootstrapped. Stephens'
// modified AD and CvM statistics are given for n >= 8 (D'Agostino &
// Stephens 1986, ch. 4; common practice follows it); Dallal & Wilkinson's
// (1986) table and fit start at n = 4 and 5.
const (
	minFormulaN    = 8
	minLillieforsN = 5
)

// Normal tests normality with the mean and the standard deviation (n - 1
// denominator) estimated from the same sample, by KS (the Lilliefors test),
// AD or CvM. The statistic is computed against N(mean, sd); its null
// distribution no longer depends on the parameters but is not that of
// Specified. p-values:
//
//   - KS: the Dallal & Wilkinson (1986) approximation where it gives
//     p <= 0.1, the range its authors fitted (The American Statistician
//     40:294-296); above 0.1, a seeded parametric bootstrap with r;
//   - AD: Stephens' A* = A²(1 + 0.75/n + 2.25/n²) and the formula of
//     D'Agostino & Stephens (1986), Table 4.9 (see adNormalP);
//   - CvM: Stephens' W* = W²(1 + 0.5/n) and the formula of the same table
//     (see cvmNormalP).
//
// Below n = 5 (KS) or 8 (AD, CvM) the p-value is bootstrapped. It needs n >= 3 and values that
// are not all equal.
func Normal(t Test, s Sorted, r Resampling) (Result, error) {
	n := len(s.x)
	if n < 3 {
		return Result{}, fmt.Errorf("%v for normality needs at least 3 values, got %d", t, n)
	}
	mu, sd := meanSD(s.x)
	if !(sd > 0) {
		return Result{}, fmt.Errorf("%v for normality needs values that are not all equal", t)
	}
	ref := normalRef{mu: mu, sigma: sd}
	res, err := edfResult(t, s, ref)
	if err != nil {
		return Result{}, err
	}
	res.Estimates = map[string]float64{"mean": mu, "sd": sd}
	st := res.Statistic.Value
	if n >= minLillieforsN && t == KS {
		if p := lillieforsDW(n, st); p <= 0.1 {
			res.PValue = p
			res.Method = Method{Kind: Approximation, Source: "Dallal & Wilkinson (1986)"}
			return res, nil
		}
	}
	if n >= minFormulaN {
		switch t {
		case AD:
			res.PValue = adNormalP(n, st)
			res.Method = Method{Kind: Approximation, Source: "Stephens (1974); D'Agostino & Stephens (1986), table 4.9"}
			return res, nil
		case CvM:
			res.PValue = cvmNormalP(n, st)
			res.Method = Method{Kind: Approximation, Source: "Stephens (1974); D'Agostino & Stephens (1986), table 4.9"}
			return res, nil
		}
	}
	return withBootstrap(res, t, s, ref, fitNormal, r)
}

// Exponential tests that the sample comes from an exponential distribution
// with origin 0 and its scale estimated by the sample mean (the maximum
// likelihood estimate), by KS (Lilliefors 1969), AD or CvM. p-values: AD
// from Stephens' modification A²(1 + 0.6/n) and its formula (see
// adExponentialP) for n >= 8; otherwise a seeded parametric bootstrap with
// r. The null distribution of each statistic does not depend on the scale,
// so the bootstrap is an exact Monte Carlo test. Values must be >= 0 and not
// all 0.
func Exponential(t Test, s Sorted, r Resampling) (Result, error) {
	n := len(s.x)
	if n < 2 {
		return Result{}, fmt.Errorf("%v for an exponential needs at least 2 values, got %d", t, n)
	}
	if s.x[0] < 0 {
		return Result{}, fmt.Errorf("%v for an exponential needs values >= 0, the smallest is %v", t, s.x[0])
	}
	mean, _ := meanSD(s.x)
	if !(mean > 0) {
		return Result{}, fmt.Errorf("%v for an exponential needs values that are not all 0", t)
	}
	ref := exponentialRef{rate: 1 / mean}
	res, err := edfResult(t, s, ref)
	if err != nil {
		return Result{}, err
	}
	res.Estimates = map[string]float64{"rate": ref.rate}
	if t == AD && n >= minFormulaN {
		res.PValue = adExponentialP(n, res.Statistic.Value)
		res.Method = Method{Kind: Approximation, Source: "Stephens (1974); D'Agostino & Stephens (1986), section 4.9"}
		return res, nil
	}
	return withBootstrap(res, t, s, ref, fitExponential, r)
}

// Estimated tests the sample against fitted, a reference whose parameters
// were estimated from this same sample, by KS, AD or CvM with a seeded
// parametric bootstrap p-value (see BootstrapPValue). refit must be the
// estimator that produced fitted.
func Estimated(t Test, s Sorted, fitted Fitted, refit Refit, r Resampling) (Result, error) {
	res, err := edfResult(t, s, fitted)
	if err != nil {
		return Result{}, err
	}
	return withBootstrap(res, t, s, fitted, refit, r)
}

func withBootstrap(res Result, t Test, s Sorted, fitted Fitted, refit Refit, r Resampling) (Result, error) {
	p, err := BootstrapPValue(t, res.Statistic.Value, len(s.x), fitted, refit, r)
	if err != nil {
		return Result{}, err
	}
	res.PValue = p
	res.Method = Method{Kind: Bootstrap, Source: "parametric bootstrap", B: r.replicates(), Seed: r.Seed}
	return res, nil
}

// lillieforsDW is the Dallal & Wilkinson (1986) approximation of the
// p-value of the Lilliefors statistic D (normal, mean and variance
// estimated):
//
//	p = exp(-7.01256 Kd² (N + 2.78019) + 2.99587 Kd sqrt(N + 2.78019)
//	        - 0.122119 + 0.974598/sqrt(N) + 1.67997/N)
//
// with Kd = D, N = n for n <= 100 and Kd = D (n/100)^0.49, N = 100 above.
// The authors fitted it for p <= 0.1 only.
func lillieforsDW(n int, d float64) float64 {
	kd, nd := d, float64(n)
	if n > 100 {
		kd = d * math.Pow(nd/100, 0.49)
		nd = 100
	}
	return math.Exp(-7.01256*kd*kd*(nd+2.78019) + 2.99587*kd*math.Sqrt(nd+2.78019) -
		0.122119 + 0.974598/math.Sqrt(nd) + 1.67997/nd)
}

// meanSD returns the mean and the standard deviation with denominator n - 1
// (0 for n < 2), by two passes.
func meanSD(x []float64) (float64, float64) {
	n := float64(len(x))
	var s fsum.Neumaier
	for _, v := range x {
		s.Add(v)
	}
	mu := s.Value() / n
	if len(x) < 2 {
		return mu, 0
	}
	var ss, c fsum.Neumaier
	for _, v := range x {
		ss.Add((v - mu) * (v - mu))
		c.Add(v - mu)
	}
	// The corrected two-pass formula (Chan, Golub & LeVeque 1983).
	cv := c.Value()
	return mu, math.Sqrt((ss.Value() - cv*cv/n) / (n - 1))
}

// normalRef is N(mu, sigma²) with a bootstrap sampler. Both tails come
// from erfc, Phi(z) = erfc(-z/sqrt 2)/2, so that ln(1 - F) in
// Anderson-Darling stays finite far into the upper tail (1 - erf loses it
// beyond z of about 8).
type normalRef struct {
	mu, sigma float64
}

func (d normalRef) CDF(x float64) float64 {
	return 0.5 * math.Erfc(-(x-d.mu)/(d.sigma*math.Sqrt2))
}

func (d normalRef) Survival(x float64) float64 {
	return 0.5 * math.Erfc((x-d.mu)/(d.sigma*math.Sqrt2))
}

func (d normalRef) Draw(rng *rand.Rand, dst []float64) {
	for i := range dst {
		dst[i] = d.mu + d.sigma*rng.NormFloat64()
	}
}

func fitNormal(x []float64) (Fitted, error) {
	mu, sd := meanSD(x)
	if !(sd > 0) {
		return nil, fmt.Errorf("normal fit needs values that are not all equal")
	}
	return normalRef{mu: mu, sigma: sd}, nil
}

// exponentialRef is the exponential distribution with origin 0.
type exponentialRef struct {
	rate float64
}

func (d exponentialRef) CDF(x float64) float64 {
	if x <= 0 {
		return 0
	}
	return -math.Expm1(-d.rate * x)
}

func (d exponentialRef) Survival(x float64) float64 {
	if x <= 0 {
		return 1
	}
	return math.Exp(-d.rate * x)
}

func (d exponentialRef) Draw(rng *rand.Rand, dst []float64) {
	for i := range dst {
		dst[i] = rng.ExpFloat64() / d.rate
	}
}

func fitExponential(x []float64) (Fitted, error) {
	mean, _ := meanSD(x)
	if !(mean > 0) {
		return nil, fmt.Errorf("exponential fit needs a positive mean")
	}
	return exponentialRef{rate: 1 / mean}, nil
}
