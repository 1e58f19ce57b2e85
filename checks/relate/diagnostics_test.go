package relate

import (
	"fmt"
	"math"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestGoldenCutoffs compares the cutoffs with R's qt and qf
// (testdata/golden/cutoffs.csv, made by golden.R), except qf at
// n = 10⁶: R's qf replaces F(df1, df2) by χ²(df1)/df1 above df2 = 4e5 and
// returns ln 2, while the exact median (ν/2)(2^(2/ν) - 1) is ln 2 +
// (ln 2)²/ν + ... = 0.69314766. There, and at every n, gonum's F CDF at
// the cutoff must be 1/2 (to 1e-9: gonum's incomplete beta is 2.6e-10 off
// at ν = 10⁶).
func TestGoldenCutoffs(t *testing.T) {
	_, rows := readTable(t, "golden/cutoffs.csv")
	bon := &worst{name: "qt bonferroni", tol: 1e-9, relative: true}
	f50 := &worst{name: "qf(0.5, 2, n-2)", tol: 1e-9, relative: true}
	for _, r := range rows {
		n, err := strconv.ParseInt(r[0], 10, 64)
		if err != nil {
			t.Fatal(err)
		}
		alpha := parseFloat(t, r[1])
		what := "n = " + r[0] + " alpha = " + r[1]
		bon.check(t, what, BonferroniCutoff(alpha, n), parseFloat(t, r[2]))
		c := CooksCutoff(n)
		if n < 400000 {
			f50.check(t, what, c, parseFloat(t, r[3]))
		}
		if p := (distuv.F{D1: 2, D2: float64(n - 2)}).CDF(c); math.Abs(p-0.5) > 1e-9 {
			t.Errorf("n = %d: F(2, n-2) CDF at the Cook cutoff %v is %v, want 0.5", n, c, p)
		}
	}
	bon.log(t)
	f50.log(t)
	for _, c := range []struct {
		alpha float64
		n     int64
	}{{0.05, 3}, {0, 10}, {1, 10}, {math.NaN(), 10}} {
		if v := BonferroniCutoff(c.alpha, c.n); !math.IsNaN(v) {
			t.Errorf("BonferroniCutoff(%v, %d) = %v, want NaN", c.alpha, c.n, v)
		}
	}
	if v := CooksCutoff(2); !math.IsNaN(v) {
		t.Errorf("CooksCutoff(2) = %v, want NaN", v)
	}
}

func TestCutoffsFlags(t *testing.T) {
	pt := Point{Studentized: -4, Cooks: 0.5}
	nan := Point{Studentized: math.NaN(), Cooks: math.NaN()}
	for _, c := range []struct {
		cut    Cutoffs
		pt     Point
		st, ck bool
	}{
		{Cutoffs{Studentized: 3, Cooks: 0.4}, pt, true, true},
		{Cutoffs{Studentized: 4, Cooks: 0.5}, pt, false, false}, // a value at the cutoff is not beyond it
		{Cutoffs{Studentized: 3.99, Cooks: 0.49}, pt, true, true},
		{Cutoffs{}, pt, false, false}, // zero turns a rule off
		{Cutoffs{Studentized: 3}, pt, true, false},
		{Cutoffs{Studentized: 1e-9, Cooks: 1e-9}, nan, false, false},
	} {
		if st, ck := c.cut.Flags(c.pt); st != c.st || ck != c.ck {
			t.Errorf("%+v flags %+v: %v %v, want %v %v", c.cut, c.pt, st, ck, c.st, c.ck)
		}
	}
}

// TestDiagnoseSmall: with three rows the studentized residual has no
// degrees of freedom (NaN) while leverage and Cook's distance exist; a
// perfect fit has no Cook's distance.
func TestDiagnoseSmall(t *testing.T) {
	var m Moments
	m.AddAll([]float64{0, 1, 2}, []float64{0, 2, 1})
	l, err := m.Line()
	if err != nil {
		t.Fatal(err)
	}
	// x̄ = 1, Sxx = 2, slope 0.5, ȳ = 1: e = -0.5, 1, -0.5; h = 5/6, 1/3,
	// 5/6; s² = 1.5; D = e² h / (2 s² (1-h)²) = 2.5, 1/6·... by hand below.
	for i, want := range []Point{
		{Residual: -0.5, Leverage: 5.0 / 6, Cooks: 0.25 * (5.0 / 6) / (3 * (1.0 / 36))},
		{Residual: 1, Leverage: 1.0 / 3, Cooks: (1.0 / 3) / (3 * (4.0 / 9))},
		{Residual: -0.5, Leverage: 5.0 / 6, Cooks: 0.25 * (5.0 / 6) / (3 * (1.0 / 36))},
	} {
		got := l.Diagnose(float64(i), []float64{0, 2, 1}[i])
		if math.Abs(got.Residual-want.Residual) > 1e-15 || math.Abs(got.Leverage-want.Leverage) > 1e-15 ||
			math.Abs(got.Cooks-want.Cooks) > 1e-14 || !math.IsNaN(got.Studentized) {
			t.Errorf("row %d: %+v, want %+v with NaN t", i+1, got, want)
		}
	}
	var exact Moments
	exact.AddAll([]float64{1, 2, 3, 4}, []float64{3, 5, 7, 9})
	le, _ := exact.Line()
	if p := le.Diagnose(2, 5); p.Residual != 0 || !math.IsNaN(p.Cooks) {
		t.Errorf("perfect fit: %+v, want residual 0 and NaN D", p)
	}
}

// TestBonferroniSize is a seeded simulation of the outlier test: in clean
// normal data of n = 1000 rows, the share of samples with any row beyond
// BonferroniCutoff(0.05, n) is at most 5% (Bonferroni is conservative; it
// is close to 1 - e^-0.05 = 4.9% here). 300 samples: binomial sd 1.3%.
func TestBonferroniSize(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation")
	}
	rng := newRand(29)
	const reps, n = 300, 1000
	cut := Cutoffs{Studentized: BonferroniCutoff(0.05, n)}
	hits := 0
	for rep := 0; rep < reps; rep++ {
		x, y := linearSample(rng, n, 0, 1, 2, 3, 1)
		var m Moments
		m.AddAll(x, y)
		l, _ := m.Line()
		for i := range x {
			if st, _ := cut.Flags(l.Diagnose(x[i], y[i])); st {
				hits++
				break
			}
		}
	}
	if share := float64(hits) / reps; share > 0.085 || share < 0.01 {
		t.Errorf("%d of %d clean samples had a row flagged at 5%%", hits, reps)
	} else {
		t.Logf("%d of %d clean samples had a row flagged at 5%%", hits, reps)
	}
}

