package relate

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/assay-project/assay/checks/internal/order"
)

// madConstant turns the median absolute residual into a scale that is
// consistent for the normal sd: Φ⁻¹(3/4) rounded to 0.6745, the value of
// Iglewicz & Hoaglin (1993) and of MASS::rlm (Venables & Ripley 2002,
// Modern Applied Statistics with S, 4th ed., §6.5), so that fits match R.
const madConstant = 0.6745

// residualScale returns median|y - a - b x| / 0.6745, the MAD of the
// residuals about zero (as MASS::rlm), using e as scratch.
func residualScale(x, y []float64, a, b float64, e []float64) float64 {
	for i := range x {
		e[i] = math.Abs(y[i] - a - b*x[i])
	}
	return medianInPlace(e) / madConstant
}

// RobustLine is a line fitted robustly, y = Intercept + Slope·x, with
// Scale = median|residual| / 0.6745, a residual sd that the outliers the
// fit resists do not inflate. On a second pass Standardized scores each
// row.
type RobustLine struct {
	Intercept, Slope, Scale float64
}

// Standardized returns the row's residual in units of the robust scale,
// (y - Intercept - Slope·x) / Scale. With Scale 0 (more than half the rows
// on the line) a row off the line is ±Inf and a row on it 0.
func (l RobustLine) Standardized(x, y float64) float64 {
	e := y - l.Intercept - l.Slope*x
	if e == 0 {
		return 0
	}
	return e / l.Scale
}

// TheilSenOptions sets how TheilSen finds the median of the pairwise
// slopes.
type TheilSenOptions struct {
	// MaxExactPairs is the largest number of pairs n(n-1)/2 for which every
	// slope is computed (8 bytes each); zero means DefaultMaxExactPairs.
	MaxExactPairs int64
	// Pairs is how many pairs are drawn above that; zero means
	// DefaultSampledPairs.
	Pairs int
	// Seed seeds the draw; the same seed gives the same fit.
	Seed uint64
}

// Defaults of TheilSenOptions. With 2²⁰ sampled pairs the 95% interval for
// the exact slope spans about ±0.1% of the pairwise slopes' distribution
// around its median (±1.96·0.5/sqrt(2²⁰) in probability).
const (
	DefaultMaxExactPairs = 1 << 21 // n up to 2048
	DefaultSampledPairs  = 1 << 20
)

// TheilSenFit is a Theil-Sen line y = Intercept + Slope·x.
type TheilSenFit struct {
	RobustLine
	N int64
	// Pairs is the number of slopes the median was taken of: every pair
	// with distinct x, or the pairs drawn.
	Pairs int64
	// Sampled is set when the slope is the median of sampled pairs.
	Sampled bool
	// SlopeLow and SlopeHigh bound the exact Theil-Sen slope with 95%
	// confidence when Sampled (see TheilSen); both equal Slope otherwise.
	SlopeLow, SlopeHigh float64
}

// TheilSen fits the line whose slope is the median of the slopes
// (y_j - y_i)/(x_j - x_i) over all pairs with x_i ≠ x_j (Theil 1950, "A
// rank-invariant method of linear and polynomial regression analysis",
// Proc. KNAW 53; Sen 1968, "Estimates of the regression coefficient based
// on Kendall's tau", JASA 63(324):1379-1389, which allows ties in x), and
// whose intercept is the median of y_i - Slope·x_i. An even number of
// slopes or points takes the mean of the two middle values. Its breakdown
// point is 1 - 1/√2 ≈ 29%: that share of arbitrary pairs cannot carry the
// slope away.
//
// Up to opt.MaxExactPairs pairs every slope is computed (O(n²) time and
// memory) and the median found by selection. Above, opt.Pairs pairs are
// drawn uniformly with replacement from those with distinct x (a pair with
// x_i = x_j is redrawn), seeded by opt.Seed, and the slope is the median
// of their slopes: an estimate of the exact Theil-Sen slope, which is the
// median θ of the finite population of pairwise slopes. Its accuracy is
// given, distribution-free, by order statistics of the sample: the number
// K of sampled slopes below θ is Binomial(M, 1/2) (M draws; at most that
// spread with ties), so [s_(l), s_(u)] with l = ⌊M/2 - 0.98√M⌋ and
// u = ⌈M/2 + 0.98√M⌉ + 1 covers θ with probability about 95% (normal
// approximation to the binomial; 0.98 = 1.96/2). These are SlopeLow and
// SlopeHigh. The intercept is then exact given the slope, from all n
// points.
func TheilSen(x, y []float64, opt TheilSenOptions) (TheilSenFit, error) {
	if err := checkPairs("theil-sen fit", x, y, 2); err != nil {
		return TheilSenFit{}, err
	}
	n := len(x)
	maxExact := opt.MaxExactPairs
	if maxExact <= 0 {
		maxExact = DefaultMaxExactPairs
	}
	var (
		fit TheilSenFit
		err error
	)
	if int64(n)*int64(n-1)/2 <= maxExact {
		fit, err = theilSenExact(x, y)
	} else {
		fit, err = theilSenSampled(x, y, opt)
	}
	if err != nil {
		return TheilSenFit{}, err
	}
	fit.N = int64(n)
	e := make([]float64, n)
	for i := range x {
		e[i] = y[i] - fit.Slope*x[i]
	}
	fit.Intercept = medianInPlace(e)
	fit.Scale = residualScale(x, y, fit.Intercept, fit.Slope, e)
	return fit, nil
}

