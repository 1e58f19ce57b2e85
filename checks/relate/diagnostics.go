package relate

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Point holds the regression diagnostics of one row of a simple linear fit.
type Point struct {
	// Residual is e = y - (Intercept + Slope·x).
	Residual float64
	// Leverage is the hat value h = 1/n + (x - x̄)²/Sxx.
	Leverage float64
	// Studentized is the externally studentized residual t (R's rstudent).
	Studentized float64
	// Cooks is Cook's distance D (R's cooks.distance).
	Cooks float64
}

// Diagnose returns the diagnostics of the row (x, y) under the fitted line
// l. Everything it needs is in l (n, x̄, ȳ, Sxx, the coefficients and s²),
// so a second pass over the data can diagnose each row as it streams by,
// without keeping the rows. With p = 2 coefficients,
//
//	e = (y - ȳ) - Slope (x - x̄)
//	h = 1/n + (x - x̄)²/Sxx
//	s²_(i) = ((n-p) s² - e²/(1-h)) / (n-p-1)    (s² without row i)
//	t = e / (s_(i) sqrt(1-h))                    (externally studentized)
//	D = e² h / (p s² (1-h)²)                     (Cook's distance)
//
// (Cook 1977, "Detection of influential observation in linear regression",
// Technometrics 19(1):15-18; Belsley, Kuh & Welsch 1980, Regression
// Diagnostics, ch. 2, for t and the leave-one-out variance). Under normal
// errors t follows Student's t on n-p-1 degrees of
// freedom. t needs n >= 4 and is NaN below; both are NaN at h = 1 (taken
// within 10 ulp of 1, as R does), and t is
// ±Inf when rounding leaves no variance without the row. The residual is
// taken from the centred values, which avoids the rounding of the
// intercept.
func (l Line) Diagnose(x, y float64) Point {
	dx, e := l.Residual(x, y)
	h := l.leverage(dx)
	pt := Point{Residual: e, Leverage: h, Studentized: math.NaN(), Cooks: math.NaN()}
	if atOne(h) {
		// The row's x is the only one off x̄ (R's lm.influence rounds h
		// this close to 1 up to 1): the fit goes through it.
		pt.Leverage = 1
		return pt
	}
	pt.Cooks, pt.Studentized = l.cooks(e, h), l.studentized(e, h)
	return pt
}

// Residual returns the row's distance from x̄ along x, dx = x - x̄, and its
// residual e = (y - ȳ) - Slope·dx, from which Diagnose, AbsStudentized and
// CooksDistance work.
func (l *Line) Residual(x, y float64) (dx, e float64) {
	dx = x - l.MeanX
	return dx, (y - l.MeanY) - l.Slope*dx
}

// AbsStudentized is |t| of the row whose Residual is (dx, e), as Diagnose
// computes it (NaN where t is), without Cook's distance.
func (l *Line) AbsStudentized(dx, e float64) float64 {
	h := l.leverage(dx)
	if atOne(h) {
		return math.NaN()
	}
	return math.Abs(l.studentized(e, h))
}

// CooksDistance is D of the row whose Residual is (dx, e), as Diagnose
// computes it (NaN where D is), without the studentized residual.
func (l *Line) CooksDistance(dx, e float64) float64 {
	h := l.leverage(dx)
	if atOne(h) {
		return math.NaN()
	}
	return l.cooks(e, h)
}

// leverage is h = 1/n + dx²/Sxx.
func (l *Line) leverage(dx float64) float64 { return 1/float64(l.N) + dx*dx/l.Sxx }

// atOne reports whether a leverage h counts as 1: within 10 ulp of it.
func atOne(h float64) bool { return h >= 1-10*epsilon }

// diagnosedCoefs is p, the coefficients of a simple linear fit.
const diagnosedCoefs = 2

// cooks is D = e² h / (p s² (1-h)²), NaN when s² is 0.
func (l *Line) cooks(e, h float64) float64 {
	const p = diagnosedCoefs
	if !(l.ResidualVar > 0) {
		return math.NaN()
	}
	return e * e * h / (p * l.ResidualVar * (1 - h) * (1 - h))
}

// studentized is t = e / (s_(i) sqrt(1-h)), NaN when n < 4.
func (l *Line) studentized(e, h float64) float64 {
	const p = diagnosedCoefs
	n := float64(l.N)
	if !(n-p-1 >= 1) {
		return math.NaN()
	}
	s2i := math.Max(0, ((n-p)*l.ResidualVar-e*e/(1-h))/(n-p-1))
	return e / (math.Sqrt(s2i) * math.Sqrt(1-h))
}

// CalmStudentized returns e0, the largest |e| such that every row whose
// Residual (dx, e) has |dx| <= dxMax and |e| <= e0 has AbsStudentized at
// most cutoff, so that a second pass need not compute it for those rows;
// -1 when no row qualifies (a row at |dx| = dxMax with e = 0 scores NaN
// or above cutoff). See calm for why the bound holds.
func (l *Line) CalmStudentized(dxMax, cutoff float64) float64 {
	return calm(l.AbsStudentized, dxMax, cutoff)
}

