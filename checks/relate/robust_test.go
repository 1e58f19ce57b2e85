package relate

import (
	"math"
	"slices"
	"testing"
)

// theilSenByDefinition is the textbook Theil-Sen line: sort every slope of
// a pair with distinct x, take the middle (mean of the two middle ones),
// then the median of y - b x the same way.
func theilSenByDefinition(x, y []float64) (a, b float64) {
	var s []float64
	for i := range x {
		for j := range x {
			if x[j] > x[i] {
				s = append(s, (y[j]-y[i])/(x[j]-x[i]))
			}
		}
	}
	med := func(v []float64) float64 {
		slices.Sort(v)
		h := len(v) / 2
		if len(v)%2 == 1 {
			return v[h]
		}
		return (v[h-1] + v[h]) / 2
	}
	b = med(s)
	r := make([]float64, len(x))
	for i := range x {
		r[i] = y[i] - b*x[i]
	}
	return med(r), b
}

// TestTheilSenHand checks small examples computed by hand.
func TestTheilSenHand(t *testing.T) {
	for _, c := range []struct {
		name    string
		x, y    []float64
		a, b    float64
		pairs   int64
		wantErr string
	}{
		// Slopes: 2, 1.5, 2/3, 2, 1, 0, 2, -1, 2.5, 6; sorted the 5th and
		// 6th are 1.5 and 2: b = 1.75. y - 1.75x = 0.25, 0.5, -0.25, -3,
		// 1.25: a = 0.25.
		{name: "five points", x: []float64{1, 2, 3, 4, 5}, y: []float64{2, 4, 5, 4, 10}, a: 0.25, b: 1.75, pairs: 10},
		// The pair at x = 1 has no slope (Sen 1968); the other five are
		// 1, 2, -1, 1, 3: b = 1. y - x = 0, 2, 0, 2: a = 1.
		{name: "tie in x", x: []float64{1, 1, 2, 3}, y: []float64{1, 3, 2, 5}, a: 1, b: 1, pairs: 5},
		// One gross outlier does not move the line through the rest.
		{name: "outlier", x: []float64{0, 1, 2, 3, 4, 5, 6}, y: []float64{1, 3, 5, 7, 9, 11, 1000}, a: 1, b: 2, pairs: 21},
		{name: "constant x", x: []float64{2, 2, 2}, y: []float64{1, 2, 3}, wantErr: "x is constant"},
		{name: "one pair", x: []float64{1}, y: []float64{1}, wantErr: "at least 2 pairs"},
		{name: "NaN", x: []float64{1, 2, math.NaN()}, y: []float64{1, 2, 3}, wantErr: "pair 3 is (NaN, 3)"},
		{name: "lengths", x: []float64{1, 2, 3}, y: []float64{1, 2}, wantErr: "x has 3 values and y has 2"},
	} {
		t.Run(c.name, func(t *testing.T) {
			fit, err := TheilSen(c.x, c.y, TheilSenOptions{})
			wantErr(t, "theil-sen", err, c.wantErr)
			if c.wantErr != "" {
				return
			}
			if fit.Slope != c.b || fit.Intercept != c.a || fit.Pairs != c.pairs || fit.Sampled {
				t.Errorf("got %+v, want a = %v, b = %v over %d pairs, exact", fit, c.a, c.b, c.pairs)
			}
		})
	}
}

// TestTheilSenDefinition compares the exact fit with the definition on
// random data with ties in x and y.
func TestTheilSenDefinition(t *testing.T) {
	rng := newRand(3)
	for trial := 0; trial < 100; trial++ {
		n := 2 + rng.IntN(60)
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(8))
			y[i] = math.Round(2*x[i] + 3*rng.NormFloat64())
		}
		a, b := theilSenByDefinition(x, y)
		fit, err := TheilSen(x, y, TheilSenOptions{})
		if slices.Min(x) == slices.Max(x) {
			wantErr(t, "constant x", err, "x is constant")
			continue
		}
		if err != nil {
			t.Fatal(err)
		}
		if fit.Slope != b || fit.Intercept != a {
			t.Errorf("trial %d (n = %d): a, b = %v, %v; by definition %v, %v", trial, n, fit.Intercept, fit.Slope, a, b)
		}
	}
}

