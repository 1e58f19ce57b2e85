package dist

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/stat/distuv"
)

// The continuous models. Where gonum's distuv (v0.17.0) has the family its
// CDF, survival, quantile and density are used as they are; this file adds
// only what distuv lacks: a Rand that takes an explicit source, guards for
// values outside the support, and the Cauchy family, which distuv does not
// have. Each model is a small value type; Dist wraps one.

// model is what a Dist needs of a family's distribution with its
// parameters set. Quantile is only called with p in [0, 1].
type model interface {
	CDF(x float64) float64
	Survival(x float64) float64
	Quantile(p float64) float64
	LogProb(x float64) float64
	Rand(r *rand.Rand) float64
	// Support returns the smallest and largest values with positive
	// density or mass (infinite where unbounded).
	Support() (lo, hi float64)
}

// normal wraps distuv.Normal: density exp(−(x−μ)²/(2σ²)) / (σ√(2π)).
// distuv's survival is ½(1 − erf(z/√2)), which loses the upper tail to
// cancellation (0 beyond about 8.3 sd); it is taken here as ½ erfc(z/√2),
// the mirror of distuv's CDF.
type normal struct{ d distuv.Normal }

func (m normal) CDF(x float64) float64 { return m.d.CDF(x) }
func (m normal) Survival(x float64) float64 {
	return 0.5 * math.Erfc((x-m.d.Mu)/(m.d.Sigma*math.Sqrt2))
}
func (m normal) Quantile(p float64) float64 { return m.d.Quantile(p) }
func (m normal) LogProb(x float64) float64  { return m.d.LogProb(x) }
func (m normal) Rand(r *rand.Rand) float64  { return m.d.Mu + m.d.Sigma*r.NormFloat64() }
func (m normal) Support() (lo, hi float64)  { return math.Inf(-1), math.Inf(1) }

// lognormal wraps distuv.LogNormal: ln X is normal with mean μ and sd σ.
// distuv's CDF and density are undefined (NaN) below 0 and its survival
// loses the upper tail to cancellation, so those three are guarded or
// computed with erfc here.
type lognormal struct{ d distuv.LogNormal }

func (m lognormal) CDF(x float64) float64 {
	if x <= 0 {
		return 0
	}
	return m.d.CDF(x)
}

// Survival is ½ erfc((ln x − μ)/(σ√2)).
func (m lognormal) Survival(x float64) float64 {
	if x <= 0 {
		return 1
	}
	return 0.5 * math.Erfc((math.Log(x)-m.d.Mu)/(m.d.Sigma*math.Sqrt2))
}
func (m lognormal) Quantile(p float64) float64 { return m.d.Quantile(p) }
func (m lognormal) LogProb(x float64) float64 {
	if x <= 0 {
		return math.Inf(-1)
	}
	return m.d.LogProb(x)
}
func (m lognormal) Rand(r *rand.Rand) float64 {
	return math.Exp(m.d.Mu + m.d.Sigma*r.NormFloat64())
}
func (m lognormal) Support() (lo, hi float64) { return 0, math.Inf(1) }

// exponential wraps distuv.Exponential: density λ e^(−λx), x ≥ 0.
type exponential struct{ d distuv.Exponential }

func (m exponential) CDF(x float64) float64      { return m.d.CDF(x) }
func (m exponential) Survival(x float64) float64 { return m.d.Survival(x) }

// Quantile is −ln(1−p)/rate computed with log1p: distuv's −ln(1−p) loses
// the digits of p below about 1e-8.
func (m exponential) Quantile(p float64) float64 { return -math.Log1p(-p) / m.d.Rate }
func (m exponential) LogProb(x float64) float64  { return m.d.LogProb(x) }
func (m exponential) Rand(r *rand.Rand) float64  { return r.ExpFloat64() / m.d.Rate }
func (m exponential) Support() (lo, hi float64)  { return 0, math.Inf(1) }

// gamma wraps distuv.Gamma (shape α, rate β = 1/scale): density
// β^α x^(α−1) e^(−βx) / Γ(α).
type gamma struct{ d distuv.Gamma }

func (m gamma) CDF(x float64) float64      { return m.d.CDF(x) }
func (m gamma) Survival(x float64) float64 { return m.d.Survival(x) }

