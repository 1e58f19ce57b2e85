package outlier

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestShowsNonFinite: for scatters well and badly conditioned, over two,
// three (the unrolled loop) and four columns, every row holding a NaN or
// an infinite value in any place gets a non-finite distance, while a
// scatter whose L⁻¹ has a diagonal entry that is not > 0 (made by hand:
// NewScatter never makes one) does not claim it.
func TestShowsNonFinite(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	cases := []struct {
		name string
		cov  []float64 // p × p
	}{
		{"two, identity", []float64{1, 0, 0, 1}},
		{"two, correlated", []float64{4, 3.9, 3.9, 4}},
		{"three, scaled", []float64{1e-8, 0, 0, 0, 1, 0.5, 0, 0.5, 1e8}},
		{"three, nearly singular", []float64{1, 0.999999, 0.5, 0.999999, 1, 0.5, 0.5, 0.5, 1}},
		{"four", []float64{2, 1, 0, 0, 1, 2, 1, 0, 0, 1, 2, 1, 0, 0, 1, 2}},
	}
	for _, tc := range cases {
		p := int(math.Sqrt(float64(len(tc.cov))))
		center := make([]float64, p)
		for j := range center {
			center[j] = float64(j) - 0.5
		}
		s, err := NewScatter(center, mat.NewSymDense(p, tc.cov))
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if !s.ShowsNonFinite() {
			t.Fatalf("%s: ShowsNonFinite() = false for a scatter from NewScatter", tc.name)
		}
		// Row r puts bad value v at place j, the others at finite values
		// large and small.
		for j := range p {
			for _, v := range []float64{nan, inf, -inf} {
				for _, other := range []float64{0, 1e300, -1e300} {
					cols := make([][]float64, p)
					for k := range cols {
						cols[k] = []float64{other}
					}
					cols[j][0] = v
					d2 := s.DistancesAt(cols, nil, nil)
					if !math.IsNaN(d2[0]) && !math.IsInf(d2[0], 0) {
						t.Errorf("%s: %v at column %d, others %v: distance %v, want a non-finite one", tc.name, v, j, other, d2[0])
					}
				}
			}
		}
		for _, bad := range []float64{0, -1, nan} {
			broken := s
			broken.linv = append([]float64(nil), s.linv...)
			broken.linv[(p-1)*p+p-1] = bad
			if broken.ShowsNonFinite() {
				t.Errorf("%s: ShowsNonFinite() = true with a last diagonal entry of L⁻¹ of %v", tc.name, bad)
			}
		}
	}
}