// TestTheilSenSampled checks the sampled fit against the exact slope of
// the same data: the interval covers it, the fit repeats from its seed,
// and the coverage of the 95% interval over many seeds is near 95%.
func TestTheilSenSampled(t *testing.T) {
	rng := newRand(5)
	x, y := linearSample(rng, 2100, 0, 1, 1, 2, 1)
	exact, err := TheilSen(x, y, TheilSenOptions{MaxExactPairs: 1 << 23})
	if err != nil || exact.Sampled {
		t.Fatalf("exact fit: %+v, %v", exact, err)
	}
	fit, err := TheilSen(x, y, TheilSenOptions{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !fit.Sampled || fit.Pairs != DefaultSampledPairs {
		t.Fatalf("n = 2100 (2.2e6 pairs): sampled %v over %d pairs, want sampled over %d", fit.Sampled, fit.Pairs, DefaultSampledPairs)
	}
	if !(fit.SlopeLow <= exact.Slope && exact.Slope <= fit.SlopeHigh) || !(fit.SlopeLow < fit.Slope && fit.Slope < fit.SlopeHigh) {
		t.Errorf("sampled slope %v in [%v, %v]; exact %v", fit.Slope, fit.SlopeLow, fit.SlopeHigh, exact.Slope)
	}
	if w := fit.SlopeHigh - fit.SlopeLow; w > 0.01 {
		t.Errorf("interval width %v with 2^20 pairs, want < 0.01", w)
	}
	again, _ := TheilSen(x, y, TheilSenOptions{Seed: 1})
	other, _ := TheilSen(x, y, TheilSenOptions{Seed: 2})
	if again != fit {
		t.Errorf("same seed: %+v, then %+v", fit, again)
	}
	if other.Slope == fit.Slope {
		t.Errorf("seeds 1 and 2 gave the same slope %v", fit.Slope)
	}

	// Coverage: 400 seeds of 2000 sampled pairs from n = 300 (44850
	// pairs). The binomial standard error of the coverage is 1.1%.
	x, y = linearSample(rng, 300, 0, 1, 0, 1, 1)
	exact, _ = TheilSen(x, y, TheilSenOptions{})
	covered := 0
	const reps = 400
	for seed := uint64(0); seed < reps; seed++ {
		f, err := TheilSen(x, y, TheilSenOptions{MaxExactPairs: 1, Pairs: 2000, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		if f.SlopeLow <= exact.Slope && exact.Slope <= f.SlopeHigh {
			covered++
		}
	}
	if c := float64(covered) / reps; c < 0.92 || c > 0.98 {
		t.Errorf("coverage of the 95%% interval %.3f over %d seeds, want 0.92 .. 0.98", c, reps)
	} else {
		t.Logf("coverage of the 95%% interval: %.3f over %d seeds", c, reps)
	}
}

func TestTheilSenSampledTooFewPairs(t *testing.T) {
	// Of 2000 x values one differs: 1 pair in 1000 has distinct x.
	x, y := make([]float64, 2000), make([]float64, 2000)
	x[0] = 1
	_, err := TheilSen(x, y, TheilSenOptions{MaxExactPairs: 1, Pairs: 1000})
	wantErr(t, "sampled", err, "fewer than 1 in 64 pairs have distinct x")
}

// robustFits fits both robust lines with default options.
func robustFits(t *testing.T, x, y []float64) (TheilSenFit, HuberFit) {
	t.Helper()
	ts, err := TheilSen(x, y, TheilSenOptions{})
	if err != nil {
		t.Fatal(err)
	}
	hu, err := Huber(x, y, HuberOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return ts, hu
}

// contaminated draws y = 1 + 2x + N(0, 1) for x ~ U(0, 10) and adds 50 to
// y of a share of the rows with the largest x: vertical outliers that tilt
// the least-squares line.
func contaminated(seed uint64, n int, share float64) (x, y []float64, bad []bool) {
	rng := newRand(seed)
	x, y, bad = make([]float64, n), make([]float64, n), make([]bool, n)
	for i := range x {
		x[i] = 10 * rng.Float64()
		y[i] = 1 + 2*x[i] + rng.NormFloat64()
	}
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return -cmpFloat(x[a], x[b]) })
	top := order[:n*3/10] // outliers among the 30% largest x
	rng.Shuffle(len(top), func(i, j int) { top[i], top[j] = top[j], top[i] })
	for _, i := range top[:int(share*float64(n))] {
		y[i] += 50
		bad[i] = true
	}
	return x, y, bad
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// TestRobustResistOutliers is a seeded simulation: with 10% gross vertical
// outliers (50 residual sd) among the largest x, least squares tilts by
// more than 1 (by 1.9 at least over these seeds), while Theil-Sen and Huber
// stay within 0.35 of the true slope and 1.5 of the true intercept, over 20
// seeds. The bounds are about 3 times the largest error seen (slope:
// Theil-Sen 0.12, Huber 0.14; intercept: 0.46 and 0.45). Huber
// down-weights every outlier.
func TestRobustResistOutliers(t *testing.T) {
	for seed := uint64(0); seed < 20; seed++ {
		x, y, bad := contaminated(seed, 500, 0.1)
		var m Moments
		m.AddAll(x, y)
		ols, _ := m.Line()
		if math.Abs(ols.Slope-2) < 1 {
			t.Errorf("seed %d: least-squares slope %v, want it tilted by more than 1", seed, ols.Slope)
		}
		ts, hu := robustFits(t, x, y)
		for name, f := range map[string]RobustLine{"theil-sen": ts.RobustLine, "huber": hu.RobustLine} {
			if math.Abs(f.Slope-2) > 0.35 || math.Abs(f.Intercept-1) > 1.5 {
				t.Errorf("seed %d: %s line %v + %v x, want near 1 + 2x", seed, name, f.Intercept, f.Slope)
			}
		}
		if !hu.Converged {
			t.Errorf("seed %d: huber did not converge in %d iterations", seed, hu.Iterations)
		}
		missed := 0
		for i := range x {
			if bad[i] && math.Abs(hu.Standardized(x[i], y[i])) <= 1.345 {
				missed++
			}
		}
		if missed > 0 || hu.Downweighted < 50 {
			t.Errorf("seed %d: huber down-weighted %d rows and missed %d of 50 outliers", seed, hu.Downweighted, missed)
		}
		// The outliers hide from least squares (they inflate s and tilt
		// the line towards themselves) but not from the robust lines: at
		// |standardized residual| > 5 both flag every outlier and no clean
		// row, where the Bonferroni studentized test flags almost none.
		cut := Cutoffs{Studentized: BonferroniCutoff(0.05, ols.N)}
		var olsHits, robustHits [2]int // clean, outlier
		for i := range x {
			k := 0
			if bad[i] {
				k = 1
			}
			if st, _ := cut.Flags(ols.Diagnose(x[i], y[i])); st {
				olsHits[k]++
			}
			if math.Abs(ts.Standardized(x[i], y[i])) > 5 && math.Abs(hu.Standardized(x[i], y[i])) > 5 {
				robustHits[k]++
			}
		}
		if olsHits[1] > 5 || robustHits != [2]int{0, 50} {
			t.Errorf("seed %d: least squares flags %v (clean, outliers), robust lines %v; want at most 5 outliers, and [0 50]", seed, olsHits, robustHits)
		}
	}
}

// TestHuberClean: without outliers Huber's line is close to least squares
// (95% efficiency) and its scale estimates the error sd.
func TestHuberClean(t *testing.T) {
	rng := newRand(9)
	x, y := linearSample(rng, 2000, 5, 2, 1, -3, 0.5)
	var m Moments
	m.AddAll(x, y)
	ols, _ := m.Line()
	hu, err := Huber(x, y, HuberOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(hu.Slope-ols.Slope) > 2*ols.SESlope || math.Abs(hu.Intercept-ols.Intercept) > 2*ols.SEIntercept {
		t.Errorf("huber %v + %v x, least squares %v + %v x", hu.Intercept, hu.Slope, ols.Intercept, ols.Slope)
	}
	if math.Abs(hu.Scale-0.5) > 0.03 {
		t.Errorf("huber scale %v, want about 0.5", hu.Scale)
	}
}

func TestStandardized(t *testing.T) {
	for _, c := range []struct {
		l    RobustLine
		x, y float64
		want float64
	}{
		{RobustLine{Intercept: 1, Slope: 2, Scale: 0.5}, 3, 8, 2},
		{RobustLine{Intercept: 1, Slope: 2, Scale: 0.5}, 3, 6, -2},
		{RobustLine{Intercept: 1, Slope: 2}, 3, 7, 0},
		{RobustLine{Intercept: 1, Slope: 2}, 3, 7.5, math.Inf(1)},
		{RobustLine{Intercept: 1, Slope: 2}, 3, 6.5, math.Inf(-1)},
	} {
		if got := c.l.Standardized(c.x, c.y); got != c.want {
			t.Errorf("%+v at (%v, %v): %v, want %v", c.l, c.x, c.y, got, c.want)
		}
	}
}

func TestHuberErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		x, y []float64
		want string
	}{
		{"two pairs", []float64{1, 2}, []float64{1, 2}, "at least 3 pairs"},
		{"constant x", []float64{1, 1, 1}, []float64{1, 2, 3}, "x is constant"},
		{"infinite", []float64{1, 2, 3}, []float64{1, math.Inf(1), 3}, "pair 2"},
	} {
		_, err := Huber(c.x, c.y, HuberOptions{})
		wantErr(t, c.name, err, c.want)
	}
	for _, c := range []struct {
		name            string
		x, y            []float64
		converged       bool
		a, b, scale     float64
		iterations, tol float64
	}{
		// Least squares fits every point: the MAD scale is 0 at once.
		{"exact line", []float64{0, 1, 2, 3, 4}, []float64{0, 2, 4, 6, 8}, true, 0, 2, 0, 0, 0},
		// A gross outlier at the end: the iteration goes to the line
		// through the other six, with a scale that vanishes (rlm:
		// 6.8e-11 after 67 steps at acc = 1e-12).
		{"outlier", []float64{1, 2, 3, 4, 5, 6, 7}, []float64{2, 4, 6, 8, 10, 12, -50}, true, 0, 2, 0, -1, 1e-8},
		// The outlier at the largest of five x has the leverage to hold
		// the line: like MASS::rlm (which stops at -23.99 + 14.00 x after
		// 1000 steps), the iteration does not settle.
		{"leverage", []float64{1, 2, 3, 4, 5}, []float64{2, 4, 6, 8, 100}, false, math.NaN(), math.NaN(), math.NaN(), 100, 0},
	} {
		h, err := Huber(c.x, c.y, HuberOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if h.Converged != c.converged || (c.iterations >= 0 && float64(h.Iterations) != c.iterations) {
			t.Errorf("%s: converged %v after %d iterations, want %v after %v", c.name, h.Converged, h.Iterations, c.converged, c.iterations)
		}
		if c.converged && (math.Abs(h.Intercept-c.a) > c.tol || math.Abs(h.Slope-c.b) > c.tol || math.Abs(h.Scale-c.scale) > c.tol) {
			t.Errorf("%s: %v + %v x with scale %v, want %v + %v x, scale %v", c.name, h.Intercept, h.Slope, h.Scale, c.a, c.b, c.scale)
		}
	}
}
