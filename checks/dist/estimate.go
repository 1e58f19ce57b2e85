package dist

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"

	"gonum.org/v1/gonum/mathext"
	"gonum.org/v1/gonum/optimize"

	"github.com/assay-project/assay/checks/internal/order"
)

// Maximum-likelihood estimators. Each fills the free entries of theta from a
// sample whose values are finite, inside the family's support and at least
// the family's minimum in number. Closed forms where they exist; a
// safeguarded Newton iteration on a one-dimensional score equation where
// the problem reduces to one unknown (gamma, Weibull, negative binomial);
// BFGS from gonum's optimize on unconstrained coordinates otherwise, with
// parameters that must be positive moved on the log scale.

// num formats x in the shortest form that reads back exactly.
func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// errAllEqual reports a sample without spread, from which no scale can be
// estimated.
func errAllEqual(x []float64) error {
	return fmt.Errorf("all %d values are equal (%s), so there is no spread to estimate", len(x), num(x[0]))
}

// meanVar returns the mean and the variance with divisor n of f(x_i), by
// the corrected two-pass algorithm: the second pass adds back the rounding
// error of the first mean (Chan, Golub & LeVeque 1983, Amer. Statist.
// 37(3), eq. 1.7).
// f is evaluated once per run of equal values (runMemo).
func meanVar(x []float64, f func(float64) float64) (mean, variance float64) {
	n := float64(len(x))
	fm := runMemo{f: f}
	var s float64
	for _, v := range x {
		s += fm.at(v)
	}
	m := s / n
	var c, ss float64
	for _, v := range x {
		d := fm.at(v) - m
		c += d
		ss += d * d
	}
	return m + c/n, (ss - c*c/n) / n
}

// runMemo evaluates f once per run of values identical bit for bit (-0 and
// +0 apart) and gives the stored result for the rest of the run. Samples
// arrive sorted and data recorded to a few decimals repeat each value many
// times (a million values to 3 decimals hold a few tens of thousands of
// distinct ones), so most calls are saved; f is deterministic, so every
// sum still adds the same terms in the same order as calling f each time.
type runMemo struct {
	f    func(float64) float64
	bits uint64
	fx   float64
	set  bool
}

// at returns f(x).
func (m *runMemo) at(x float64) float64 {
	if b := math.Float64bits(x); !m.set || b != m.bits {
		m.bits, m.fx, m.set = b, m.f(x), true
	}
	return m.fx
}

func identity(x float64) float64 { return x }

// estimateNormal sets mean = x̄ and sd = √(Σ(x−x̄)²/n). The divisor n, not
// n−1, makes sd the maximum-likelihood estimate, so that the
// log-likelihood, AIC and BIC are those of the best-fitting normal; the
// unbiased-variance sd is larger by √(n/(n−1)) (0.5% at n = 100).
func estimateNormal(x, theta []float64, _ []bool) error {
	m, v := meanVar(x, identity)
	if !(v > 0) {
		return errAllEqual(x)
	}
	theta[0], theta[1] = m, math.Sqrt(v)
	return nil
}

// estimateLognormal applies estimateNormal to ln x.
func estimateLognormal(x, theta []float64, _ []bool) error {
	m, v := meanVar(x, math.Log)
	if !(v > 0) {
		return errAllEqual(x)
	}
	theta[0], theta[1] = m, math.Sqrt(v)
	return nil
}

// estimateExponential sets rate = 1/x̄.
func estimateExponential(x, theta []float64, _ []bool) error {
	m, _ := meanVar(x, identity)
	if !(m > 0) {
		return fmt.Errorf("all %d values are 0, so the rate would be infinite", len(x))
	}
	theta[0] = 1 / m
	return nil
}

// estimateGamma solves the profile score equation for the shape k,
//
//	ln k − ψ(k) = s,  s = ln x̄ − mean(ln x) > 0,
//
// whose left side falls from +∞ to 0 as k grows, so the root is unique
// (Choi & Wette 1969, Technometrics 11(4), who solve it by Newton's
// method). The start is Minka's (2002, "Estimating a Gamma distribution",
// eq. 8) approximation k ≈ (3 − s + √((s−3)² + 24s)) / (12s), within 1.5%
// of the root; then scale = x̄/k. s is computed as −mean(ln(x/x̄)) to keep
// its digits when the values vary little (large k).
func estimateGamma(x, theta []float64, _ []bool) error {
	m, _ := meanVar(x, identity)
	var sl float64
	lm := runMemo{f: func(v float64) float64 { return math.Log(v / m) }}
	for _, v := range x {
		sl += lm.at(v)
	}
	s := -sl / float64(len(x))
	if !(s > 0) {
		return errAllEqual(x)
	}
	k0 := (3 - s + math.Sqrt((s-3)*(s-3)+24*s)) / (12 * s)
	k, err := rootPositive(func(k float64) (float64, float64) {
		return mathext.Digamma(k) - math.Log(k) + s, trigamma(k) - 1/k
	}, k0)
	if err != nil {
		return fmt.Errorf("the shape equation has no root: %w", err)
	}
	theta[0], theta[1] = k, m/k
	return nil
}

