package dist

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

var inf = math.Inf(1)

// anyReal is a parameter that takes any finite number: a location.
func anyReal(name, about string) Param {
	return Param{Name: name, Min: -inf, Max: inf, About: about}
}

// positive is a parameter above 0: a scale, shape or rate.
func positive(name, about string) Param {
	return Param{Name: name, Min: 0, Max: inf, MinOpen: true, About: about}
}

// probability is a parameter strictly between 0 and 1: at 0 or 1 the
// families degenerate to a point mass.
func probability(name, about string) Param {
	return Param{Name: name, Min: 0, Max: 1, MinOpen: true, MaxOpen: true, About: about}
}

// Supports shared by several families.
func above0([]float64) (Interval, string) {
	return between(0, inf, true, true), "values above 0"
}

func counts([]float64) (Interval, string) {
	return wholeBetween(0, inf), "whole numbers 0, 1, 2, ..."
}

// specs lists the families in documentation order. It is a fixed table,
// read only.
var specs = []*spec{
	{
		name: "normal", kind: Continuous, minN: 2,
		about:   "Gauss's normal distribution",
		support: "any real number",
		params: []Param{
			anyReal("mean", "location, the mean"),
			positive("sd", "standard deviation"),
		},
		method: "closed form: the sample mean and the standard deviation with divisor n (the maximum-likelihood estimate)",
		build: func(t []float64) model {
			return normal{distuv.Normal{Mu: t[0], Sigma: t[1]}}
		},
		estimate: estimateNormal,
	},
	{
		name: "lognormal", kind: Continuous, minN: 2,
		about:   "the distribution of exp(Y) for a normal Y",
		support: "x > 0",
		params: []Param{
			anyReal("meanlog", "mean of ln x"),
			positive("sdlog", "standard deviation of ln x"),
		},
		method:    "closed form: mean and standard deviation (divisor n) of ln x",
		inSupport: above0,
		build: func(t []float64) model {
			return lognormal{distuv.LogNormal{Mu: t[0], Sigma: t[1]}}
		},
		estimate: estimateLognormal,
	},
	{
		name: "exponential", kind: Continuous, minN: 1,
		about:   "the exponential distribution of waiting times, density rate·exp(−rate·x)",
		support: "x ≥ 0",
		params:  []Param{positive("rate", "events per unit, 1/mean")},
		method:  "closed form: rate = 1/mean",
		inSupport: func([]float64) (Interval, string) {
			return between(0, inf, false, true), "values of 0 or more"
		},
		build: func(t []float64) model {
			return exponential{distuv.Exponential{Rate: t[0]}}
		},
		estimate: estimateExponential,
	},
	{
		name: "gamma", kind: Continuous, minN: 2,
		about:   "the gamma distribution, density x^(shape−1) exp(−x/scale) / (Γ(shape) scale^shape)",
		support: "x > 0",
		params: []Param{
			positive("shape", "shape k"),
			positive("scale", "scale θ = 1/rate"),
		},
		method:    "Newton's method on ln k − ψ(k) = ln mean − mean ln x (Choi & Wette 1969) from Minka's (2002) approximation; scale = mean/k",
		inSupport: above0,
		build: func(t []float64) model {
			return gamma{distuv.Gamma{Alpha: t[0], Beta: 1 / t[1]}}
		},
		estimate: estimateGamma,
	},
	{
		name: "weibull", kind: Continuous, minN: 2,
		about:   "the Weibull distribution, CDF 1 − exp(−(x/scale)^shape)",
		support: "x > 0",
		params: []Param{
			positive("shape", "shape k"),
			positive("scale", "scale λ"),
		},
		method:    "Newton's method on the profile score equation for the shape (Cohen 1965) from Menon's (1963) estimate; scale in closed form",
		inSupport: above0,
		build: func(t []float64) model {
			return weibull{distuv.Weibull{K: t[0], Lambda: t[1]}}
		},
		estimate: estimateWeibull,
	},
	{
		name: "uniform", kind: Continuous, minN: 2,
		about:   "the continuous uniform distribution on [min, max]",
		support: "min ≤ x ≤ max",
		params: []Param{
			anyReal("min", "lower end"),
			anyReal("max", "upper end"),
		},
		method: "closed form: the sample minimum and maximum",
		relate: func(t []float64) error {
			if !(t[0] < t[1]) {
				return errors.New("min must be below max")
			}
			return nil
		},
		inSupport: func(fixed []float64) (Interval, string) {
			lo, hi := fixed[0], fixed[1]
			if math.IsNaN(lo) || math.IsNaN(hi) {
				return Finite, ""
			}
			return between(lo, hi, false, false), "values from " + num(lo) + " to " + num(hi)
		},
		build: func(t []float64) model {
			return uniform{distuv.Uniform{Min: t[0], Max: t[1]}}
		},
		estimate: estimateUniform,
	},
	{
		name: "beta", kind: Continuous, minN: 2,
		about:   "the beta distribution on (0, 1), density x^(alpha−1) (1−x)^(beta−1) / B(alpha, beta)",
		support: "0 < x < 1",
		params: []Param{
			positive("alpha", "first shape"),
			positive("beta", "second shape"),
		},
		method: "BFGS (gonum optimize) on ln alpha, ln beta from the method-of-moments estimate",
		inSupport: func([]float64) (Interval, string) {
			return between(0, 1, true, true), "values strictly between 0 and 1"
		},
		build: func(t []float64) model {
			return beta{distuv.Beta{Alpha: t[0], Beta: t[1]}}
		},
		estimate: estimateBeta,
	},
	{
		name: "logistic", kind: Continuous, minN: 2,
		about:   "the logistic distribution, CDF 1 / (1 + exp(−(x−location)/scale))",
		support: "any real number",
		params: []Param{
			anyReal("location", "location, the mean and median"),
			positive("scale", "scale s (standard deviation s·π/√3)"),
		},
		method: "BFGS (gonum optimize) on location, ln scale from the median and the moment estimate of the scale",
		build: func(t []float64) model {
			return logistic{distuv.Logistic{Mu: t[0], S: t[1]}}
		},
		estimate: estimateLogistic,
	},
	{
		name: "student-t", kind: Continuous, minN: 4,
		about:   "Student's t distribution shifted by location and stretched by scale",
		support: "any real number",
		params: []Param{
			anyReal("location", "location, the median"),
			positive("scale", "scale σ"),
			{Name: "df", Min: 0, Max: inf, MinOpen: true, Alone: true, About: "degrees of freedom ν (may be given alone)"},
		},
		method: "BFGS (gonum optimize) on location, ln scale, ln df from the median, the scaled MAD and df = 5",
		build: func(t []float64) model {
			return studentT{distuv.StudentsT{Mu: t[0], Sigma: t[1], Nu: t[2]}}
		},
		estimate: estimateStudentT,
	},
	{
		name: "cauchy", kind: Continuous, minN: 3,
		about:   "the Cauchy distribution, density 1 / (π scale (1 + ((x−location)/scale)²))",
		support: "any real number",
		params: []Param{
			anyReal("location", "location, the median"),
			positive("scale", "scale γ, half the interquartile range"),
		},
		method: "BFGS (gonum optimize) on location, ln scale from the median and half the interquartile range",
		build: func(t []float64) model {
			return cauchy{X0: t[0], Gamma: t[1]}
		},
		estimate: estimateCauchy,
	},
	{
		name: "poisson", kind: Discrete, minN: 1,
		about:     "the Poisson distribution of counts, mass lambda^k exp(−lambda) / k!",
		support:   "k = 0, 1, 2, ...",
		params:    []Param{positive("lambda", "mean count")},
		method:    "closed form: lambda = mean",
		inSupport: counts,
		build: func(t []float64) model {
			return poisson{distuv.Poisson{Lambda: t[0]}}
		},
		estimate: estimatePoisson,
	},
	{
		name: "binomial", kind: Discrete, minN: 1,
		about:   "the binomial distribution of successes in n trials, mass C(n,k) p^k (1−p)^(n−k)",
		support: "k = 0, 1, ..., n",
		params: []Param{
			{Name: "n", Min: 1, Max: inf, Whole: true, Required: true, Alone: true,
				About: "number of trials; must be given, it is not estimated"},
			probability("p", "success probability"),
		},
		method: "closed form: p = mean / n, n given",
		inSupport: func(fixed []float64) (Interval, string) {
			n := fixed[0]
			return wholeBetween(0, n), "whole numbers from 0 to " + num(n)
		},
		build: func(t []float64) model {
			return binomial{distuv.Binomial{N: t[0], P: t[1]}}
		},
		estimate: estimateBinomial,
	},
	{
		name: "negative-binomial", kind: Discrete, minN: 2,
		about:   "failures before the size-th success, mass Γ(k+size)/(Γ(size) k!) p^size (1−p)^k",
		support: "k = 0, 1, 2, ...",
		params: []Param{
			{Name: "size", Min: 0, Max: inf, MinOpen: true, Alone: true, About: "target successes r, any positive number (may be given alone)"},
			probability("p", "success probability"),
		},
		method:    "Newton's method on the profile score equation for size (p = size/(size + mean)); needs variance above the mean",
		inSupport: counts,
		build: func(t []float64) model {
			return negBinomial{R: t[0], P: t[1]}
		},
		estimate: estimateNegBinomial,
	},
	{
		name: "geometric", kind: Discrete, minN: 1,
		about:     "failures before the first success, mass p (1−p)^k",
		support:   "k = 0, 1, 2, ...",
		params:    []Param{probability("p", "success probability")},
		method:    "closed form: p = 1/(1 + mean)",
		inSupport: counts,
		build: func(t []float64) model {
			return geometric{P: t[0]}
		},
		estimate: estimateGeometric,
	},
	{
		name: "categorical", kind: Categorical,
		about:   "expected shares of named categories (see Shares)",
		support: "the listed categories",
		method:  "the observed shares",
	},
	{
		name: "benford", kind: Discrete, minN: 1, digits: 1,
		about:     "Benford's law for the first significant digit, P(d) = log10(1 + 1/d)",
		support:   "x > 0, reduced to its first digit d = 1..9",
		method:    "none: the law has no parameters",
		inSupport: above0,
		build:     func([]float64) model { return benford{K: 1} },
	},
	{
		name: "benford2", kind: Discrete, minN: 1, digits: 2,
		about:     "Benford's law for the first two significant digits, P(d) = log10(1 + 1/d)",
		support:   "x > 0, reduced to its first two digits d = 10..99",
		method:    "none: the law has no parameters",
		inSupport: above0,
		build:     func([]float64) model { return benford{K: 2} },
	},
}