// TestResidualScores: AbsStudentized and CooksDistance of a row's
// Residual are, bit for bit, |t| and D of Diagnose, NaN where those are.
func TestResidualScores(t *testing.T) {
	rng := newRand(41)
	for _, n := range []int{3, 4, 7, 500} {
		x, y := linearSample(rng, n, 20, 4, 1, -0.5, 2)
		var m Moments
		m.AddAll(x, y)
		l, err := m.Line()
		if err != nil {
			t.Fatal(err)
		}
		x, y = append(x, l.MeanX, 1e6, 20), append(y, l.MeanY, 3, 1e6)
		for i := range x {
			want := l.Diagnose(x[i], y[i])
			dx, e := l.Residual(x[i], y[i])
			if e != want.Residual {
				t.Errorf("n %d row %d: residual %v, Diagnose %v", n, i, e, want.Residual)
			}
			st, ck := l.AbsStudentized(dx, e), l.CooksDistance(dx, e)
			if math.Float64bits(st) != math.Float64bits(math.Abs(want.Studentized)) && !(math.IsNaN(st) && math.IsNaN(want.Studentized)) ||
				math.Float64bits(ck) != math.Float64bits(want.Cooks) && !(math.IsNaN(ck) && math.IsNaN(want.Cooks)) {
				t.Errorf("n %d row %d: |t| %v, D %v; Diagnose %+v", n, i, st, ck, want)
			}
		}
	}
}