// estimateWeibull solves the profile score equation for the shape k
// (Cohen 1965, Technometrics 7(4), eq. 3.4; the root is unique, Farnum &
// Booth 1997, IEEE Trans. Reliability 46(4)):
//
//	g(k) = Σ x^k ln x / Σ x^k − 1/k − mean(ln x) = 0,
//
// written with u = ln x − mean(ln x) as g(k) = Σ u w / Σ w − 1/k, w =
// exp(k(u − max u)) so that no power overflows. g rises with k (g′ is the
// w-weighted variance of u plus 1/k²), and Newton's method starts from
// Menon's (1963, Technometrics 5(2)) k ≈ π / (√6 · sd(ln x)). Then scale =
// (mean x^k)^(1/k).
func estimateWeibull(x, theta []float64, _ []bool) error {
	ml, vl := meanVar(x, math.Log)
	if !(vl > 0) {
		return errAllEqual(x)
	}
	u := make([]float64, len(x))
	umax := math.Inf(-1)
	lm := runMemo{f: math.Log}
	for i, v := range x {
		u[i] = lm.at(v) - ml
		umax = math.Max(umax, u[i])
	}
	sums := func(k float64) (s0, s1, s2 float64) {
		wm := runMemo{f: func(ui float64) float64 { return math.Exp(k * (ui - umax)) }}
		for _, ui := range u {
			w := wm.at(ui)
			s0 += w
			s1 += w * ui
			s2 += w * ui * ui
		}
		return s0, s1, s2
	}
	k, err := rootPositive(func(k float64) (float64, float64) {
		s0, s1, s2 := sums(k)
		a := s1 / s0
		return a - 1/k, math.Max(0, s2/s0-a*a) + 1/(k*k)
	}, math.Pi/(math.Sqrt(6)*math.Sqrt(vl)))
	if err != nil {
		return fmt.Errorf("the shape equation has no root: %w", err)
	}
	s0, _, _ := sums(k)
	theta[0] = k
	theta[1] = math.Exp(ml + umax + math.Log(s0/float64(len(x)))/k)
	return nil
}

// estimateUniform sets min and max to the sample's extremes.
func estimateUniform(x, theta []float64, _ []bool) error {
	lo, hi := slices.Min(x), slices.Max(x)
	if lo == hi {
		return errAllEqual(x)
	}
	theta[0], theta[1] = lo, hi
	return nil
}

// estimatePoisson sets lambda = x̄.
func estimatePoisson(x, theta []float64, _ []bool) error {
	m, _ := meanVar(x, identity)
	if !(m > 0) {
		return fmt.Errorf("all %d values are 0, so lambda would be 0 (no variation)", len(x))
	}
	theta[0] = m
	return nil
}

// estimateBinomial sets p = x̄/n for the given n.
func estimateBinomial(x, theta []float64, _ []bool) error {
	m, _ := meanVar(x, identity)
	p := m / theta[0]
	switch {
	case !(p > 0):
		return fmt.Errorf("all %d values are 0, so p would be 0 (no variation)", len(x))
	case !(p < 1):
		return fmt.Errorf("all %d values are n = %s, so p would be 1 (no variation)", len(x), num(theta[0]))
	}
	theta[1] = p
	return nil
}

// estimateGeometric sets p = 1/(1 + x̄).
func estimateGeometric(x, theta []float64, _ []bool) error {
	m, _ := meanVar(x, identity)
	if !(m > 0) {
		return fmt.Errorf("all %d values are 0, so p would be 1 (no variation)", len(x))
	}
	theta[0] = 1 / (1 + m)
	return nil
}

