package outlier

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
)

// CoMoments is the sufficient statistic of the classical estimate over p
// columns: the count, the mean vector and the co-moment matrix
//
//	C_jk = Σ_i (x_ij − x̄_j)(x_ik − x̄_k),
//
// row-major in C (p × p, symmetric). It grows with batches (AddColumns) and
// merges with another state over disjoint rows (Merge), so shards and
// batches can be summarised separately and combined. The fields are
// exported so that another source (a database computing the same sums) can
// fill them.
type CoMoments struct {
	N    int
	Mean []float64
	C    []float64
}

// NewCoMoments returns an empty state over p columns.
func NewCoMoments(p int) *CoMoments {
	return &CoMoments{Mean: make([]float64, p), C: make([]float64, p*p)}
}

// Dim is the number of columns p.
func (m *CoMoments) Dim() int { return len(m.Mean) }

// AddColumns adds a batch of rows given as p columns of equal length. The
// batch is summarised by two passes (mean, then centred products) and
// merged into m by the pairwise update (see Merge), which is more accurate
// than adding the rows one at a time. Values must be finite; the state is
// unchanged on error.
func (m *CoMoments) AddColumns(cols [][]float64) error {
	nb, err := checkColumns(cols, m.Dim())
	if err != nil {
		return err
	}
	if nb == 0 {
		return nil
	}
	b := NewCoMoments(m.Dim())
	b.N = nb
	fb := float64(nb)
	for j, c := range cols {
		var s float64
		for _, v := range c {
			s += v
		}
		b.Mean[j] = s / fb
	}
	p := m.Dim()
	for j := range p {
		cj, mj := cols[j], b.Mean[j]
		for k := j; k < p; k++ {
			ck, mk := cols[k], b.Mean[k]
			var s float64
			for i := range nb {
				s += (cj[i] - mj) * (ck[i] - mk)
			}
			b.C[j*p+k] = s
			b.C[k*p+j] = s
		}
	}
	return m.Merge(b)
}

// Merge adds the state o of disjoint rows into m by the pairwise update of
// Chan, Golub & LeVeque (1979), in the co-moment form given by Pébay
// (2008): with n = n_a + n_b and δ = x̄_b − x̄_a,
//
//	x̄ = x̄_a + δ n_b / n
//	C = C_a + C_b + δ δᵀ n_a n_b / n.
func (m *CoMoments) Merge(o *CoMoments) error {
	p := m.Dim()
	if o.Dim() != p || len(o.C) != p*p || len(m.C) != p*p {
		return fmt.Errorf("co-moments: cannot merge %d columns into %d", o.Dim(), p)
	}
	if o.N == 0 {
		return nil
	}
	if m.N == 0 {
		m.N = o.N
		copy(m.Mean, o.Mean)
		copy(m.C, o.C)
		return nil
	}
	na, nb := float64(m.N), float64(o.N)
	n := na + nb
	w := na * nb / n
	delta := make([]float64, p)
	for j := range p {
		delta[j] = o.Mean[j] - m.Mean[j]
	}
	for j := range p {
		for k := range p {
			m.C[j*p+k] += o.C[j*p+k] + delta[j]*delta[k]*w
		}
		m.Mean[j] += delta[j] * nb / n
	}
	m.N += o.N
	return nil
}

// Covariance is the sample covariance C/(N − 1). It needs N >= 2.
func (m *CoMoments) Covariance() (*mat.SymDense, error) {
	if m.N < 2 {
		return nil, fmt.Errorf("co-moments: %d rows, need at least 2 for a covariance", m.N)
	}
	p := m.Dim()
	cov := mat.NewSymDense(p, nil)
	d := float64(m.N - 1)
	for j := range p {
		for k := j; k < p; k++ {
			cov.SetSym(j, k, m.C[j*p+k]/d)
		}
	}
	return cov, nil
}

// Scatter is the classical estimate: the mean and the sample covariance.
func (m *CoMoments) Scatter() (Scatter, error) {
	cov, err := m.Covariance()
	if err != nil {
		return Scatter{}, err
	}
	return NewScatter(m.Mean, cov)
}

// checkColumns reports columns of unequal length, a count other than p
// (p >= 0) and values that are not finite, naming the column and row
// (1-based); it returns the row count.
func checkColumns(cols [][]float64, p int) (int, error) {
	if p >= 0 && len(cols) != p {
		return 0, fmt.Errorf("%d columns given, want %d", len(cols), p)
	}
	if len(cols) == 0 {
		return 0, fmt.Errorf("no columns")
	}
	n := len(cols[0])
	for j, c := range cols {
		if len(c) != n {
			return 0, fmt.Errorf("column %d has %d rows, column 1 has %d", j+1, len(c), n)
		}
		for i, v := range c {
			if v != v || v-v != 0 {
				return 0, fmt.Errorf("column %d, row %d is %v: drop rows with missing or infinite values first", j+1, i+1, v)
			}
		}
	}
	return n, nil
}
