package outlier

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestBadInput: every constructor and test refuses bad input with an
// error that names the problem, and never panics.
func TestBadInput(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	good := [][]float64{{1, 2, 3, 4, 5, 6}, {2, 1, 4, 3, 6, 7}}
	for _, c := range []struct {
		name string
		run  func() error
		want string
	}{
		{"fences unsorted", func() error { _, err := TukeyFences([]float64{2, 1}, 1.5); return err }, "value 2 (1) is smaller than value 1 (2)"},
		{"fences empty", func() error { _, err := TukeyFences(nil, 1.5); return err }, "no values"},
		{"fences NaN", func() error { _, err := TukeyFences([]float64{1, nan}, 1.5); return err }, "value 2 is NaN"},
		{"fences negative k", func() error { _, err := TukeyFences([]float64{1, 2}, -1); return err }, "k is -1"},
		{"z one value", func() error { _, err := NewZScore([]float64{1}, 3); return err }, "1 values, need at least 2"},
		{"z infinite", func() error { _, err := NewZScore([]float64{1, inf}, 3); return err }, "value 2 is +Inf"},
		{"z cutoff", func() error { _, err := NewZScore([]float64{1, 2}, 0); return err }, "cutoff is 0"},
		{"robust z unsorted", func() error { _, err := NewRobustZ([]float64{3, 1, 2}, 3.5); return err }, "sort the values first"},
		{"robust z cutoff", func() error { _, err := NewRobustZ([]float64{1, 2}, nan); return err }, "cutoff is NaN"},
		{"tail alpha", func() error { _, err := NewTail(symmetricNormal{}, 1, 10); return err }, "alpha is 1"},
		{"tail n", func() error { _, err := NewTail(symmetricNormal{}, 0.05, 0); return err }, "0 values"},
		{"tail nil", func() error { _, err := NewTail(nil, 0.05, 10); return err }, "no distribution"},
		{"esd too many", func() error { _, err := GeneralizedESD([]float64{1, 2, 3, 4}, 3, 0.05); return err }, "allow 1 to 2 outliers, got 3"},
		{"esd alpha", func() error { _, err := GeneralizedESD([]float64{1, 2, 3, 4}, 1, 0); return err }, "alpha is 0"},
		{"esd NaN", func() error { _, err := GeneralizedESD([]float64{1, 2, nan, 4}, 1, 0.05); return err }, "value 3 is NaN"},
		{"grubbs small", func() error { _, err := Grubbs([]float64{1, 2}, 0.05, TwoSided); return err }, "2 values, need at least 3"},
		{"grubbs alternative", func() error { _, err := Grubbs([]float64{1, 2, 3}, 0.05, Alternative(7)); return err }, "unknown alternative Alternative(7)"},
		{"co-moments columns", func() error { return NewCoMoments(3).AddColumns(good) }, "2 columns given, want 3"},
		{"co-moments ragged", func() error { return NewCoMoments(2).AddColumns([][]float64{{1, 2}, {1}}) }, "column 2 has 1 rows, column 1 has 2"},
		{"co-moments NaN", func() error { return NewCoMoments(2).AddColumns([][]float64{{1, 2}, {1, nan}}) }, "column 2, row 2 is NaN"},
		{"covariance one row", func() error { _, err := NewCoMoments(2).Covariance(); return err }, "0 rows, need at least 2"},
		{"classical constant", func() error { _, err := Classical([][]float64{{1, 2, 3}, {5, 5, 5}}); return err }, "not positive definite"},
		{"classical collinear", func() error { _, err := Classical([][]float64{{1, 2, 3}, {2, 4, 6}}); return err }, "not positive definite"},
		{"scatter sizes", func() error { _, err := NewScatter([]float64{0, 0}, mat.NewSymDense(3, nil)); return err }, "center has 2 columns, covariance 3"},
		{"distances columns", func() error {
			s, _ := Classical(good)
			_, err := s.Distances([][]float64{{1}}, nil)
			return err
		}, "1 columns given, want 2"},
		{"flag cutoff", func() error { s, _ := Classical(good); _, err := s.Flag(good, -1); return err }, "cutoff is -1"},
		{"mcd one column", func() error { _, err := FastMCD(good[:1], MCDOptions{}, newRand(1)); return err }, "1 columns, need at least 2"},
		{"mcd few rows", func() error {
			_, err := FastMCD([][]float64{{1, 2, 3}, {3, 1, 2}}, MCDOptions{}, newRand(1))
			return err
		}, "3 rows of 2 columns, need at least 4"},
		{"mcd alpha", func() error { _, err := FastMCD(good, MCDOptions{Alpha: 0.3}, newRand(1)); return err }, "alpha is 0.3"},
		{"mcd starts", func() error { _, err := FastMCD(good, MCDOptions{Starts: -1}, newRand(1)); return err }, "starts is -1"},
		{"mcd reweight", func() error { _, err := FastMCD(good, MCDOptions{Reweight: 1}, newRand(1)); return err }, "reweighting quantile is 1"},
		{"mcd constant column", func() error {
			_, err := FastMCD([][]float64{{1, 2, 3, 4, 5, 6}, {7, 7, 7, 7, 7, 7}}, MCDOptions{}, newRand(1))
			return err
		}, "covariance of all rows is singular"},
		{"mcd rand", func() error { _, err := FastMCD(good, MCDOptions{}, nil); return err }, "no random source"},
		{"mcd NaN", func() error {
			_, err := FastMCD([][]float64{{1, 2, 3, 4}, {1, nan, 3, 4}}, MCDOptions{}, newRand(1))
			return err
		}, "column 2, row 2 is NaN"},
		{"mcd exact fit", func() error {
			// 8 of 10 rows on the line y = 2x: every h-subset (h = 6) has
			// a singular covariance.
			x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
			y := []float64{2, 4, 6, 8, 10, 12, 14, 16, 3, -5}
			_, err := FastMCD([][]float64{x, y}, MCDOptions{}, newRand(1))
			return err
		}, "8 of the 10 rows satisfy 1 x1 - 0.5 x2 = 0 (an exact linear relation"},
		{"mcd exact fit, nested", func() error {
			// 700 of 1000 rows on the plane x3 = x1 + x2; the search runs
			// in subgroups and must still find it.
			rng := newRand(3)
			cols := [][]float64{make([]float64, 1000), make([]float64, 1000), make([]float64, 1000)}
			for i := range 1000 {
				cols[0][i], cols[1][i], cols[2][i] = rng.NormFloat64(), rng.NormFloat64(), 3*rng.NormFloat64()
				if i%10 < 7 {
					cols[2][i] = cols[0][i] + cols[1][i]
				}
			}
			_, err := FastMCD(cols, MCDOptions{}, newRand(4))
			return err
		}, "700 of the 1000 rows satisfy"},
		{"mcd stuck sensor", func() error {
			// 60% of the rows repeat one reading.
			rng := newRand(5)
			cols := [][]float64{make([]float64, 200), make([]float64, 200)}
			for i := range 200 {
				cols[0][i], cols[1][i] = 20.5, 3
				if i%5 >= 3 {
					cols[0][i], cols[1][i] = 20+rng.NormFloat64(), 3+rng.NormFloat64()
				}
			}
			_, err := FastMCD(cols, MCDOptions{}, newRand(6))
			return err
		}, "120 of the 200 rows satisfy"},
	} {
		err := c.run()
		if err == nil {
			t.Errorf("%s: no error, want %q", c.name, c.want)
			continue
		}
		if !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %q, want it to contain %q", c.name, err, c.want)
		}
	}
	if v := GrubbsCritical(2, 0.05, TwoSided); !math.IsNaN(v) {
		t.Errorf("GrubbsCritical(2) = %v, want NaN", v)
	}
	for _, v := range []float64{Cutoff(0, 0.5), Cutoff(2, 1.5), ConsistencyFactor(2, 0), ConsistencyFactor(0, 0.5)} {
		if !math.IsNaN(v) {
			t.Errorf("out-of-range argument gave %v, want NaN", v)
		}
	}
}