// estimateNegBinomial sets p = r/(r + x̄), which maximises the likelihood
// for a given size r, and, when r is free, solves the profile score
// equation
//
//	h(r) = Σ [ψ(x_i + r) − ψ(r)] + n ln(r / (r + x̄)) = 0.
//
// A finite root exists exactly when the variance (divisor n) exceeds the
// mean (Anscombe 1950, Biometrika 37; Levin & Reeds 1977, Ann. Statist.
// 5(1), who also show it is unique); otherwise the likelihood grows
// without bound towards the Poisson limit r → ∞ and the error says so. For
// a whole x, ψ(x + r) − ψ(r) = Σ_{j<x} 1/(r + j), summed directly for
// x < 64 (no cancellation); larger values use gonum's digamma. Values are
// grouped by distinct value first, so the cost per Newton step grows with
// the number of distinct values, not with n.
func estimateNegBinomial(x, theta []float64, free []bool) error {
	m, v := meanVar(x, identity)
	if !(m > 0) {
		return fmt.Errorf("all %d values are 0, so p would be 1 (no variation)", len(x))
	}
	if free[0] {
		if !(v > m) {
			return fmt.Errorf("the variance %.6g does not exceed the mean %.6g, so no finite size maximises the likelihood (the data are no more spread than a Poisson sample; try poisson)", v, m)
		}
		vals, cnt := distinct(x)
		n := float64(len(x))
		r, err := rootPositive(func(r float64) (float64, float64) {
			var h, dh float64
			for i, xv := range vals {
				c := cnt[i]
				switch {
				case xv == 0:
				case xv < 64:
					for j := 0.0; j < xv; j++ {
						h += c / (r + j)
						dh -= c / ((r + j) * (r + j))
					}
				default:
					h += c * (mathext.Digamma(xv+r) - mathext.Digamma(r))
					dh += c * (trigamma(xv+r) - trigamma(r))
				}
			}
			h += n * math.Log(r/(r+m))
			dh += n * (1/r - 1/(r+m))
			return -h, -dh
		}, m*m/(v-m))
		if err != nil {
			return fmt.Errorf("the size equation has no root: %w", err)
		}
		theta[0] = r
	}
	theta[1] = theta[0] / (theta[0] + m)
	return nil
}

// distinct returns the distinct values of x in increasing order and how
// often each occurs.
func distinct(x []float64) (vals, counts []float64) {
	s := slices.Clone(x)
	slices.Sort(s)
	for i, v := range s {
		if i == 0 || v != s[i-1] {
			vals = append(vals, v)
			counts = append(counts, 0)
		}
		counts[len(counts)-1]++
	}
	return vals, counts
}

// robustStart returns the median and a robust scale of x: the median
// absolute deviation scaled by 1.4826 (consistent for the normal sd), or
// the sd when ties make the MAD 0.
func robustStart(x []float64) (median, scale float64) {
	s := slices.Clone(x)
	slices.Sort(s)
	median = order.Quantile7(s, 0.5)
	for i, v := range s {
		s[i] = math.Abs(v - median)
	}
	// The deviations' median by selection: the same order statistics, so
	// the same bits, as sorting them (order.Quantiles7).
	if mad := order.Quantiles7(s, 0.5)[0]; mad > 0 {
		return median, 1.4826 * mad
	}
	_, v := meanVar(x, identity)
	return median, math.Sqrt(v)
}

// eachRun calls f(v, c) for each run of c consecutive values of x
// identical to v bit for bit, in order. The likelihood sums of the
// estimators maximised by BFGS compute their terms once per run and add
// them c times, so that every sum adds the same terms in the same order
// as a loop over the values; a sorted sample recorded to a few decimals
// has a few tens of thousands of runs in a million values.
func eachRun(x []float64, f func(v float64, c int)) {
	for i := 0; i < len(x); {
		b := math.Float64bits(x[i])
		j := i + 1
		for j < len(x) && math.Float64bits(x[j]) == b {
			j++
		}
		f(x[i], j-i)
		i = j
	}
}

// errNotConverged reports a likelihood maximisation that stopped away from
// a maximum.
var errNotConverged = errors.New("the likelihood maximisation did not converge")