// TestCalmResidual: the bound e0 of CalmStudentized and CalmCooks is
// tight, so that the test fails if it is one ulp too wide: a row at
// |dx| = dxMax with |e| = e0 scores at most the cutoff and one with the
// next float64 above e0 scores above it. Rows inside the region, at its
// edges and corners and within, are never above the cutoff, and where no
// row qualifies e0 is -1.
func TestCalmResidual(t *testing.T) {
	rng := newRand(43)
	line := func(x, y []float64) Line {
		t.Helper()
		var m Moments
		m.AddAll(x, y)
		l, err := m.Line()
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	nx, ny := linearSample(rng, 1000, 50, 10, 3, 2, 5)
	sx, sy := linearSample(rng, 5, 0, 1, 0, 1, 0.1)
	fx, fy := linearSample(rng, 4, 0, 1, 0, 1, 1)
	lines := map[string]Line{
		"normal 1000": line(nx, ny),
		"5 rows":      line(sx, sy),
		"4 rows":      line(fx, fy),
		"3 rows":      line([]float64{0, 1, 2}, []float64{0, 2, 1}),
		"perfect fit": line([]float64{1, 2, 3, 4}, []float64{3, 5, 7, 9}),
		"one x apart": line([]float64{0, 0, 0, 0, 0, 0, 1}, []float64{1, 2, 1, 2, 1, 2, 5}),
	}
	type scorer struct {
		name  string
		score func(l *Line, dx, e float64) float64
		calm  func(l *Line, dxMax, cutoff float64) float64
	}
	scorers := []scorer{
		{"studentized", (*Line).AbsStudentized, (*Line).CalmStudentized},
		{"cooks", (*Line).CooksDistance, (*Line).CalmCooks},
	}
	for name, l := range lines {
		sd := math.Sqrt(l.Sxx / float64(l.N))
		for _, s := range scorers {
			for _, dxMax := range []float64{0, sd, 8 * sd, math.Sqrt(l.Sxx)} {
				for _, cutoff := range []float64{BonferroniCutoff(0.05, max(l.N, 4)), CooksCutoff(l.N), 3, 0.01, 0, math.Inf(1), math.NaN()} {
					what := fmt.Sprintf("%s, %s, dxMax %v, cutoff %v", name, s.name, dxMax, cutoff)
					e0 := s.calm(&l, dxMax, cutoff)
					if e0 < 0 {
						if e0 != -1 || s.score(&l, dxMax, 0) <= cutoff {
							t.Errorf("%s: e0 %v, but a row at e = 0 scores %v", what, e0, s.score(&l, dxMax, 0))
						}
						continue
					}
					if v := s.score(&l, dxMax, e0); !(v <= cutoff) {
						t.Errorf("%s: a row at e0 = %v scores %v", what, e0, v)
					}
					if wider := math.Nextafter(e0, math.Inf(1)); !math.IsInf(e0, 1) && !(s.score(&l, dxMax, wider) > cutoff) {
						t.Errorf("%s: e0 = %v is not the largest: %v scores %v", what, e0, wider, s.score(&l, dxMax, wider))
					}
					dxs := []float64{0, dxMax, math.Nextafter(dxMax, 0), dxMax / 3, 1e-300}
					es := []float64{0, e0, math.Nextafter(e0, 0), e0 / 2, 5e-324}
					for range 20 {
						dxs, es = append(dxs, dxMax*rng.Float64()), append(es, e0*rng.Float64())
					}
					for _, dx := range dxs {
						for _, e := range es {
							if math.IsInf(e, 0) || math.IsNaN(e) {
								e = math.MaxFloat64
							}
							if dx > dxMax || e > e0 {
								continue // a probe beyond the region
							}
							for _, v := range []float64{s.score(&l, dx, e), s.score(&l, -dx, e), s.score(&l, dx, -e), s.score(&l, -dx, -e)} {
								if v > cutoff {
									t.Errorf("%s: the row at dx %v, e %v in the calm region scores %v", what, dx, e, v)
								}
							}
						}
					}
				}
			}
		}
	}
}
