package dist

import (
	"math"
	"math/rand/v2"
	"strconv"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/stat/distuv"
)

// The discrete models: Poisson and binomial from gonum's distuv (v0.17.0),
// with the quantile, the survival (distuv's 1 − CDF loses the upper tail)
// and a Rand with an explicit source added; negative binomial, geometric
// and Benford, which distuv does not have, written here. Values are whole
// numbers stored as float64; a mass is 0 (log −Inf) off the integers.

// discreteQuantile returns the smallest whole number k in [lo, hi] with
// cdf(k) ≥ p, the generalised inverse used by R's q* and SciPy's ppf
// functions. guess is a starting point (a normal approximation will do):
// the search widens a bracket from it by doubling steps, then bisects, so a
// poor guess costs only a few more CDF evaluations.
func discreteQuantile(cdf func(float64) float64, p, lo, hi, guess float64) float64 {
	if p <= 0 {
		return lo
	}
	if p >= 1 {
		return hi
	}
	k := math.Max(lo, math.Min(hi, math.Floor(guess)))
	if math.IsNaN(k) || math.IsInf(k, 0) {
		k = lo
	}
	// Find a < b with cdf(a) < p <= cdf(b), or stop at lo.
	var a, b float64
	if cdf(k) >= p {
		b = k
		step := 1.0
		for {
			a = math.Max(lo, b-step)
			if a == lo && cdf(lo) >= p {
				return lo
			}
			if cdf(a) < p {
				break
			}
			b = a
			step *= 2
		}
	} else {
		a = k
		step := 1.0
		for {
			b = math.Min(hi, a+step)
			if cdf(b) >= p || b == hi {
				break
			}
			a = b
			step *= 2
		}
	}
	for b-a > 1 {
		mid := math.Floor(a + (b-a)/2)
		if cdf(mid) >= p {
			b = mid
		} else {
			a = mid
		}
	}
	return b
}

// isWhole reports whether x is a finite whole number.
func isWhole(x float64) bool {
	return x == math.Trunc(x) && !math.IsInf(x, 0)
}

// poisson wraps distuv.Poisson: mass λ^k e^(−λ) / k!.
type poisson struct{ d distuv.Poisson }

func (m poisson) CDF(x float64) float64 { return m.d.CDF(x) }

// Survival is P(X > x) = P(⌊x⌋+1, λ), the regularised lower incomplete
// gamma function, the complement of distuv's CDF Q(⌊x⌋+1, λ).
func (m poisson) Survival(x float64) float64 {
	if x < 0 {
		return 1
	}
	return mathext.GammaIncReg(math.Floor(x)+1, m.d.Lambda)
}

func (m poisson) Quantile(p float64) float64 {
	l := m.d.Lambda
	return discreteQuantile(m.CDF, p, 0, math.Inf(1), l+math.Sqrt(l)*mathext.NormalQuantile(p))
}
func (m poisson) LogProb(x float64) float64 { return m.d.LogProb(x) }
func (m poisson) Rand(r *rand.Rand) float64 {
	d := m.d
	d.Src = r
	return d.Rand()
}
func (m poisson) Support() (lo, hi float64) { return 0, math.Inf(1) }

// binomial wraps distuv.Binomial: mass C(n, k) p^k (1−p)^(n−k), k = 0..n.
type binomial struct{ d distuv.Binomial }

func (m binomial) CDF(x float64) float64 { return m.d.CDF(x) }

// Survival is P(X > x) = I_p(⌊x⌋+1, n−⌊x⌋), the regularised incomplete beta
// function (Abramowitz & Stegun 1964, 26.5.24).
func (m binomial) Survival(x float64) float64 {
	switch {
	case x < 0:
		return 1
	case x >= m.d.N:
		return 0
	}
	k := math.Floor(x)
	return mathext.RegIncBeta(k+1, m.d.N-k, m.d.P)
}

func (m binomial) Quantile(p float64) float64 {
	n, q := m.d.N, m.d.P
	return discreteQuantile(m.CDF, p, 0, n, n*q+math.Sqrt(n*q*(1-q))*mathext.NormalQuantile(p))
}
func (m binomial) LogProb(x float64) float64 { return m.d.LogProb(x) }
func (m binomial) Rand(r *rand.Rand) float64 {
	d := m.d
	d.Src = r
	return d.Rand()
}
func (m binomial) Support() (lo, hi float64) { return 0, m.d.N }