// maximise returns the coordinates v that maximise a log-likelihood ll(v),
// starting from v0, with BFGS (gonum optimize) on −ll/n. fg returns ll and
// stores its gradient in grad. The function and gradient are computed
// together and cached, since the optimiser asks for both at each point.
// The result is accepted when the gradient of ll/n is below 1e-6 in every
// coordinate.
func maximise(v0 []float64, n int, fg func(v, grad []float64) float64) ([]float64, error) {
	dim := len(v0)
	scale := 1 / float64(n)
	lastV, lastG := make([]float64, dim), make([]float64, dim)
	var lastF float64
	have := false
	eval := func(v []float64) {
		if have && slices.Equal(v, lastV) {
			return
		}
		copy(lastV, v)
		lastF = fg(v, lastG)
		have = true
	}
	p := optimize.Problem{
		Func: func(v []float64) float64 {
			eval(v)
			if math.IsNaN(lastF) {
				return math.Inf(1)
			}
			return -lastF * scale
		},
		Grad: func(g, v []float64) {
			eval(v)
			for i := range g {
				g[i] = -lastG[i] * scale
			}
		},
	}
	settings := &optimize.Settings{
		GradientThreshold: 1e-11,
		MajorIterations:   1000,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-15, Relative: 1e-15, Iterations: 20},
	}
	res, err := optimize.Minimize(p, v0, settings, &optimize.BFGS{})
	if res == nil {
		return nil, fmt.Errorf("%w: %v", errNotConverged, err)
	}
	v := res.X
	g := make([]float64, dim)
	ll := fg(v, g)
	if math.IsNaN(ll) || math.IsInf(ll, 0) {
		return nil, errNotConverged
	}
	for _, gi := range g {
		if !(math.Abs(gi*scale) < 1e-6) {
			return nil, errNotConverged
		}
	}
	return v, nil
}

// estimateBeta maximises
//
//	ℓ(α, β) = n [(α−1) mean ln x + (β−1) mean ln(1−x) − ln B(α, β)]
//
// over (ln α, ln β), with gradient ∂ℓ/∂ln α = α n (mean ln x − ψ(α) +
// ψ(α+β)) and likewise for β. The start is the method-of-moments estimate
// α = m c, β = (1−m) c, c = m(1−m)/v − 1 (Johnson, Kotz & Balakrishnan
// 1995, vol. 2, ch. 25), or α = β = 1 when c ≤ 0. Only the two means enter
// each step, so a step costs the same at any n.
func estimateBeta(x, theta []float64, _ []bool) error {
	m, v := meanVar(x, identity)
	if !(v > 0) {
		return errAllEqual(x)
	}
	l1, _ := meanVar(x, math.Log)
	l2, _ := meanVar(x, func(t float64) float64 { return math.Log1p(-t) })
	c := m*(1-m)/v - 1
	a0, b0 := 1.0, 1.0
	if c > 0 {
		a0, b0 = m*c, (1-m)*c
	}
	n := float64(len(x))
	best, err := maximise([]float64{math.Log(a0), math.Log(b0)}, len(x), func(w, g []float64) float64 {
		a, b := math.Exp(w[0]), math.Exp(w[1])
		dab := mathext.Digamma(a + b)
		g[0] = a * n * (l1 - mathext.Digamma(a) + dab)
		g[1] = b * n * (l2 - mathext.Digamma(b) + dab)
		return n * ((a-1)*l1 + (b-1)*l2 - mathext.Lbeta(a, b))
	})
	if err != nil {
		return err
	}
	theta[0], theta[1] = math.Exp(best[0]), math.Exp(best[1])
	return nil
}

// estimateLogistic maximises Σ ln f over (location μ, ln s) with
//
//	ln f = −ln s − |z| − 2 ln(1 + e^(−|z|)),  z = (x − μ)/s,
//	∂/∂μ = tanh(z/2)/s,  ∂/∂ln s = z tanh(z/2) − 1,
//
// from the median and s = sd·√3/π (the moment estimate).
func estimateLogistic(x, theta []float64, _ []bool) error {
	med, _ := robustStart(x)
	_, v := meanVar(x, identity)
	if !(v > 0) {
		return errAllEqual(x)
	}
	best, err := maximise([]float64{med, math.Log(math.Sqrt(3*v) / math.Pi)}, len(x), func(w, g []float64) float64 {
		mu, s := w[0], math.Exp(w[1])
		var ll, g0, g1 float64
		eachRun(x, func(xi float64, c int) {
			z := (xi - mu) / s
			az := math.Abs(z)
			e := math.Exp(-az)
			lf := az + 2*math.Log1p(e)
			t := math.Copysign((1-e)/(1+e), z) // tanh(z/2)
			for range c {
				ll -= lf
				g0 += t
				g1 += z * t
			}
		})
		n := float64(len(x))
		g[0] = g0 / s
		g[1] = g1 - n
		return ll - n*math.Log(s)
	})
	if err != nil {
		return err
	}
	theta[0], theta[1] = best[0], math.Exp(best[1])
	return nil
}

