package relate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Moments are the streaming bivariate moments of pairs (x, y): the count,
// both means, the sums of squared deviations M2x = Σ(x-x̄)², M2y = Σ(y-ȳ)²
// and the co-moment Cxy = Σ(x-x̄)(y-ȳ). They are the sufficient statistic of
// Pearson's r and of the least-squares line, and they merge exactly, so
// shards and batches can be summarised in parallel. The zero value is an
// empty summary.
//
// Add takes one pair with Welford's update (Welford 1962, "Note on a method
// for calculating corrected sums of squares and products", Technometrics
// 4(3):419-420), extended to the co-moment:
//
//	n += 1; dx = x - x̄; dy = y - ȳ; x̄ += dx/n; ȳ += dy/n
//	M2x += dx (x - x̄); M2y += dy (y - ȳ); Cxy += dx (y - ȳ)
//
// Merge combines two summaries with the pairwise update of Chan, Golub &
// LeVeque (1979, "Updating formulae and a pairwise algorithm for computing
// sample variances", Stanford STAN-CS-79-773), whose co-moment form is
// Pébay (2008, "Formulas for robust, one-pass parallel computation of
// covariances and arbitrary-order statistical moments", Sandia report
// SAND2008-6212): with n = na + nb, δx = x̄b - x̄a, δy = ȳb - ȳa,
//
//	x̄ = x̄a + δx nb/n;  M2x = M2x_a + M2x_b + δx² na nb / n
//	Cxy = Cxy_a + Cxy_b + δx δy na nb / n
//
// AddAll summarises a whole batch by two passes (means, then centred sums
// with the correction term of Chan, Golub & LeVeque 1983, "Algorithms for
// computing the sample variance: analysis and recommendations", The
// American Statistician 37(3):242-247) and merges it: more accurate than
// Welford's update and without a division per pair. None of these forms
// the raw sums Σx² or Σxy, which lose every digit on data with large means
// and small spread.
//
// NaN or infinite values make the moments non-finite; Line and
// PearsonTest then return an error. Callers drop null pairs before adding.
type Moments struct {
	N            int64
	MeanX, MeanY float64
	M2X, M2Y     float64
	CXY          float64
}

// Add adds the pair (x, y).
func (m *Moments) Add(x, y float64) {
	m.N++
	n := float64(m.N)
	dx, dy := x-m.MeanX, y-m.MeanY
	m.MeanX += dx / n
	m.MeanY += dy / n
	ey := y - m.MeanY
	m.M2X += dx * (x - m.MeanX)
	m.M2Y += dy * ey
	m.CXY += dx * ey
}

// AddAll adds the pairs (x[i], y[i]); x and y must have the same length
// (AddAll uses the shorter one).
func (m *Moments) AddAll(x, y []float64) {
	k := min(len(x), len(y))
	if k == 0 {
		return
	}
	x, y = x[:k], y[:k]
	var sx, sy float64
	for i := range x {
		sx += x[i]
		sy += y[i]
	}
	n := float64(k)
	mx, my := sx/n, sy/n
	var ex, ey, m2x, m2y, cxy float64
	for i := range x {
		dx, dy := x[i]-mx, y[i]-my
		ex += dx
		ey += dy
		m2x += dx * dx
		m2y += dy * dy
		cxy += dx * dy
	}
	// Chan, Golub & LeVeque's correction: the centred sums are taken about
	// the rounded mean; ex and ey are what rounding left of Σ(x - x̄).
	b := Moments{
		N:     int64(k),
		MeanX: mx + ex/n,
		MeanY: my + ey/n,
		M2X:   m2x - ex*ex/n,
		M2Y:   m2y - ey*ey/n,
		CXY:   cxy - ex*ey/n,
	}
	m.Merge(b)
}

// Merge folds b, the moments of other pairs, into m.
func (m *Moments) Merge(b Moments) {
	switch {
	case b.N == 0:
		return
	case m.N == 0:
		*m = b
		return
	}
	na, nb := float64(m.N), float64(b.N)
	n := na + nb
	dx, dy := b.MeanX-m.MeanX, b.MeanY-m.MeanY
	f := na * nb / n
	m.MeanX += dx * nb / n
	m.MeanY += dy * nb / n
	m.M2X += b.M2X + dx*dx*f
	m.M2Y += b.M2Y + dy*dy*f
	m.CXY += b.CXY + dx*dy*f
	m.N += b.N
}

