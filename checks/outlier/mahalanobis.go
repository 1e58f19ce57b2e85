package outlier

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// DefaultJointQuantile is the chi-square quantile used as the cutoff for
// squared distances when none is given: 0.999, so that about one row in a
// thousand of clean normal data is flagged. Common practice; 0.975 (Rousseeuw
// & Van Zomeren 1990) is the other usual choice.
const DefaultJointQuantile = 0.999

// Cutoff returns the q-quantile of the chi-square distribution with p
// degrees of freedom, the usual cutoff for squared Mahalanobis distances of
// p-variate normal rows from known (or consistently estimated) parameters.
// It returns NaN for p < 1 or q outside [0, 1].
func Cutoff(p int, q float64) float64 {
	if p < 1 || !(q >= 0 && q <= 1) {
		return math.NaN()
	}
	return distuv.ChiSquared{K: float64(p)}.Quantile(q)
}

// Scatter is a center and a positive definite scatter matrix over p columns,
// prepared for squared Mahalanobis distances
//
//	d²(x) = (x − μ)ᵀ Σ⁻¹ (x − μ).
//
// With Σ = L Lᵀ (Cholesky), d² = |z|², z = L⁻¹(x − μ), a sum of squares that
// cannot come out negative however ill-conditioned Σ is. A Scatter is
// read-only after NewScatter and safe for concurrent use.
type Scatter struct {
	Center []float64
	Cov    *mat.SymDense
	linv   []float64 // p × p row-major, lower triangle: L⁻¹
	logDet float64
}

// NewScatter copies center and cov and factorises cov. It fails when the
// sizes differ or cov is not positive definite (a column is constant, or
// the columns are linearly dependent).
func NewScatter(center []float64, cov mat.Symmetric) (Scatter, error) {
	p := len(center)
	if p == 0 {
		return Scatter{}, fmt.Errorf("scatter: no columns")
	}
	if cov.SymmetricDim() != p {
		return Scatter{}, fmt.Errorf("scatter: center has %d columns, covariance %d", p, cov.SymmetricDim())
	}
	for j, v := range center {
		if err := checkFinite(v, j); err != nil {
			return Scatter{}, fmt.Errorf("scatter: center %w", err)
		}
	}
	s := Scatter{Center: slices.Clone(center), Cov: mat.NewSymDense(p, nil), linv: make([]float64, p*p)}
	s.Cov.CopySym(cov)
	var f factor
	if !f.factorize(s.Cov, s.linv) {
		return Scatter{}, fmt.Errorf("scatter: covariance is not positive definite (a constant column, or columns that are linear combinations of others)")
	}
	s.logDet = f.chol.LogDet()
	return s, nil
}

// Dim is the number of columns p.
func (s Scatter) Dim() int { return len(s.Center) }

// LogDet is the natural logarithm of det Σ.
func (s Scatter) LogDet() float64 { return s.logDet }

// Dist2 is the squared distance of one row of p values. It does not
// allocate for p <= 8; row must have Dim values.
func (s Scatter) Dist2(row []float64) float64 {
	p := len(s.Center)
	u := rowBuf(p)
	for j := range p {
		u[j] = row[j] - s.Center[j]
	}
	return quad(s.linv, u)
}

// rowBuf returns a slice of length p, on the stack for p <= 8 when the
// caller does not let it escape.
func rowBuf(p int) []float64 {
	var buf [8]float64
	if p > len(buf) {
		return make([]float64, p)
	}
	return buf[:p]
}

// quad returns |L⁻¹ u|² for L⁻¹ row-major (lower triangle) in linv.
func quad(linv, u []float64) float64 {
	p := len(u)
	var d2 float64
	for k := range p {
		var z float64
		for j, l := range linv[k*p : k*p+k+1] {
			z += l * u[j]
		}
		d2 += z * z
	}
	return d2
}