// estimateCauchy maximises Σ ln f over (location x0, ln γ) with
//
//	ln f = −ln(πγ) − ln(1 + z²),  z = (x − x0)/γ,
//	∂/∂x0 = 2z / (γ(1 + z²)),  ∂/∂ln γ = 2z²/(1 + z²) − 1,
//
// from the median and half the interquartile range, which are the
// location and scale of a Cauchy law. The likelihood of the location can
// have several local maxima in small samples (Barnett 1966, Biometrika
// 53); the median start lies in the basin of the global one in the usual
// cases, not provably in all.
func estimateCauchy(x, theta []float64, _ []bool) error {
	s := slices.Clone(x)
	slices.Sort(s)
	if s[0] == s[len(s)-1] {
		return errAllEqual(x)
	}
	med := order.Quantile7(s, 0.5)
	g0 := (order.Quantile7(s, 0.75) - order.Quantile7(s, 0.25)) / 2
	if !(g0 > 0) {
		g0 = (s[len(s)-1] - s[0]) / 4
	}
	best, err := maximise([]float64{med, math.Log(g0)}, len(x), func(w, g []float64) float64 {
		x0, gm := w[0], math.Exp(w[1])
		var ll, d0, d1 float64
		eachRun(x, func(xi float64, c int) {
			z := (xi - x0) / gm
			q := 1 + z*z
			lf := math.Log1p(z * z)
			a, b := 2*z/q, 2*z*z/q
			for range c {
				ll -= lf
				d0 += a
				d1 += b
			}
		})
		n := float64(len(x))
		g[0] = d0 / gm
		g[1] = d1 - n
		return ll - n*math.Log(math.Pi*gm)
	})
	if err != nil {
		return err
	}
	theta[0], theta[1] = best[0], math.Exp(best[1])
	return nil
}

// estimateStudentT maximises Σ ln f over (location μ, ln σ, ln ν), or over
// (μ, ln σ) when df is given, with z = (x − μ)/σ and
//
//	ln f = ln Γ((ν+1)/2) − ln Γ(ν/2) − ½ ln(νπ) − ln σ − (ν+1)/2 · ln(1 + z²/ν),
//	∂/∂μ = (ν+1) z / (σ(ν + z²)),
//	∂/∂ln σ = (ν+1) z²/(ν + z²) − 1,
//	∂/∂ν = ½ψ((ν+1)/2) − ½ψ(ν/2) − 1/(2ν) − ½ ln(1 + z²/ν) + (ν+1) z² / (2ν(ν + z²)),
//
// (Lange, Little & Taylor 1989, JASA 84(408)) from the median, the scaled
// MAD and ν = 5. When the sample is close to normal the likelihood is
// nearly flat in ν and the estimate can be very large.
func estimateStudentT(x, theta []float64, free []bool) error {
	med, sc := robustStart(x)
	if !(sc > 0) {
		return errAllEqual(x)
	}
	full := [3]float64{med, math.Log(sc), math.Log(5)}
	if !free[2] {
		full[2] = math.Log(theta[2])
	}
	dim := 2
	if free[2] {
		dim = 3
	}
	n := float64(len(x))
	best, err := maximise(slices.Clone(full[:dim]), len(x), func(w, g []float64) float64 {
		p := full
		copy(p[:], w)
		mu, sig, nu := p[0], math.Exp(p[1]), math.Exp(p[2])
		var ll, d0, d1, d2 float64
		eachRun(x, func(xi float64, c int) {
			z := (xi - mu) / sig
			z2 := z * z
			l := math.Log1p(z2 / nu)
			a, b, e := (nu+1)*z/(nu+z2), (nu+1)*z2/(nu+z2), -l/2+(nu+1)*z2/(2*nu*(nu+z2))
			for range c {
				ll -= (nu + 1) / 2 * l
				d0 += a
				d1 += b
				d2 += e
			}
		})
		la, _ := math.Lgamma((nu + 1) / 2)
		lb, _ := math.Lgamma(nu / 2)
		g[0] = d0 / sig
		g[1] = d1 - n
		if len(g) > 2 {
			g[2] = nu * (d2 + n*(mathext.Digamma((nu+1)/2)/2-mathext.Digamma(nu/2)/2-1/(2*nu)))
		}
		return ll + n*(la-lb-0.5*math.Log(nu*math.Pi)-math.Log(sig))
	})
	if err != nil {
		return err
	}
	theta[0], theta[1] = best[0], math.Exp(best[1])
	if free[2] {
		theta[2] = math.Exp(best[2])
	}
	return nil
}