var errConstantX = errors.New("theil-sen fit is undefined: x is constant")

func theilSenExact(x, y []float64) (TheilSenFit, error) {
	n := len(x)
	slopes := make([]float64, 0, n*(n-1)/2)
	for i := range x {
		for j := i + 1; j < n; j++ {
			if dx := x[j] - x[i]; dx != 0 {
				slopes = append(slopes, (y[j]-y[i])/dx)
			}
		}
	}
	if len(slopes) == 0 {
		return TheilSenFit{}, errConstantX
	}
	b := medianInPlace(slopes)
	return TheilSenFit{RobustLine: RobustLine{Slope: b}, Pairs: int64(len(slopes)), SlopeLow: b, SlopeHigh: b}, nil
}

func theilSenSampled(x, y []float64, opt TheilSenOptions) (TheilSenFit, error) {
	m := opt.Pairs
	if m <= 0 {
		m = DefaultSampledPairs
	}
	n := len(x)
	rng := rand.New(rand.NewPCG(opt.Seed, 0x7468_6569_6c73_656e))
	slopes := make([]float64, m)
	// A redraw budget: when almost every pair shares its x, sampling
	// cannot find enough pairs.
	budget := 64 * m
	for k := 0; k < m; {
		if budget == 0 {
			return TheilSenFit{}, fmt.Errorf("theil-sen fit: fewer than 1 in 64 pairs have distinct x; too few to sample %d pairs", m)
		}
		budget--
		i := rng.IntN(n)
		j := rng.IntN(n - 1)
		if j >= i {
			j++
		}
		dx := x[j] - x[i]
		if dx == 0 {
			continue
		}
		slopes[k] = (y[j] - y[i]) / dx
		k++
	}
	b := medianInPlace(slopes) // slopes now split around the middle
	half := 0.98 * math.Sqrt(float64(m))
	l := max(1, int(math.Floor(float64(m)/2-half)))
	u := min(m, int(math.Ceil(float64(m)/2+half))+1)
	h := m / 2
	// medianInPlace left slopes[:h] <= slopes[h] <= slopes[h+1:].
	lo := order.Select(slopes[:h], min(l-1, h-1))
	hi := b
	if u-1 > h {
		hi = order.Select(slopes[h+1:], u-1-(h+1))
	}
	return TheilSenFit{RobustLine: RobustLine{Slope: b}, Pairs: int64(m), Sampled: true, SlopeLow: lo, SlopeHigh: hi}, nil
}

// HuberOptions sets Huber's M-estimator.
type HuberOptions struct {
	// K is the tuning constant in units of the scale; zero means 1.345,
	// which gives 95% efficiency at the normal (Holland & Welsch 1977;
	// common practice, and the default of MASS::rlm).
	K float64
	// Tol stops the iteration when the residuals change by at most Tol
	// relative to their size (root sum of squares); zero means 1e-10.
	Tol float64
	// MaxIter caps the iterations; zero means 100.
	MaxIter int
}