// Contributions splits the squared distance of row among its columns:
//
//	c_j = u_j [Σ⁻¹ u]_j,   u = x − μ,   Σ_j c_j = d²(x).
//
// This is the Euler allocation of the quadratic form (d² is homogeneous of
// degree 2 in u, so Σ_j u_j ∂d²/∂u_j = 2 d², and c_j = ½ u_j ∂d²/∂u_j), the
// common "partial decomposition" contribution of multivariate process
// monitoring. A column with a large c_j is one whose deviation, given the
// others, drives the distance; a negative c_j means that column's deviation
// is in line with the others and partly offsets them. It returns a new slice.
func (s Scatter) Contributions(row []float64) []float64 {
	p := len(s.Center)
	u := make([]float64, p)
	for j := range p {
		u[j] = row[j] - s.Center[j]
	}
	// w = L⁻ᵀ L⁻¹ u = Σ⁻¹ u, computed in place: first z = L⁻¹ u, then
	// w_j = Σ_{k >= j} (L⁻¹)_kj z_k, which reads only z_k with k >= j.
	w := make([]float64, p)
	for k := range p {
		var z float64
		for j := 0; j <= k; j++ {
			z += s.linv[k*p+j] * u[j]
		}
		w[k] = z
	}
	for j := range p {
		var v float64
		for k := j; k < p; k++ {
			v += s.linv[k*p+j] * w[k]
		}
		w[j] = v
	}
	for j := range p {
		w[j] *= u[j]
	}
	return w
}

// Distances writes the squared distance of every row of cols (p columns of
// equal length) into dst, grown as needed, and returns it.
func (s Scatter) Distances(cols [][]float64, dst []float64) ([]float64, error) {
	n, err := checkColumns(cols, s.Dim())
	if err != nil {
		return nil, fmt.Errorf("mahalanobis distances: %w", err)
	}
	dst = slices.Grow(dst[:0], n)[:n]
	s.distances(cols, nil, dst)
	return dst, nil
}

// distances writes d² of the rows listed in rows (all rows when rows is
// nil) into dst.
func (s Scatter) distances(cols [][]float64, rows []int, dst []float64) {
	sqDistances(cols, s.Center, s.linv, rows, dst)
}

// sqDistances writes (x − center)ᵀ Σ⁻¹ (x − center) = |L⁻¹(x − center)|² of
// the rows listed in rows (all rows when rows is nil) into dst, given L⁻¹
// row-major in linv. Three columns (the bench policy's joint rule, and
// each step of FAST-MCD over them) run an unrolled loop that does quad's
// operations in quad's order, so every distance is the same to the bit.
func sqDistances(cols [][]float64, center, linv []float64, rows []int, dst []float64) {
	p := len(center)
	if p == 3 {
		sqDistances3(cols, center, linv, rows, dst)
		return
	}
	u := rowBuf(p)
	for k := range dst {
		i := k
		if rows != nil {
			i = rows[k]
		}
		for j := range p {
			u[j] = cols[j][i] - center[j]
		}
		dst[k] = quad(linv, u)
	}
}

// sqDistances3 is sqDistances for three columns.
func sqDistances3(cols [][]float64, center, linv []float64, rows []int, dst []float64) {
	x0, x1, x2 := cols[0], cols[1], cols[2]
	c0, c1, c2 := center[0], center[1], center[2]
	l := linv[:9]
	l00, l10, l11, l20, l21, l22 := l[0], l[3], l[4], l[6], l[7], l[8]
	for k := range dst {
		i := k
		if rows != nil {
			i = rows[k]
		}
		u0, u1, u2 := x0[i]-c0, x1[i]-c1, x2[i]-c2
		var z0, z1, z2, d2 float64
		z0 += l00 * u0
		d2 += z0 * z0
		z1 += l10 * u0
		z1 += l11 * u1
		d2 += z1 * z1
		z2 += l20 * u0
		z2 += l21 * u1
		z2 += l22 * u2
		d2 += z2 * z2
		dst[k] = d2
	}
}

// ShowsNonFinite reports whether every row holding a NaN or an infinite
// value gets a non-finite squared distance, so that a finite distance
// proves a row's values finite: true when every diagonal entry of L⁻¹ is
// > 0 (a NaN is not). Proof: let u_j be the last non-finite entry of
// u = x − center (the center is finite); z_j = Σ_{i<=j} (L⁻¹)_ji u_i holds
// (L⁻¹)_jj u_j, ±Inf or NaN, and finite terms, ±Inf or NaN terms with it
// cannot sum to a finite number; d² = Σ z_k² then adds +Inf or NaN to
// terms that are >= 0 or NaN. (A finite row may still get +Inf by
// overflow.) NewScatter makes every diagonal entry > 0 when it can.
func (s Scatter) ShowsNonFinite() bool {
	p := len(s.Center)
	for k := range p {
		if !(s.linv[k*p+k] > 0) {
			return false
		}
	}
	return p > 0
}

// RowExtreme is a row flagged by its squared distance.
type RowExtreme struct {
	Index   int       // row, 0-based
	Dist2   float64   // squared Mahalanobis distance
	Contrib []float64 // per column, summing to Dist2 (Scatter.Contributions)
}