// Correlation returns Pearson's product-moment correlation
// r = Cxy / sqrt(M2x M2y); NaN when either variable is constant or fewer
// than two pairs were added.
func (m Moments) Correlation() float64 {
	if m.N < 2 || m.M2X <= 0 || m.M2Y <= 0 {
		return math.NaN()
	}
	r := m.CXY / math.Sqrt(m.M2X*m.M2Y)
	return math.Max(-1, math.Min(1, r))
}

func (m Moments) finite() error {
	for _, v := range []float64{m.MeanX, m.MeanY, m.M2X, m.M2Y, m.CXY} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return errors.New("moments are not finite: a value is NaN or infinite")
		}
	}
	return nil
}

// PearsonTest returns Pearson's r with the test of zero correlation under
// bivariate normality: t = r sqrt((n-2)/(1-r²)) on n-2 degrees of freedom,
// two-sided p = 2 P(T > |t|) (Fisher 1915; as R's cor.test). It needs at
// least three pairs and neither variable constant.
func (m Moments) PearsonTest() (Correlation, error) {
	if err := m.finite(); err != nil {
		return Correlation{}, err
	}
	if m.N < 3 {
		return Correlation{}, fmt.Errorf("pearson correlation test needs at least 3 pairs, got %d", m.N)
	}
	if m.M2X <= 0 || m.M2Y <= 0 {
		return Correlation{}, errors.New("pearson correlation is undefined: a variable is constant")
	}
	r := m.Correlation()
	df := float64(m.N - 2)
	t := r * math.Sqrt(df/(1-r*r))
	return Correlation{
		Method:    Pearson,
		Estimate:  r,
		Statistic: Statistic{Name: "t", Value: t},
		PValue:    twoSidedT(t, df),
		N:         m.N,
		PMethod:   StudentT,
	}, nil
}

// twoSidedT is 2 P(T > |t|) for Student's t on df degrees of freedom.
func twoSidedT(t, df float64) float64 {
	if math.IsInf(t, 0) {
		return 0
	}
	return math.Min(1, 2*distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(math.Abs(t)))
}

// Line is the least-squares line y = Intercept + Slope·x of a simple linear
// regression with intercept, with what the diagnostics of each row need:
// with Sxx = M2x, Syy = M2y and Sxy = Cxy,
//
//	Slope = Sxy / Sxx;  Intercept = ȳ - Slope x̄
//	SSE = Syy - Sxy²/Sxx;  s² = SSE / (n-2);  R² = Sxy² / (Sxx Syy)
//	SE(Slope) = s / sqrt(Sxx);  SE(Intercept) = s sqrt(1/n + x̄²/Sxx)
//
// (any regression text, e.g. Draper & Smith 1998, Applied Regression
// Analysis, 3rd ed., ch. 1).
type Line struct {
	N            int64
	MeanX, MeanY float64
	Sxx, Syy     float64
	Intercept    float64
	Slope        float64
	// SEIntercept and SESlope are the standard errors of the coefficients.
	SEIntercept, SESlope float64
	// ResidualVar is s² = SSE/(n-2), the unbiased residual variance;
	// ResidualSD = sqrt(s²).
	ResidualVar, ResidualSD float64
	// SSE is the residual sum of squares.
	SSE float64
	// RSquared is the coefficient of determination (R² = r² here).
	RSquared float64
}

// Line fits the least-squares line to the pairs summarised by m. It needs at
// least three pairs (for s²) and x not constant.
func (m Moments) Line() (Line, error) {
	if err := m.finite(); err != nil {
		return Line{}, err
	}
	if m.N < 3 {
		return Line{}, fmt.Errorf("line fit needs at least 3 pairs, got %d", m.N)
	}
	if m.M2X <= 0 {
		return Line{}, errors.New("line fit is undefined: x is constant")
	}
	n := float64(m.N)
	b := m.CXY / m.M2X
	sse := math.Max(0, m.M2Y-b*m.CXY)
	s2 := sse / (n - 2)
	r2 := 1.0
	if m.M2Y > 0 {
		r2 = math.Min(1, b*m.CXY/m.M2Y)
	}
	return Line{
		N:           m.N,
		MeanX:       m.MeanX,
		MeanY:       m.MeanY,
		Sxx:         m.M2X,
		Syy:         m.M2Y,
		Intercept:   m.MeanY - b*m.MeanX,
		Slope:       b,
		SEIntercept: math.Sqrt(s2 * (1/n + m.MeanX*m.MeanX/m.M2X)),
		SESlope:     math.Sqrt(s2 / m.M2X),
		ResidualVar: s2,
		ResidualSD:  math.Sqrt(s2),
		SSE:         sse,
		RSquared:    r2,
	}, nil
}