// Quantile takes distuv's inverse and, in the lower tail (p < 0.25), where
// distuv's root search has an absolute tolerance of about 4e-16 and so
// returns 0 for quantiles below that (shape 0.3, p = 1e-6), refines it by
// Newton's method on ln P(k, βx) = ln p in u = ln x, starting from the
// small-x form P(k, y) ≈ y^k / Γ(k+1) when distuv's value is unusable:
//
//	u ← u − (ln P(k, βx) − ln p) · P(k, βx) / (x f(x)).
func (m gamma) Quantile(p float64) float64 {
	x := m.d.Quantile(p)
	if p == 0 || p >= 0.25 {
		return x
	}
	a, b := m.d.Alpha, m.d.Beta
	if !(x > 0) || x*b < 1e-8 {
		lg, _ := math.Lgamma(a + 1)
		x = math.Exp((math.Log(p)+lg)/a) / b
	}
	lp := math.Log(p)
	for range 50 {
		c := m.d.CDF(x)
		f := math.Exp(m.d.LogProb(x))
		if !(c > 0) || !(f > 0) {
			break
		}
		step := (math.Log(c) - lp) * c / (x * f)
		x *= math.Exp(-step)
		if math.Abs(step) < 1e-15 {
			break
		}
	}
	return x
}
func (m gamma) LogProb(x float64) float64 { return m.d.LogProb(x) }
func (m gamma) Rand(r *rand.Rand) float64 {
	d := m.d
	d.Src = r
	return d.Rand()
}
func (m gamma) Support() (lo, hi float64) { return 0, math.Inf(1) }

// weibull wraps distuv.Weibull (shape k, scale λ): CDF 1 − exp(−(x/λ)^k).
type weibull struct{ d distuv.Weibull }

func (m weibull) CDF(x float64) float64      { return m.d.CDF(x) }
func (m weibull) Survival(x float64) float64 { return m.d.Survival(x) }

// Quantile is λ(−ln(1−p))^(1/k) computed with log1p, which keeps the
// digits of small p that distuv's ln(1−p) loses.
func (m weibull) Quantile(p float64) float64 {
	return m.d.Lambda * math.Pow(-math.Log1p(-p), 1/m.d.K)
}
func (m weibull) LogProb(x float64) float64 { return m.d.LogProb(x) }
func (m weibull) Rand(r *rand.Rand) float64 { return m.Quantile(r.Float64()) }
func (m weibull) Support() (lo, hi float64) { return 0, math.Inf(1) }

// uniform wraps distuv.Uniform on [min, max].
type uniform struct{ d distuv.Uniform }

func (m uniform) CDF(x float64) float64      { return m.d.CDF(x) }
func (m uniform) Survival(x float64) float64 { return m.d.Survival(x) }
func (m uniform) Quantile(p float64) float64 { return m.d.Quantile(p) }
func (m uniform) LogProb(x float64) float64  { return m.d.LogProb(x) }
func (m uniform) Rand(r *rand.Rand) float64  { return m.d.Min + r.Float64()*(m.d.Max-m.d.Min) }
func (m uniform) Support() (lo, hi float64)  { return m.d.Min, m.d.Max }

// beta wraps distuv.Beta: density x^(α−1) (1−x)^(β−1) / B(α, β) on (0, 1).
type beta struct{ d distuv.Beta }

func (m beta) CDF(x float64) float64 { return m.d.CDF(x) }

// Survival is 1 − F(x) where F(x) ≤ ½, which is exact to rounding there;
// distuv's I_(1−x)(β, α) loses the digits of small x in forming 1 − x.
func (m beta) Survival(x float64) float64 {
	if c := m.d.CDF(x); c <= 0.5 {
		return 1 - c
	}
	return m.d.Survival(x)
}
func (m beta) Quantile(p float64) float64 { return m.d.Quantile(p) }
func (m beta) LogProb(x float64) float64  { return m.d.LogProb(x) }
func (m beta) Rand(r *rand.Rand) float64 {
	d := m.d
	d.Src = r
	return d.Rand()
}
func (m beta) Support() (lo, hi float64) { return 0, 1 }

// logistic has CDF 1 / (1 + e^(−z)), z = (x − μ)/s. distuv.Logistic gives
// the CDF and quantile; its LogProb (v0.17.0) ignores μ and s, and it has no
// Rand, so the density, survival and sampling are computed here:
//
//	ln f(x) = −ln s − |z| − 2 ln(1 + e^(−|z|))
//
// which is the textbook −z − ln s − 2 ln(1 + e^(−z)) rearranged with the
// density's symmetry so that e^(−|z|) never overflows.
type logistic struct{ d distuv.Logistic }