// CalmCooks is CalmStudentized for CooksDistance.
func (l *Line) CalmCooks(dxMax, cutoff float64) float64 {
	return calm(l.CooksDistance, dxMax, cutoff)
}

// calm returns the largest float64 e0 >= 0 with score(dxMax, e0) <=
// cutoff (+Inf when it holds there), by bisection on the bits of e0, or
// -1 when score(dxMax, 0) is not at most cutoff (or is NaN).
//
// Why every row with |dx| <= dxMax and |e| <= e0 then scores at most
// cutoff as computed, not only in exact arithmetic. score is
// AbsStudentized or CooksDistance: a chain of IEEE operations on |e| (the
// sign of e drops out: e·e = |e|·|e|, and rounding a quotient is
// symmetric) and on dx·dx, each correctly rounded and so weakly monotone
// in its operands. h = 1/n + dx²/Sxx grows with |dx|; e²/(1-h),
// (n-p)s² - e²/(1-h), the square roots, products and quotients follow in
// turn; so the computed |t| and D are weakly increasing in |e| and in h,
// hence in |dx|. The NaN cases: a score is NaN at leverage 1 (h within
// 10 ulp of 1), t below 4 rows and at e = 0 with no variance left, D when
// s² = 0. As score(dxMax, e0) is not NaN, h at dxMax, and so at every
// smaller |dx|, is below the leverage-1 threshold, and n >= 4 (t) or
// s² > 0 (D); a row of the region that still scores NaN is never above
// the cutoff. Rows outside the region are scored as before, so skipping
// those inside changes no result.
func calm(score func(dx, e float64) float64, dxMax, cutoff float64) float64 {
	ok := func(e float64) bool { return score(dxMax, e) <= cutoff }
	if !ok(0) {
		return -1
	}
	lo, hi := uint64(0), math.Float64bits(math.Inf(1))
	if ok(math.Inf(1)) {
		return math.Inf(1)
	}
	for hi-lo > 1 {
		mid := lo + (hi-lo)/2
		if ok(math.Float64frombits(mid)) {
			lo = mid
		} else {
			hi = mid
		}
	}
	return math.Float64frombits(lo)
}

// epsilon is the spacing of float64 at 1, R's .Machine$double.eps.
const epsilon = 0x1p-52

// Cutoffs decide which rows a simple linear fit flags. A zero field turns
// its rule off.
type Cutoffs struct {
	// Studentized flags rows with |t| above it. BonferroniCutoff gives the
	// outlier test's critical value; 3 is common practice.
	Studentized float64
	// Cooks flags rows with D above it. CooksCutoff gives Cook's (1977)
	// reference, the median of F(p, n-p); 4/n is common practice (Bollen &
	// Jackman 1990) and flags about 5% of rows of clean normal data.
	Cooks float64
}

// Flags reports which cutoffs the diagnostics of a row exceed. NaN
// diagnostics never exceed a cutoff.
func (c Cutoffs) Flags(pt Point) (studentized, cooks bool) {
	studentized = c.Studentized > 0 && math.Abs(pt.Studentized) > c.Studentized
	cooks = c.Cooks > 0 && pt.Cooks > c.Cooks
	return studentized, cooks
}

// BonferroniCutoff returns t_{1-α/(2n)}(n-p-1), p = 2: the critical value of
// the two-sided Bonferroni outlier test on the largest |t| of n externally
// studentized residuals (Cook & Weisberg 1982, Residuals and Influence in
// Regression, ch. 2; as R's car::outlierTest), so that a clean normal
// sample of n rows has a flagged row with probability at most α. The
// quantile is found by bisection on Student's t survival function (gonum's
// StudentsT.Quantile loses its way this far in the tail at large df). It
// needs n >= 4 and 0 < α < 1, and returns NaN otherwise.
func BonferroniCutoff(alpha float64, n int64) float64 {
	if n < 4 || !(alpha > 0 && alpha < 1) {
		return math.NaN()
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 3)}
	q := alpha / (2 * float64(n))
	lo, hi := 0.0, 1.0
	for t.Survival(hi) > q {
		lo, hi = hi, 2*hi
	}
	for hi-lo > 1e-15*hi {
		mid := (lo + hi) / 2
		if t.Survival(mid) > q {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// CooksCutoff returns the median of the F distribution on p = 2 and
// ν = n-2 degrees of freedom, the value Cook (1977) compares D with: a row
// beyond it moves the fitted coefficients to the edge of their 50%
// confidence ellipsoid. With 2 numerator degrees of freedom the F survival
// function is (1 + 2x/ν)^(-ν/2), so the median is (ν/2)(2^(2/ν) - 1). It
// needs n >= 3 and returns NaN otherwise.
func CooksCutoff(n int64) float64 {
	if n < 3 {
		return math.NaN()
	}
	nu := float64(n - 2)
	return nu / 2 * math.Expm1(2*math.Ln2/nu)
}
