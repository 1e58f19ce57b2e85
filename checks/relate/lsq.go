package relate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Regression is a linear least-squares fit y = b0 + b1 x1 + ... + bk xk.
type Regression struct {
	N         int64
	Intercept bool
	// Coef holds b0 first when the model has an intercept, then one
	// coefficient per predictor in the order given; SE their standard
	// errors.
	Coef, SE []float64
	// ResidualSD is s = sqrt(SSE / DFResidual).
	ResidualSD float64
	// RSquared is 1 - SSE/SST with SST = Σ(y - ȳ)² for a model with an
	// intercept and Σy² (uncentred) without one, as in R and the NIST
	// StRD.
	RSquared float64
	// SSE is the residual and SSR the regression sum of squares; F is the
	// F statistic (SSR/DFRegression)/(SSE/DFResidual).
	SSE, SSR                 float64
	DFResidual, DFRegression int
	F                        float64
}

// LeastSquares fits y by ordinary least squares on the predictor columns
// (each of length len(y)), with an intercept when intercept is set. It
// solves min ||y - X b|| by Householder QR (gonum mat.QR; Golub & Van Loan
// 2013, Matrix Computations, 4th ed., §5.3), never forming XᵀX, whose
// condition number is the square of X's. With an intercept, each column and
// y are first centred on their means (two-pass means with the Chan, Golub &
// LeVeque correction) and the slopes solved on the centred columns; then
// b0 = ȳ - Σ b_j x̄_j. Centring removes the near-collinearity of the
// constant column with predictors of large mean (Longley's years), the
// main source of error in the NIST StRD Longley problem.
//
// Standard errors are s sqrt(diag((XᵀX)⁻¹)), with (XᵀX)⁻¹ = R⁻¹R⁻ᵀ from the
// triangular factor; for b0 after centring, Var(b0) = s²(1/n + x̄ᵀR⁻¹R⁻ᵀx̄).
// It needs more rows than coefficients and columns that are not (nearly)
// collinear: a condition number above 1e14 of the design with its columns
// (centred and) scaled to unit length is an error.
func LeastSquares(y []float64, predictors [][]float64, intercept bool) (Regression, error) {
	n, k := len(y), len(predictors)
	p := k
	if intercept {
		p++
	}
	if k == 0 {
		return Regression{}, errors.New("least squares needs at least one predictor")
	}
	if n <= p {
		return Regression{}, fmt.Errorf("least squares with %d coefficients needs more than %d rows, got %d", p, p, n)
	}
	for j, col := range predictors {
		if len(col) != n {
			return Regression{}, fmt.Errorf("least squares: predictor %d has %d values and y has %d", j+1, len(col), n)
		}
	}
	for i, v := range y {
		if !finite(v) {
			return Regression{}, fmt.Errorf("least squares: y in row %d is %v; only finite values can be used", i+1, v)
		}
		for j, col := range predictors {
			if !finite(col[i]) {
				return Regression{}, fmt.Errorf("least squares: predictor %d in row %d is %v; only finite values can be used", j+1, i+1, col[i])
			}
		}
	}

	means := make([]float64, k)
	yc := make([]float64, n)
	copy(yc, y)
	var ybar float64
	if intercept {
		ybar = centre(yc)
	}
	// Columns are scaled to unit length, so that the condition number
	// measures collinearity, not units; b_j = b'_j / |x_j|.
	norms := make([]float64, k)
	x := mat.NewDense(n, k, nil)
	col := make([]float64, n)
	for j, c := range predictors {
		copy(col, c)
		if intercept {
			means[j] = centre(col)
		}
		norms[j] = floats.Norm(col, 2)
		if norms[j] == 0 {
			return Regression{}, fmt.Errorf("least squares: predictor %d is constant", j+1)
		}
		floats.Scale(1/norms[j], col)
		x.SetCol(j, col)
	}

	var qr mat.QR
	qr.Factorize(x)
	if c := qr.Cond(); c > 1e14 || math.IsInf(c, 0) || math.IsNaN(c) {
		return Regression{}, fmt.Errorf("least squares: the predictors are collinear (condition number %.3g)", c)
	}
	var b mat.VecDense
	if err := qr.SolveVecTo(&b, false, mat.NewVecDense(n, yc)); err != nil {
		return Regression{}, fmt.Errorf("least squares: %w", err)
	}

	var sse, ssr, sst float64
	for i := 0; i < n; i++ {
		fitted := 0.0
		for j := 0; j < k; j++ {
			fitted += x.At(i, j) * b.AtVec(j)
		}
		e := yc[i] - fitted
		sse += e * e
		ssr += fitted * fitted
		sst += yc[i] * yc[i]
	}
	dfRes := n - p
	s2 := sse / float64(dfRes)

	// (XᵀX)⁻¹ = D⁻¹R⁻¹R⁻ᵀD⁻¹ with D = diag(|x_j|): row j of R⁻¹ scaled by
	// 1/|x_j| is row j of D⁻¹R⁻¹.
	var r mat.Dense
	qr.RTo(&r)
	rt := mat.NewTriDense(k, mat.Upper, nil)
	for i := 0; i < k; i++ {
		for j := i; j < k; j++ {
			rt.SetTri(i, j, r.At(i, j))
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(rt); err != nil {
		return Regression{}, fmt.Errorf("least squares: %w", err)
	}
	coef := make([]float64, k)
	for j := range coef {
		coef[j] = b.AtVec(j) / norms[j]
	}
	ri := func(j, l int) float64 { return rinv.At(j, l) / norms[j] }

	reg := Regression{
		N:            int64(n),
		Intercept:    intercept,
		ResidualSD:   math.Sqrt(s2),
		RSquared:     1 - sse/sst,
		SSE:          sse,
		SSR:          ssr,
		DFResidual:   dfRes,
		DFRegression: k,
		F:            (ssr / float64(k)) / s2,
	}
	if intercept {
		// v = R⁻ᵀ x̄, so x̄ᵀR⁻¹R⁻ᵀx̄ = |v|².
		b0, vv := ybar, 0.0
		for l := 0; l < k; l++ {
			b0 -= means[l] * coef[l]
			v := 0.0
			for j := 0; j <= l; j++ {
				v += means[j] * ri(j, l)
			}
			vv += v * v
		}
		reg.Coef = append(reg.Coef, b0)
		reg.SE = append(reg.SE, math.Sqrt(s2*(1/float64(n)+vv)))
	}
	for j := 0; j < k; j++ {
		d := 0.0
		for l := j; l < k; l++ {
			d += ri(j, l) * ri(j, l)
		}
		reg.Coef = append(reg.Coef, coef[j])
		reg.SE = append(reg.SE, math.Sqrt(s2*d))
	}
	return reg, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// centre subtracts the mean from a in place (two passes with the Chan,
// Golub & LeVeque correction) and returns the mean.
func centre(a []float64) float64 {
	s := 0.0
	for _, v := range a {
		s += v
	}
	m := s / float64(len(a))
	e := 0.0
	for _, v := range a {
		e += v - m
	}
	m += e / float64(len(a))
	for i := range a {
		a[i] -= m
	}
	return m
}