// negBinomial is the negative binomial distribution of the number of
// failures before the size-th success, each trial succeeding with
// probability p (R's dnbinom(size, prob), SciPy's nbinom(n, p)):
//
//	P(k) = Γ(k+r) / (Γ(r) k!) · p^r (1−p)^k,  k = 0, 1, 2, ...
//
// with real size r > 0; mean r(1−p)/p, variance r(1−p)/p². Its CDF is
// P(X ≤ k) = I_p(r, k+1) and its survival I_(1−p)(k+1, r), I the
// regularised incomplete beta function (Johnson, Kemp & Kotz 2005,
// Univariate Discrete Distributions 3rd ed., ch. 5).
type negBinomial struct {
	R, P float64
}

func (m negBinomial) CDF(x float64) float64 {
	if x < 0 {
		return 0
	}
	return mathext.RegIncBeta(m.R, math.Floor(x)+1, m.P)
}

func (m negBinomial) Survival(x float64) float64 {
	if x < 0 {
		return 1
	}
	return mathext.RegIncBeta(math.Floor(x)+1, m.R, 1-m.P)
}

func (m negBinomial) Quantile(p float64) float64 {
	mean := m.R * (1 - m.P) / m.P
	sd := math.Sqrt(mean / m.P)
	return discreteQuantile(m.CDF, p, 0, math.Inf(1), mean+sd*mathext.NormalQuantile(p))
}

func (m negBinomial) LogProb(x float64) float64 {
	if x < 0 || !isWhole(x) {
		return math.Inf(-1)
	}
	a, _ := math.Lgamma(x + m.R)
	b, _ := math.Lgamma(m.R)
	c, _ := math.Lgamma(x + 1)
	return a - b - c + m.R*math.Log(m.P) + x*math.Log1p(-m.P)
}

// Rand draws the Poisson–gamma mixture: λ from a gamma with shape r and
// rate p/(1−p), then a Poisson count with mean λ (Johnson, Kemp & Kotz
// 2005, §5.3).
func (m negBinomial) Rand(r *rand.Rand) float64 {
	lambda := distuv.Gamma{Alpha: m.R, Beta: m.P / (1 - m.P), Src: r}.Rand()
	if lambda == 0 {
		return 0
	}
	return distuv.Poisson{Lambda: lambda, Src: r}.Rand()
}
func (m negBinomial) Support() (lo, hi float64) { return 0, math.Inf(1) }

// geometric is the number of failures before the first success, each
// trial succeeding with probability p (R's dgeom; SciPy's geom counts
// trials, k ≥ 1, so it is geom(p, loc=−1) here):
//
//	P(k) = p (1−p)^k,  F(k) = 1 − (1−p)^(k+1),  k = 0, 1, 2, ...
//
// F is computed as −expm1((k+1) log1p(−p)) so that small p keeps its
// digits.
type geometric struct {
	P float64
}

func (m geometric) CDF(x float64) float64 {
	if x < 0 {
		return 0
	}
	return -math.Expm1((math.Floor(x) + 1) * math.Log1p(-m.P))
}

func (m geometric) Survival(x float64) float64 {
	if x < 0 {
		return 1
	}
	return math.Exp((math.Floor(x) + 1) * math.Log1p(-m.P))
}

// Quantile starts from the closed form ⌈ln(1−q)/ln(1−p)⌉ − 1 and lets
// discreteQuantile correct it by a step where rounding put it off by one.
func (m geometric) Quantile(p float64) float64 {
	return discreteQuantile(m.CDF, p, 0, math.Inf(1), math.Ceil(math.Log1p(-p)/math.Log1p(-m.P))-1)
}

func (m geometric) LogProb(x float64) float64 {
	if x < 0 || !isWhole(x) {
		return math.Inf(-1)
	}
	return math.Log(m.P) + x*math.Log1p(-m.P)
}

// Rand is ⌊E / −ln(1−p)⌋ with E a standard exponential draw: P(X ≥ k) =
// P(E ≥ −k ln(1−p)) = (1−p)^k.
func (m geometric) Rand(r *rand.Rand) float64 {
	return math.Floor(r.ExpFloat64() / -math.Log1p(-m.P))
}
func (m geometric) Support() (lo, hi float64) { return 0, math.Inf(1) }

