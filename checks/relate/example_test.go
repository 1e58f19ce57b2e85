package relate_test

import (
	"fmt"

	"github.com/assay-project/assay/checks/relate"
)

// Anscombe's (1973) third data set: ten points on a line and one far off.
var ax = []float64{10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5}
var ay = []float64{7.46, 6.77, 12.74, 7.11, 7.81, 8.84, 6.08, 5.39, 8.15, 6.42, 5.73}

// Two shards summarised apart and merged; the line is fitted from the
// merged moments, then a second pass diagnoses every row.
func ExampleLine_Diagnose() {
	var a, b relate.Moments
	a.AddAll(ax[:5], ay[:5])
	b.AddAll(ax[5:], ay[5:])
	a.Merge(b)
	line, _ := a.Line()
	fmt.Printf("y = %.2f + %.3f x, R² = %.3f, s = %.3f\n", line.Intercept, line.Slope, line.RSquared, line.ResidualSD)

	cut := relate.Cutoffs{Studentized: relate.BonferroniCutoff(0.05, line.N), Cooks: 1}
	for i := range ax {
		p := line.Diagnose(ax[i], ay[i])
		if st, ck := cut.Flags(p); st || ck {
			fmt.Printf("row %d: residual %.2f, leverage %.3f, t = %.1f, D = %.2f\n", i+1, p.Residual, p.Leverage, p.Studentized, p.Cooks)
		}
	}
	// Output:
	// y = 3.00 + 0.500 x, R² = 0.666, s = 1.236
	// row 3: residual 3.24, leverage 0.236, t = 1203.5, D = 1.39
}

// The robust lines follow the ten points and ignore the eleventh.
func ExampleTheilSen() {
	ts, _ := relate.TheilSen(ax, ay, relate.TheilSenOptions{})
	hu, _ := relate.Huber(ax, ay, relate.HuberOptions{})
	fmt.Printf("theil-sen y = %.3f + %.4f x over %d slopes\n", ts.Intercept, ts.Slope, ts.Pairs)
	fmt.Printf("huber     y = %.3f + %.4f x, %d row down-weighted\n", hu.Intercept, hu.Slope, hu.Downweighted)
	// Output:
	// theil-sen y = 4.004 + 0.3456 x over 55 slopes
	// huber     y = 4.003 + 0.3457 x, 1 row down-weighted
}

// The tuna quality data of Hollander & Wolfe (1973, p. 187f).
func ExampleKendallTest() {
	x := []float64{44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1}
	y := []float64{2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8}
	k, _ := relate.KendallTest(x, y)
	s, _ := relate.SpearmanTest(x, y)
	for _, c := range []relate.Correlation{k, s} {
		fmt.Printf("%s %.4f: %s = %g, p = %.4f (%v)\n", c.Method, c.Estimate, c.Statistic.Name, c.Statistic.Value, c.PValue, c.PMethod)
	}
	// Output:
	// kendall 0.4444: T = 26, p = 0.1194 (exact)
	// spearman 0.6000: S = 48, p = 0.0968 (exact)
}

// Party identification by gender, Agresti (2007, p. 39).
func ExampleTable_Independence() {
	var t relate.Table
	t.AddCount("female", "democrat", 762)
	t.AddCount("female", "independent", 327)
	t.AddCount("female", "republican", 468)
	t.AddCount("male", "democrat", 484)
	t.AddCount("male", "independent", 239)
	t.AddCount("male", "republican", 477)
	a, _ := t.Independence()
	fmt.Printf("X² = %.2f on %d df, p = %.2g, V = %.4f (corrected %.4f)\n", a.ChiSquare, a.DF, a.PValue, a.V, a.VCorrected)
	// Output:
	// X² = 30.07 on 2 df, p = 3e-07, V = 0.1044 (corrected 0.1009)
}

// Does a product code determine its unit? Two codes break the rule.
func ExampleDependency() {
	var d relate.Dependency
	for _, r := range [][2]string{
		{"A1", "kg"}, {"A1", "kg"}, {"B2", "l"}, {"B2", "ml"}, {"C3", "m"}, {"D4", "kg"}, {"D4", "g"}, {"D4", "kg"},
	} {
		d.Add(r[0], r[1])
	}
	res := d.Result()
	fmt.Printf("%d of %d rows (%.1f%%) in groups with several units\n", res.ViolatingRows, res.Rows, 100*res.Share)
	for _, v := range res.Violations {
		fmt.Println(v.A, v.Values)
	}
	// Output:
	// 5 of 8 rows (62.5%) in groups with several units
	// D4 [{kg 2} {g 1}]
	// B2 [{l 1} {ml 1}]
}
