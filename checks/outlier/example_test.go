package outlier_test

import (
	"fmt"
	"math/rand/v2"
	"slices"

	"github.com/assay-project/assay/checks/outlier"
)

// Rosner's (1983) 54 values, the generalized ESD example of the
// NIST/SEMATECH e-Handbook, section 1.3.5.17.3.
var rosner = []float64{-0.25, 0.68, 0.94, 1.15, 1.20, 1.26, 1.26, 1.34, 1.38,
	1.43, 1.49, 1.49, 1.55, 1.56, 1.58, 1.65, 1.69, 1.70, 1.76, 1.77, 1.81, 1.91,
	1.94, 1.96, 1.99, 2.06, 2.09, 2.10, 2.14, 2.15, 2.23, 2.24, 2.26, 2.35, 2.37,
	2.40, 2.47, 2.54, 2.62, 2.64, 2.90, 2.92, 2.92, 2.93, 3.21, 3.26, 3.30, 3.59,
	3.68, 4.30, 4.64, 5.34, 5.42, 6.01}

func ExampleTukeyFences() {
	sorted := slices.Clone(rosner)
	slices.Sort(sorted)
	f, err := outlier.TukeyFences(sorted, outlier.DefaultTukeyK)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("Q1 %.3f  Q3 %.3f  fences [%.3f, %.3f]\n", f.Q1, f.Q3, f.Lower, f.Upper)
	for _, e := range outlier.Scan(rosner, f) {
		fmt.Printf("row %d: %.2f, %.2f IQR beyond the fence\n", e.Index+1, e.Value, e.Score)
	}
	// Output:
	// Q1 1.565  Q3 2.835  fences [-0.340, 4.740]
	// row 54: 6.01, 1.00 IQR beyond the fence
	// row 53: 5.42, 0.54 IQR beyond the fence
	// row 52: 5.34, 0.47 IQR beyond the fence
}

func ExampleGeneralizedESD() {
	res, err := outlier.GeneralizedESD(rosner, 10, 0.05)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, s := range res.Steps[:4] {
		fmt.Printf("%d  removed %5.2f  R %.3f  lambda %.3f\n", i+1, s.Value, s.R, s.Lambda)
	}
	fmt.Println("outliers:", res.Outliers)
	// Output:
	// 1  removed  6.01  R 3.119  lambda 3.159
	// 2  removed  5.42  R 2.943  lambda 3.151
	// 3  removed  5.34  R 3.179  lambda 3.144
	// 4  removed  4.64  R 2.810  lambda 3.136
	// outliers: 3
}

func ExampleFastMCD() {
	// Two strongly correlated columns; row 7 keeps each value ordinary but
	// breaks the relation.
	rng := rand.New(rand.NewPCG(1, 2))
	x, y := make([]float64, 200), make([]float64, 200)
	for i := range x {
		a := rng.NormFloat64()
		x[i] = 10 + a
		y[i] = 5 + 2*a + 0.3*rng.NormFloat64()
	}
	x[6], y[6] = 11.5, 2
	cols := [][]float64{x, y}
	m, err := outlier.FastMCD(cols, outlier.MCDOptions{}, rand.New(rand.NewPCG(3, 4)))
	if err != nil {
		fmt.Println(err)
		return
	}
	flagged, err := m.Final.Flag(cols, outlier.Cutoff(2, outlier.DefaultJointQuantile))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("h = %d of %d rows, %d kept by reweighting\n", m.H, m.N, m.Kept)
	for _, r := range flagged {
		fmt.Printf("row %d: d² %.0f, most from column %d\n", r.Index+1, r.Dist2, r.Ranked()[0]+1)
	}
	// Output:
	// h = 101 of 200 rows, 197 kept by reweighting
	// row 7: d² 395, most from column 2
}

func ExampleCoMoments_Merge() {
	// Two shards summarised apart, then merged; by hand: x = 1..5 has
	// variance 10/4, y = 2, 4, 7, 8, 9 has 34/4, and their co-moment is 18.
	a, b := outlier.NewCoMoments(2), outlier.NewCoMoments(2)
	_ = a.AddColumns([][]float64{{1, 2, 3}, {2, 4, 7}})
	_ = b.AddColumns([][]float64{{4, 5}, {8, 9}})
	if err := a.Merge(b); err != nil {
		fmt.Println(err)
		return
	}
	cov, _ := a.Covariance()
	fmt.Printf("n %d  mean %.1f  cov %.2f %.2f %.2f\n", a.N, a.Mean, cov.At(0, 0), cov.At(0, 1), cov.At(1, 1))
	// Output:
	// n 5  mean [3.0 6.0]  cov 2.50 4.50 8.50
}