func (m logistic) CDF(x float64) float64 { return m.d.CDF(x) }

// Survival is 1 / (1 + e^z).
func (m logistic) Survival(x float64) float64 { return 1 / (1 + math.Exp((x-m.d.Mu)/m.d.S)) }
func (m logistic) Quantile(p float64) float64 { return m.d.Quantile(p) }
func (m logistic) LogProb(x float64) float64 {
	z := math.Abs((x - m.d.Mu) / m.d.S)
	return -math.Log(m.d.S) - z - 2*math.Log1p(math.Exp(-z))
}

// Rand inverts the CDF at a uniform draw in (0, 1).
func (m logistic) Rand(r *rand.Rand) float64 {
	u := r.Float64()
	for u == 0 {
		u = r.Float64()
	}
	return m.d.Quantile(u)
}
func (m logistic) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }

// studentT wraps distuv.StudentsT, the location-scale Student t with ν
// degrees of freedom: density
// Γ((ν+1)/2) / (Γ(ν/2) √(νπ) σ) · (1 + z²/ν)^(−(ν+1)/2), z = (x − μ)/σ.
type studentT struct{ d distuv.StudentsT }

func (m studentT) CDF(x float64) float64      { return m.d.CDF(x) }
func (m studentT) Survival(x float64) float64 { return m.d.Survival(x) }

// Quantile refines distuv's value, whose inverse incomplete beta function
// is good to about 1e-9 relative, by two Newton steps on F(q) = p; above
// the median the step uses the survival, (1−p) − S(q), which keeps its
// digits (1−p is exact there, Sterbenz's lemma).
func (m studentT) Quantile(p float64) float64 {
	q := m.d.Quantile(p)
	if p == 0 || p == 0.5 || p == 1 || math.IsInf(q, 0) {
		return q
	}
	for range 2 {
		f := m.d.Prob(q)
		if !(f > 0) {
			break
		}
		if p < 0.5 {
			q -= (m.d.CDF(q) - p) / f
		} else {
			q -= ((1 - p) - m.d.Survival(q)) / f
		}
	}
	return q
}
func (m studentT) LogProb(x float64) float64 { return m.d.LogProb(x) }
func (m studentT) Rand(r *rand.Rand) float64 {
	d := m.d
	d.Src = r
	return d.Rand()
}
func (m studentT) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }

// cauchy is the Cauchy (Lorentz) distribution with location x0 and scale γ,
// absent from distuv:
//
//	f(x) = 1 / (πγ (1 + z²)),  F(x) = ½ + arctan(z)/π,  z = (x − x0)/γ.
//
// F is computed as atan2(1, −z)/π, the same value without the cancellation
// of ½ + arctan(z)/π in the lower tail; the survival is atan2(1, z)/π. The
// quantile x0 + γ tan(π(p − ½)) is written as x0 − γ/tan(πp) below the
// median and x0 + γ/tan(π(1−p)) above it for the same reason (Johnson,
// Kotz & Balakrishnan 1994, Continuous Univariate Distributions vol. 1,
// ch. 16).
type cauchy struct {
	X0, Gamma float64
}

func (m cauchy) CDF(x float64) float64 {
	return math.Atan2(1, -(x-m.X0)/m.Gamma) / math.Pi
}

func (m cauchy) Survival(x float64) float64 {
	return math.Atan2(1, (x-m.X0)/m.Gamma) / math.Pi
}

func (m cauchy) Quantile(p float64) float64 {
	switch {
	case p == 0.5:
		return m.X0
	case p < 0.5:
		return m.X0 - m.Gamma/math.Tan(math.Pi*p)
	default:
		return m.X0 + m.Gamma/math.Tan(math.Pi*(1-p))
	}
}

func (m cauchy) LogProb(x float64) float64 {
	z := (x - m.X0) / m.Gamma
	return -math.Log(math.Pi*m.Gamma) - math.Log1p(z*z)
}

func (m cauchy) Rand(r *rand.Rand) float64 { return m.X0 + m.Gamma*math.Tan(math.Pi*(r.Float64()-0.5)) }
func (m cauchy) Support() (lo, hi float64) { return math.Inf(-1), math.Inf(1) }
