package relate

import (
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// readTable reads a CSV file of testdata (lines starting with # are
// comments) and returns its header and rows.
func readTable(t *testing.T, name string) ([]string, [][]string) {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if len(recs) < 2 {
		t.Fatalf("%s: no data rows", name)
	}
	return recs[0], recs[1:]
}

func parseFloat(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// readColumns reads a numeric CSV of testdata into its columns by name.
func readColumns(t *testing.T, name string) map[string][]float64 {
	t.Helper()
	head, rows := readTable(t, name)
	cols := map[string][]float64{}
	for _, r := range rows {
		for j, h := range head {
			cols[h] = append(cols[h], parseFloat(t, r[j]))
		}
	}
	return cols
}

// certified returns the NIST certified values of one dataset by quantity.
func certified(t *testing.T, dataset string) map[string]float64 {
	t.Helper()
	_, rows := readTable(t, "nist_strd_lls_certified.csv")
	out := map[string]float64{}
	for _, r := range rows {
		if r[0] == dataset {
			out[r[1]] = parseFloat(t, r[2])
		}
	}
	if len(out) == 0 {
		t.Fatalf("no certified values for %s", dataset)
	}
	return out
}

// lre is the log relative error -log10(|est - cert| / |cert|) of McCullough
// (1998, "Assessing the reliability of statistical software: part I", The
// American Statistician 52(4):358-366), the number of correct significant
// digits; 15 stands for agreement to every certified digit.
func lre(est, cert float64) float64 {
	if est == cert {
		return 15
	}
	if cert == 0 {
		return math.Min(15, -math.Log10(math.Abs(est)))
	}
	return math.Min(15, -math.Log10(math.Abs(est-cert)/math.Abs(cert)))
}

// TestNISTLeastSquares fits the NIST StRD Norris and Longley problems by QR
// and asserts the log relative error of every certified quantity. The
// minimum LRE asserted is what this method achieves in float64 (measured on
// linux/amd64 with gonum v0.17.0), rounded down to half a digit:
//
//	Norris   11.9 (b0, whose 0.26 is the difference of ȳ ≈ 429 and b1 x̄;
//	              every other quantity 13.7 or more)   asserted 11.5
//	Longley  13.9 (b1 and b5; the rest 14.5 or more)  asserted 13.5
//	NoInt1   14.4, NoInt2 14.6 (no intercept; R² uncentred)  asserted 13.5
//
// Centring and scaling the columns before the QR makes Longley, whose raw
// design [1 x1 .. x6] has condition number 6.2e9, as easy as Norris; plain
// Householder QR of the raw design reaches 10.9 (measured once, not kept).
// McCullough (1998) calls 7 or more on Longley acceptable and expects 9 or
// more on the lower-difficulty sets.
func TestNISTLeastSquares(t *testing.T) {
	for _, c := range []struct {
		dataset, file string
		predictors    []string
		intercept     bool
		minLRE        float64
	}{
		{"Norris", "nist_strd_norris.csv", []string{"x"}, true, 11.5},
		{"Longley", "nist_strd_longley.csv", []string{"x1", "x2", "x3", "x4", "x5", "x6"}, true, 13.5},
		{"NoInt1", "nist_strd_noint1.csv", []string{"x"}, false, 13.5},
		{"NoInt2", "nist_strd_noint2.csv", []string{"x"}, false, 13.5},
	} {
		t.Run(c.dataset, func(t *testing.T) {
			cols := readColumns(t, c.file)
			cert := certified(t, c.dataset)
			var xs [][]float64
			for _, p := range c.predictors {
				xs = append(xs, cols[p])
			}
			reg, err := LeastSquares(cols["y"], xs, c.intercept)
			if err != nil {
				t.Fatal(err)
			}
			got := map[string]float64{
				"residual_sd":   reg.ResidualSD,
				"r_squared":     reg.RSquared,
				"ss_regression": reg.SSR,
				"ss_residual":   reg.SSE,
				"f_statistic":   reg.F,
				"df_residual":   float64(reg.DFResidual),
				"df_regression": float64(reg.DFRegression),
			}
			first := 0 // NIST numbers the coefficients from B1 without B0
			if !c.intercept {
				first = 1
			}
			for j := range reg.Coef {
				got[fmt.Sprintf("B%d_estimate", first+j)] = reg.Coef[j]
				got[fmt.Sprintf("B%d_std_error", first+j)] = reg.SE[j]
			}
			checked, worst := 0, 15.0
			for q, want := range cert {
				v, ok := got[q]
				if !ok {
					continue // ms_* are ratios of the above
				}
				checked++
				l := lre(v, want)
				worst = math.Min(worst, l)
				if l < c.minLRE {
					t.Errorf("%s %s = %.15g, certified %.15g: LRE %.1f, want >= %.1f", c.dataset, q, v, want, l, c.minLRE)
				}
			}
			if want := 2*len(reg.Coef) + 7; checked != want {
				t.Errorf("%s: compared %d certified values, want %d", c.dataset, checked, want)
			}
			t.Logf("%s: minimum LRE %.1f over %d certified values", c.dataset, worst, checked)
		})
	}
}

func TestLeastSquaresErrors(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5}
	y := []float64{2, 4, 5, 4, 5}
	for _, c := range []struct {
		name       string
		y          []float64
		predictors [][]float64
		intercept  bool
		want       string
	}{
		{"no predictor", y, nil, true, "at least one predictor"},
		{"too few rows", y[:2], [][]float64{x[:2]}, true, "with 2 coefficients needs more than 2 rows, got 2"},
		{"lengths", y, [][]float64{x[:4]}, true, "predictor 1 has 4 values and y has 5"},
		{"y NaN", []float64{1, 2, math.NaN(), 4, 5}, [][]float64{x}, true, "y in row 3 is NaN"},
		{"x infinite", y, [][]float64{x, {1, 2, 3, math.Inf(-1), 5}}, true, "predictor 2 in row 4 is -Inf"},
		{"constant", y, [][]float64{x, {7, 7, 7, 7, 7}}, true, "predictor 2 is constant"},
		{"collinear", y, [][]float64{x, {2, 4, 6, 8, 10}}, true, "collinear"},
		{"nearly collinear", y, [][]float64{x, {1, 2, 3, 4, 5 + 1e-15}}, true, "collinear"},
		{"zero column without intercept", y, [][]float64{{0, 0, 0, 0, 0}}, false, "predictor 1 is constant"},
		{"fits", y, [][]float64{x}, true, ""},
		{"fits without intercept", y, [][]float64{x}, false, ""},
	} {
		_, err := LeastSquares(c.y, c.predictors, c.intercept)
		wantErr(t, c.name, err, c.want)
	}
}
