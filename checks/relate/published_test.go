package relate

import (
	"fmt"
	"math"
	"testing"
)

// TestAnscombe uses Anscombe's quartet (Anscombe 1973, The American
// Statistician 27(1):17-21; testdata/anscombe_1973_quartet.csv). Published
// for every set (the NIST e-Handbook file's header): n = 11, mean of x 9.0,
// mean of y 7.5, fitted line y = 3.0 + 0.5 x; compared to half a unit of
// the last printed digit. Σ(x - x̄)² = 110 exactly in every set. Then what
// the quartet was made to show: set 3 lies on a line (to the 0.01 its y
// are rounded to) but for its third row (13, 12.74), which the diagnostics
// flag and the robust lines ignore: they stay within 0.002 in slope and
// 0.02 in intercept of the least-squares line of the other ten rows
// (4.006 + 0.3454 x), where all eleven give 3.0 + 0.5 x. Set 4's eighth row
// is the only x off 8, has leverage 1 and undefined t and D (R gives NaN).
func TestAnscombe(t *testing.T) {
	cols := readColumns(t, "anscombe_1973_quartet.csv")
	for k := 1; k <= 4; k++ {
		x, y := cols[fmt.Sprintf("x%d", k)], cols[fmt.Sprintf("y%d", k)]
		var m Moments
		m.AddAll(x, y)
		l, err := m.Line()
		if err != nil {
			t.Fatal(err)
		}
		if l.N != 11 || math.Abs(l.MeanX-9.0) > 0.05 || math.Abs(l.MeanY-7.5) > 0.05 ||
			math.Abs(l.Intercept-3.0) > 0.05 || math.Abs(l.Slope-0.5) > 0.05 || math.Abs(l.Sxx-110) > 1e-12 {
			t.Errorf("set %d: n = %d, means %v %v, line %v + %v x, Sxx %v", k, l.N, l.MeanX, l.MeanY, l.Intercept, l.Slope, l.Sxx)
		}
		switch k {
		case 3:
			cut := Cutoffs{Studentized: BonferroniCutoff(0.05, l.N), Cooks: 1}
			for i := range x {
				pt := l.Diagnose(x[i], y[i])
				st, ck := cut.Flags(pt)
				if (i == 2) != st || (i == 2) != ck {
					t.Errorf("set 3 row %d: t = %v, D = %v, flagged %v %v; want only row 3 flagged", i+1, pt.Studentized, pt.Cooks, st, ck)
				}
			}
			rest, err := LeastSquares(append(y[:2:2], y[3:]...), [][]float64{append(x[:2:2], x[3:]...)}, true)
			if err != nil {
				t.Fatal(err)
			}
			ts, hu := robustFits(t, x, y)
			for name, f := range map[string]RobustLine{"theil-sen": ts.RobustLine, "huber": hu.RobustLine} {
				if math.Abs(f.Intercept-rest.Coef[0]) > 0.02 || math.Abs(f.Slope-rest.Coef[1]) > 0.002 {
					t.Errorf("set 3: %s line %.6g + %.6g x, want near %.6g + %.6g x", name, f.Intercept, f.Slope, rest.Coef[0], rest.Coef[1])
				}
			}
		case 4:
			pt := l.Diagnose(x[7], y[7])
			if pt.Leverage != 1 || !math.IsNaN(pt.Studentized) || !math.IsNaN(pt.Cooks) {
				t.Errorf("set 4 row 8: %+v, want leverage 1 and NaN t and D", pt)
			}
			if st, ck := (Cutoffs{Studentized: 3, Cooks: 1}).Flags(pt); st || ck {
				t.Errorf("set 4 row 8: NaN diagnostics flagged")
			}
		}
	}
}

// TestTuna uses the tuna quality data of Hollander & Wolfe (1973,
// Nonparametric Statistical Methods, p. 187f) that R's cor.test help
// analyses, with the one-sided ("greater") p-values it prints: Kendall
// exact p = 0.05972 (help page), and r(7) = .57, p = .054; tau = .44,
// p = .060; rho = .60, p = .048 (as printed in the apa package's tests of
// the same data). The two-sided p-value is twice the one-sided one here.
// Compared to half a unit of the last printed digit.
func TestTuna(t *testing.T) {
	x := []float64{44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1}
	y := []float64{2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8}
	var m Moments
	m.AddAll(x, y)
	pe, err := m.PearsonTest()
	if err != nil {
		t.Fatal(err)
	}
	sp, err := SpearmanTest(x, y)
	if err != nil {
		t.Fatal(err)
	}
	ke, err := KendallTest(x, y)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		got                Correlation
		estimate, tolE     float64
		greater, tolP      float64
		statistic, tolStat float64
		method             PMethod
	}{
		{pe, 0.57, 0.005, 0.054, 0.0005, math.NaN(), 0, StudentT},
		{sp, 0.60, 0.005, 0.048, 0.0005, 48, 0, Exact},
		{ke, 0.44, 0.005, 0.05972, 0.000005, 26, 0, Exact},
		{ke, 0.44, 0.005, 0.060, 0.0005, 26, 0, Exact},
	} {
		g := c.got
		if math.Abs(g.Estimate-c.estimate) > c.tolE || math.Abs(g.PValue/2-c.greater) > c.tolP || g.PMethod != c.method {
			t.Errorf("%v: estimate %v, one-sided p %v (%v); published %v, %v (%v)", g.Method, g.Estimate, g.PValue/2, g.PMethod, c.estimate, c.greater, c.method)
		}
		if !math.IsNaN(c.statistic) && math.Abs(g.Statistic.Value-c.statistic) > c.tolStat {
			t.Errorf("%v: %s = %v, want %v", g.Method, g.Statistic.Name, g.Statistic.Value, c.statistic)
		}
	}
}

// TestAgresti uses the party identification by gender table of Agresti
// (2007, An Introduction to Categorical Data Analysis, 2nd ed., p. 39),
// R's chisq.test example: X² = 30.07 on 2 df (R's printed output; the
// golden test has all digits), V = sqrt(X²/2757) = 0.1044.
func TestAgresti(t *testing.T) {
	var tb Table
	for _, c := range []struct {
		a, b string
		n    int64
	}{{"F", "D", 762}, {"F", "I", 327}, {"F", "R", 468}, {"M", "D", 484}, {"M", "I", 239}, {"M", "R", 477}} {
		tb.AddCount(c.a, c.b, c.n)
	}
	as, err := tb.Independence()
	if err != nil {
		t.Fatal(err)
	}
	if as.N != 2757 || as.DF != 2 || math.Abs(as.ChiSquare-30.07) > 0.005 || math.Abs(as.V-0.1044) > 0.00005 || as.PValue > 1e-6 {
		t.Errorf("got %+v; want n 2757, X² 30.07 on 2 df, p < 1e-6, V 0.1044", as)
	}
	if math.Abs(as.MinExpected-246.3547) > 0.00005 {
		t.Errorf("smallest expected count %v, want 246.3547 (M, I)", as.MinExpected)
	}
}