// HuberFit is a Huber M-estimate of a line y = Intercept + Slope·x. Its
// Scale is the MAD scale of the last iteration, median|e| / 0.6745 of the
// residuals the last weights were computed from.
type HuberFit struct {
	RobustLine
	N int64
	// Iterations is the number of reweighted fits made; Converged is
	// false when MaxIter was reached first.
	Iterations int
	Converged  bool
	// Downweighted counts the rows with final weight below 1, those with
	// |residual| > K·Scale.
	Downweighted int64
}

// Huber fits a line by Huber's M-estimation (Huber 1964, "Robust
// estimation of a location parameter", Ann. Math. Statist. 35(1):73-101;
// regression: Huber 1973) with iteratively reweighted least squares, as
// MASS::rlm(psi = psi.huber, scale.est = "MAD") does: start from the
// least-squares line; then repeat
//
//	s = median|e_i| / 0.6745                   (MAD of the residuals about 0)
//	w_i = min(1, K s / |e_i|)                  (Huber's weight, w = 1 at e = 0)
//	(a, b) = weighted least squares with w_i   (closed form for a line)
//
// until the residuals change by at most Tol relative to their size. Rows
// more than K·s from the line get weight K·s/|e|, so a gross outlier pulls
// with a bounded force; but leverage points (outlying x) are not
// down-weighted, so Huber's estimate resists outliers in y only. It needs
// at least three pairs and x not constant; a scale of zero (more than half
// the points exactly on the line) stops the iteration with that line.
func Huber(x, y []float64, opt HuberOptions) (HuberFit, error) {
	if err := checkPairs("huber fit", x, y, 3); err != nil {
		return HuberFit{}, err
	}
	k, tol, maxIter := opt.K, opt.Tol, opt.MaxIter
	if k <= 0 {
		k = 1.345
	}
	if tol <= 0 {
		tol = 1e-10
	}
	if maxIter <= 0 {
		maxIter = 100
	}
	var m Moments
	m.AddAll(x, y)
	line, err := m.Line()
	if err != nil {
		return HuberFit{}, fmt.Errorf("huber fit: %w", err)
	}
	n := len(x)
	a, b := line.Intercept, line.Slope
	e := make([]float64, n)
	w := make([]float64, n)
	fit := HuberFit{N: int64(n)}
	for fit.Iterations < maxIter {
		s := residualScale(x, y, a, b, e)
		fit.Scale = s
		if s == 0 {
			fit.Converged = true
			break
		}
		c := k * s
		for i := range x {
			r := math.Abs(y[i] - a - b*x[i])
			w[i] = 1
			if r > c {
				w[i] = c / r
			}
		}
		na, nb, ok := weightedLine(x, y, w)
		if !ok {
			return HuberFit{}, errors.New("huber fit: the weighted points have constant x")
		}
		fit.Iterations++
		var change, size float64
		for i := range x {
			ro, rn := y[i]-a-b*x[i], y[i]-na-nb*x[i]
			change += (ro - rn) * (ro - rn)
			size += ro * ro
		}
		a, b = na, nb
		if math.Sqrt(change/math.Max(size, 1e-300)) <= tol {
			fit.Converged = true
			break
		}
	}
	fit.Intercept, fit.Slope = a, b
	for i := range x {
		if math.Abs(y[i]-a-b*x[i]) > k*fit.Scale {
			fit.Downweighted++
		}
	}
	return fit, nil
}

// weightedLine returns the weighted least-squares line through (x, y) with
// weights w > 0, by weighted means and centred sums; ok is false when the
// weighted x has no spread.
func weightedLine(x, y, w []float64) (a, b float64, ok bool) {
	var sw, swx, swy float64
	for i := range x {
		sw += w[i]
		swx += w[i] * x[i]
		swy += w[i] * y[i]
	}
	mx, my := swx/sw, swy/sw
	var sxx, sxy float64
	for i := range x {
		dx := x[i] - mx
		sxx += w[i] * dx * dx
		sxy += w[i] * dx * (y[i] - my)
	}
	if sxx <= 0 {
		return 0, 0, false
	}
	b = sxy / sxx
	return my - b*mx, b, true
}