// Ranked returns the column indices (0-based) by contribution, largest
// first, ties by column order.
func (r RowExtreme) Ranked() []int {
	idx := make([]int, len(r.Contrib))
	for j := range idx {
		idx[j] = j
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(r.Contrib[b], r.Contrib[a]) })
	return idx
}

// Flag returns the rows of cols whose squared distance exceeds cutoff
// (Cutoff gives the chi-square quantile), largest first, ties by row, each
// with its per-column contributions.
func (s Scatter) Flag(cols [][]float64, cutoff float64) ([]RowExtreme, error) {
	if !(cutoff > 0) || math.IsInf(cutoff, 0) {
		return nil, fmt.Errorf("mahalanobis: cutoff is %v, want a finite number > 0", cutoff)
	}
	d2, err := s.Distances(cols, nil)
	if err != nil {
		return nil, err
	}
	var out []RowExtreme
	row := make([]float64, s.Dim())
	for i, d := range d2 {
		if d > cutoff {
			for j := range row {
				row[j] = cols[j][i]
			}
			out = append(out, RowExtreme{Index: i, Dist2: d, Contrib: s.Contributions(row)})
		}
	}
	slices.SortStableFunc(out, func(a, b RowExtreme) int { return cmp.Compare(b.Dist2, a.Dist2) })
	return out, nil
}

// Classical is the classical estimate of p columns of equal length: the
// mean and the sample covariance (divisor n − 1), as R's colMeans and cov.
// Its distances are those of R's mahalanobis(x, colMeans(x), cov(x)).
func Classical(cols [][]float64) (Scatter, error) {
	m := NewCoMoments(len(cols))
	if err := m.AddColumns(cols); err != nil {
		return Scatter{}, fmt.Errorf("classical estimate: %w", err)
	}
	s, err := m.Scatter()
	if err != nil {
		return Scatter{}, fmt.Errorf("classical estimate: %w", err)
	}
	return s, nil
}

// factor holds a Cholesky factorisation and the inverse of its triangular
// factor, reused across the many small factorisations of FAST-MCD.
type factor struct {
	chol mat.Cholesky
	u    mat.TriDense
}

// factorize factorises the positive definite a = Uᵀ U (gonum's upper
// factor, so L = Uᵀ) and writes L⁻¹ = (U⁻¹)ᵀ row-major into linv (p × p).
// It reports false when a is not positive definite, counting as singular a
// matrix in which some column is explained by the ones before it up to
// 1 − R² < singularTol: U_kk² = a_kk (1 − R²_k), R²_k that of column k
// regressed on columns 1 .. k−1, a test that does not depend on the
// columns' scales.
func (f *factor) factorize(a *mat.SymDense, linv []float64) bool {
	if !f.chol.Factorize(a) {
		return false
	}
	f.chol.UTo(&f.u)
	p := a.SymmetricDim()
	for k := range p {
		if u := f.u.At(k, k); u*u < singularTol*a.At(k, k) {
			return false
		}
	}
	if err := f.u.InverseTri(&f.u); err != nil {
		// A finite condition number above gonum's tolerance still leaves a
		// computed inverse; an infinite one does not.
		if c, ok := err.(mat.Condition); !ok || math.IsInf(float64(c), 1) {
			return false
		}
	}
	raw := f.u.RawTriangular()
	for k := range p {
		for j := 0; j <= k; j++ {
			linv[k*p+j] = raw.Data[j*raw.Stride+k]
		}
		for j := k + 1; j < p; j++ {
			linv[k*p+j] = 0
		}
	}
	return !math.IsInf(f.chol.LogDet(), 0)
}

// singularTol is the share of a column's variance below which the part not
// explained by the other columns counts as rounding error: 1e-12, about 10⁴
// times the relative precision of float64.
const singularTol = 1e-12

// DistancesAt writes the squared distance of the rows of cols (p columns)
// listed in rows, or of every row when rows is nil, into dst, grown as
// needed, and returns it: Distances without its checks, for callers that
// have picked rows with finite values. The distances are those of Dist2,
// bit for bit.
func (s Scatter) DistancesAt(cols [][]float64, rows []int, dst []float64) []float64 {
	n := len(rows)
	if rows == nil {
		n = len(cols[0])
	}
	dst = slices.Grow(dst[:0], n)[:n]
	s.distances(cols, rows, dst)
	return dst
}