// benford is Benford's law for the number formed by the first k
// significant digits, d = 10^(k−1) .. 10^k − 1 (Benford 1938, Proc. Amer.
// Phil. Soc. 78(4); Newcomb 1881):
//
//	P(d) = log10(1 + 1/d),  F(d) = log10(d + 1) − (k − 1).
//
// F telescopes from the sum of log10((j+1)/j). k = 1 gives the first-digit
// law, k = 2 the first-two-digits law.
type benford struct {
	K int
}

func (m benford) Support() (lo, hi float64) {
	return math.Pow10(m.K - 1), math.Pow10(m.K) - 1
}

func (m benford) CDF(x float64) float64 {
	lo, hi := m.Support()
	switch {
	case x < lo:
		return 0
	case x >= hi:
		return 1
	}
	return math.Log10(math.Floor(x)+1) - float64(m.K-1)
}

// Survival is log10(10^k / (⌊x⌋ + 1)).
func (m benford) Survival(x float64) float64 {
	lo, hi := m.Support()
	switch {
	case x < lo:
		return 1
	case x >= hi:
		return 0
	}
	return math.Log10(math.Pow10(m.K) / (math.Floor(x) + 1))
}

func (m benford) Quantile(p float64) float64 {
	lo, hi := m.Support()
	return discreteQuantile(m.CDF, p, lo, hi, math.Pow(10, p+float64(m.K-1))-1)
}

func (m benford) LogProb(x float64) float64 {
	lo, hi := m.Support()
	if x < lo || x > hi || !isWhole(x) {
		return math.Inf(-1)
	}
	return math.Log(math.Log10(1 + 1/x))
}

// Rand is ⌊10^(k−1+U)⌋ for U uniform on [0, 1): its first k digits follow
// the law because log10 of the value is uniform over a decade.
func (m benford) Rand(r *rand.Rand) float64 {
	return math.Floor(math.Pow(10, float64(m.K-1)+r.Float64()))
}

// LeadingDigits returns the number formed by the first k significant
// decimal digits of x > 0, e.g. LeadingDigits(0.0372, 2) = 37. It reports
// false for x that is not a positive finite number or k outside 1..15.
//
// The digits are those of the shortest decimal that reads back as x, which
// is what a data file holds: a recorded 0.3 (stored as
// 0.29999999999999998...) gives 3, not 2. x is scaled by a power of ten
// into [10^(k−1), 10^k) and the whole part taken; only when the scaled
// value lies within 8 units in its last place below a whole number, where
// the binary scaling could have pushed a decimal's digits down by one, are
// the digits read from strconv's shortest formatting instead.
func LeadingDigits(x float64, k int) (int, bool) {
	if !(x > 0) || math.IsInf(x, 1) || k < 1 || k > 15 {
		return 0, false
	}
	lo, hi := math.Pow10(k-1), math.Pow10(k)
	e := int(math.Floor(math.Log10(x))) - (k - 1)
	v := scaleTen(x, e)
	for v < lo {
		e--
		v = scaleTen(x, e)
	}
	for v >= hi {
		e++
		v = scaleTen(x, e)
	}
	d := math.Floor(v)
	if d+1-v > 8*(math.Nextafter(v, hi)-v) {
		return int(d), true
	}
	digits := 0
	for _, c := range strconv.FormatFloat(x, 'e', -1, 64) {
		if c == 'e' || k == 0 {
			break
		}
		if c >= '0' && c <= '9' {
			digits = 10*digits + int(c-'0')
			k--
		}
	}
	for ; k > 0; k-- {
		digits *= 10
	}
	return digits, true
}

// scaleTen returns x / 10^e, dividing or multiplying by an exact power of
// ten so that the result is correctly rounded where 10^|e| is exact.
func scaleTen(x float64, e int) float64 {
	for e < -300 {
		x *= 1e300
		e += 300
	}
	for e > 300 {
		x /= 1e300
		e -= 300
	}
	if e >= 0 {
		return x / math.Pow10(e)
	}
	return x * math.Pow10(-e)
}
