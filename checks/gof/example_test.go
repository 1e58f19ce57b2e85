package gof_test

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/assay-project/assay/checks/gof"
)

// The weights of 11 men from Shapiro & Wilk (1965), tested for normality
// three ways.
func ExampleNormal() {
	s, _ := gof.Sort([]float64{148, 154, 158, 160, 161, 162, 166, 170, 182, 195, 236})
	sw, _ := gof.ShapiroWilk(s)
	ad, _ := gof.Normal(gof.AD, s, gof.Resampling{})
	ks, _ := gof.Normal(gof.KS, s, gof.Resampling{})
	for _, r := range []gof.Result{sw, ad, ks} {
		fmt.Printf("%-18s %s = %.4f  p = %.4f (%v)  D = %.3f\n", r.Test, r.Statistic.Name, r.Statistic.Value, r.PValue, r.Method.Kind, r.Effect.Value)
	}
	// Output:
	// shapiro-wilk       W = 0.7888  p = 0.0067 (approximation)  D = 0.259
	// anderson-darling   A2 = 0.9468  p = 0.0105 (approximation)  D = 0.259
	// kolmogorov-smirnov D = 0.2592  p = 0.0374 (approximation)  D = 0.259
}

// A fully specified reference: gonum's distributions satisfy gof.CDF.
func ExampleSpecified() {
	x := []float64{0.61, 0.29, 0.06, 0.59, -1.73, -0.74, 0.51, -0.56, 0.39, 1.64, 0.05, -0.06, 0.64, -0.82, 0.37, 1.77, 1.09, -1.28, 2.36, 1.31, 1.05, -0.32, -0.4, 1.06, -2.47}
	s, _ := gof.Sort(x)
	r, _ := gof.Specified(gof.KS, s, distuv.Normal{Mu: 0, Sigma: 1})
	fmt.Printf("D = %.4f, p = %.4f, %v (%s)\n", r.Statistic.Value, r.PValue, r.Method.Kind, r.Method.Source)
	// Output:
	// D = 0.1741, p = 0.3897, exact (Marsaglia, Tsang & Wang (2003))
}

// Values recorded to 0.01: the test at the recording resolution compares
// the sample with the reference at cell boundaries only.
func ExampleKSAtResolution() {
	ref := distuv.Normal{Mu: 20, Sigma: 0.25}
	x := make([]float64, 200000)
	for i := range x {
		// Rounded quantiles of the reference: a perfectly normal column
		// logged to two decimals.
		x[i] = math.Round(ref.Quantile((float64(i)+0.5)/float64(len(x)))*100) / 100
	}
	s, _ := gof.Sort(x)
	res, _ := gof.DetectResolution(s)
	naive, _ := gof.Specified(gof.KS, s, ref)
	grid, _ := gof.KSAtResolution(s, ref, res)
	fmt.Printf("step %v: continuous D = %.4f p = %.1g; at the resolution D = %.6f p = %.0f\n",
		res.Step, naive.Statistic.Value, naive.PValue, grid.Statistic.Value, grid.PValue)
	// Output:
	// step 0.01: continuous D = 0.0080 p = 2e-11; at the resolution D = 0.000002 p = 1
}

// Counts against a Poisson with the mean estimated: cells are pooled until
// each expects at least 5.
func ExampleChiSquare() {
	// von Bortkiewicz (1898): deaths by horse kick per corps-year.
	var x []float64
	for deaths, years := range []int{109, 65, 22, 3, 1} {
		for range years {
			x = append(x, float64(deaths))
		}
	}
	s, _ := gof.Sort(x)
	obs, probs, _, _ := gof.IntegerCells(s, distuv.Poisson{Lambda: 0.61})
	r, _ := gof.ChiSquare(obs, probs, gof.ChiSquareOptions{Estimated: 1})
	for _, c := range r.Cells {
		fmt.Printf("deaths %d-%d: observed %d, expected %.1f\n", c.First, c.Last, c.Observed, c.Expected)
	}
	fmt.Printf("X2 = %.4f, df = %d, p = %.4f\n", r.Statistic.Value, r.DF, r.PValue)
	// Output:
	// deaths 0-0: observed 109, expected 108.7
	// deaths 1-1: observed 65, expected 66.3
	// deaths 2-4: observed 26, expected 25.0
	// X2 = 0.0628, df = 1, p = 0.8021
}
