package dist

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
)

// Dist is a family with all its parameters set: a fitted or a declared
// distribution. It is a small value; its methods have value receivers and
// never modify it, so a Dist may be copied and shared between goroutines.
// The zero Dist is not usable; make one with Family.New or Family.Fit.
//
// Dist satisfies interface{ CDF(float64) float64; Quantile(float64) float64 }
// for goodness-of-fit tests.
type Dist struct {
	spec  *spec
	theta [maxParams]float64
	m     model
}

// Family returns the family of d with every parameter given.
func (d Dist) Family() Family {
	f := Family{spec: d.spec}
	for i := range d.spec.params {
		f.given[i] = d.theta[i]
		f.has[i] = true
	}
	return f
}

// Param returns the value of the named parameter, or NaN if the family has
// no parameter of that name.
func (d Dist) Param(name string) float64 {
	for i, p := range d.spec.params {
		if p.Name == name {
			return d.theta[i]
		}
	}
	return math.NaN()
}

// Params returns the parameters by name, as the report's estimates.
func (d Dist) Params() map[string]float64 {
	out := make(map[string]float64, len(d.spec.params))
	for i, p := range d.spec.params {
		out[p.Name] = d.theta[i]
	}
	return out
}

// String formats d as family(name=value, ...) with values in the shortest
// form that reads back exactly.
func (d Dist) String() string {
	var b strings.Builder
	b.WriteString(d.spec.name)
	b.WriteByte('(')
	for i, p := range d.spec.params {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(p.Name)
		b.WriteByte('=')
		b.WriteString(strconv.FormatFloat(d.theta[i], 'g', -1, 64))
	}
	b.WriteByte(')')
	return b.String()
}

// CDF returns P(X ≤ x).
func (d Dist) CDF(x float64) float64 {
	if math.IsNaN(x) {
		return math.NaN()
	}
	return d.m.CDF(x)
}

// Survival returns P(X > x) = 1 − CDF(x), computed without the cancellation
// of that difference in the upper tail.
func (d Dist) Survival(x float64) float64 {
	if math.IsNaN(x) {
		return math.NaN()
	}
	return d.m.Survival(x)
}

// Quantile returns the smallest x with CDF(x) ≥ p, for p in [0, 1]
// (Quantile(0) and Quantile(1) are the ends of the support, possibly
// infinite); NaN for p outside [0, 1].
func (d Dist) Quantile(p float64) float64 {
	if !(p >= 0 && p <= 1) {
		return math.NaN()
	}
	return d.m.Quantile(p)
}

// LogProb returns the natural log of the density at x for a continuous
// family and of the mass P(X = x) for a discrete one; −Inf outside the
// support.
func (d Dist) LogProb(x float64) float64 {
	if math.IsNaN(x) {
		return math.NaN()
	}
	return d.m.LogProb(x)
}

// Prob returns the density (continuous) or the mass (discrete) at x.
func (d Dist) Prob(x float64) float64 {
	return math.Exp(d.LogProb(x))
}

// Rand draws one value using r, so that a seeded r repeats every draw.
func (d Dist) Rand(r *rand.Rand) float64 {
	return d.m.Rand(r)
}

// Draw fills dst with independent draws using r: the form a parametric
// bootstrap asks for.
func (d Dist) Draw(r *rand.Rand, dst []float64) {
	for i := range dst {
		dst[i] = d.m.Rand(r)
	}
}

// Support returns the smallest and largest values with positive density or
// mass; infinite ends are ±Inf.
func (d Dist) Support() (lo, hi float64) {
	return d.m.Support()
}

// LogLik returns Σ LogProb(x_i), in the order of the sample, the log-density
// computed once per run of equal values (runMemo). It is −Inf if any value
// lies outside the support.
func (d Dist) LogLik(sample []float64) float64 {
	var s float64
	lp := runMemo{f: d.m.LogProb}
	for _, x := range sample {
		s += lp.at(x)
	}
	return s
}

// Cell returns the probability that a value recorded at resolution h > 0
// reads x: P(x − h/2 ≤ X < x + h/2), the mass of the rounding cell around
// x. For a continuous family it is F(x + h/2) − F(x − h/2), taken from the
// survival function when the cell lies above the median so that neither
// difference loses digits; for a discrete family it is the mass of the
// whole numbers in the cell. It returns NaN for h ≤ 0.
func (d Dist) Cell(x, h float64) float64 {
	if !(h > 0) || math.IsNaN(x) {
		return math.NaN()
	}
	a, b := x-h/2, x+h/2
	if d.spec.kind == Discrete {
		// P(a ≤ X < b) for whole-number X is F(⌈b⌉−1) − F(⌈a⌉−1).
		a, b = math.Ceil(a)-1, math.Ceil(b)-1
	}
	fa := d.m.CDF(a)
	if fa > 0.5 {
		return math.Max(0, d.m.Survival(a)-d.m.Survival(b))
	}
	return math.Max(0, d.m.CDF(b)-fa)
}

// Rounded returns d as recorded at resolution h: the distribution of
// h·round(X/h).
func (d Dist) Rounded(h float64) Rounded {
	return Rounded{Dist: d, H: h}
}

// Rounded is the distribution of a Dist's values rounded to the nearest
// multiple of H > 0, what a column recorded at resolution H (0.01 °C, whole
// units) really holds. Comparing such data with the continuous family makes
// every tie from rounding look like a misfit once the sample is large;
// comparing it with Rounded does not. Rounded satisfies the same CDF and
// Quantile interface as Dist.
type Rounded struct {
	Dist Dist
	H    float64
}

// gridIndex returns the largest whole k with k·h ≤ y, treating y within
// 1e-9·h of a grid point as on it, since recorded values are only near
// multiples of h in binary.
func gridIndex(y, h float64) float64 {
	r := y / h
	k := math.Round(r)
	if math.Abs(r-k) <= 1e-9*math.Max(1, math.Abs(r)) {
		return k
	}
	return math.Floor(r)
}

// CDF returns P(h·round(X/h) ≤ y) = F((k + ½)h), k the largest whole number
// with kh ≤ y.
func (r Rounded) CDF(y float64) float64 {
	if math.IsNaN(y) || !(r.H > 0) {
		return math.NaN()
	}
	return r.Dist.CDF((gridIndex(y, r.H) + 0.5) * r.H)
}

// Prob returns P(h·round(X/h) = y): the Cell of the grid point y, and 0 off
// the grid.
func (r Rounded) Prob(y float64) float64 {
	if math.IsNaN(y) || !(r.H > 0) {
		return math.NaN()
	}
	k := gridIndex(y, r.H)
	if math.Abs(y/r.H-k) > 1e-9*math.Max(1, math.Abs(k)) {
		return 0
	}
	return r.Dist.Cell(k*r.H, r.H)
}

// Quantile returns the smallest grid value y = kh with CDF(y) ≥ p:
// k = ⌈Q(p)/h − ½⌉, Q the quantile of the unrounded family, since
// F((k+½)h) ≥ p exactly when (k+½)h ≥ Q(p).
func (r Rounded) Quantile(p float64) float64 {
	q := r.Dist.Quantile(p)
	if math.IsNaN(q) || math.IsInf(q, 0) || !(r.H > 0) {
		return q
	}
	return math.Ceil(q/r.H-0.5) * r.H
}

// String describes r as the family rounded to its resolution.
func (r Rounded) String() string {
	return fmt.Sprintf("%v rounded to %s", r.Dist, strconv.FormatFloat(r.H, 'g', -1, 64))
}
