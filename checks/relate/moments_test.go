package relate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func newRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 1)) }

// linearSample draws n pairs y = a + b x + noise with x ~ N(mx, sx).
func linearSample(rng *rand.Rand, n int, mx, sx, a, b, noise float64) (x, y []float64) {
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = mx + sx*rng.NormFloat64()
		y[i] = a + b*x[i] + noise*rng.NormFloat64()
	}
	return x, y
}

func closeRel(a, b, tol float64) bool {
	return a == b || math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b))
}

// TestMomentsMergeShards checks that summarising shards and merging them
// gives the moments of the whole, for random shard boundaries, pair by pair
// (Welford) and batch by batch (two-pass), in any merge order.
func TestMomentsMergeShards(t *testing.T) {
	rng := newRand(7)
	for _, c := range []struct {
		name         string
		n            int
		mx, sx, b, e float64
		tol          float64
	}{
		{"centred", 1000, 0, 1, 2, 0.5, 1e-12},
		// Condition |x̄|/sd = 1e8: each deviation x - x̄ carries a rounding
		// of about eps·|x| = 1e-10 on a spread of 1e-2, so summaries of
		// the same pairs in another grouping agree to about 1e-8.
		{"large mean small spread", 5000, 1e6, 1e-2, -3, 1e-3, 1e-8},
		{"negative", 777, -50, 20, -0.5, 10, 1e-12},
	} {
		t.Run(c.name, func(t *testing.T) {
			x, y := linearSample(rng, c.n, c.mx, c.sx, 1, c.b, c.e)
			var whole Moments
			whole.AddAll(x, y)
			for trial := 0; trial < 20; trial++ {
				cuts := []int{0}
				for k := 1 + rng.IntN(8); k > 0; k-- {
					cuts = append(cuts, rng.IntN(c.n+1))
				}
				cuts = append(cuts, c.n)
				sortInts(cuts)
				var shards []Moments
				for i := 0; i+1 < len(cuts); i++ {
					var m Moments
					if trial%2 == 0 {
						for j := cuts[i]; j < cuts[i+1]; j++ {
							m.Add(x[j], y[j])
						}
					} else {
						m.AddAll(x[cuts[i]:cuts[i+1]], y[cuts[i]:cuts[i+1]])
					}
					shards = append(shards, m)
				}
				var merged Moments
				for _, k := range rng.Perm(len(shards)) {
					merged.Merge(shards[k])
				}
				if merged.N != whole.N {
					t.Fatalf("merged n = %d, want %d", merged.N, whole.N)
				}
				for _, q := range []struct {
					name      string
					got, want float64
				}{
					{"mean x", merged.MeanX, whole.MeanX},
					{"mean y", merged.MeanY, whole.MeanY},
					{"M2x", merged.M2X, whole.M2X},
					{"M2y", merged.M2Y, whole.M2Y},
					{"Cxy", merged.CXY, whole.CXY},
				} {
					if !closeRel(q.got, q.want, c.tol) {
						t.Errorf("trial %d (%d shards): %s = %.17g, whole %.17g", trial, len(shards), q.name, q.got, q.want)
					}
				}
			}
		})
	}
}

func sortInts(a []int) {
	for i := 1; i < len(a); i++ {
		for j := i; j > 0 && a[j] < a[j-1]; j-- {
			a[j], a[j-1] = a[j-1], a[j]
		}
	}
}

// TestMomentsNorris checks the streaming line on the NIST StRD Norris
// problem: every certified quantity to an LRE of 10, pair by pair or in
// merged batches (measured: 10.1 pair by pair, 10.2 in two merged batches,
// 11.4 in one batch; SSE = Syy - b Sxy cancels the 5 leading digits of Syy
// at R² = 0.999994, and s, the standard errors and SSE inherit that; the
// coefficients reach 12.8, R² 15).
func TestMomentsNorris(t *testing.T) {
	cols := readColumns(t, "nist_strd_norris.csv")
	cert := certified(t, "Norris")
	x, y := cols["x"], cols["y"]
	var welford, batch Moments
	for i := range x {
		welford.Add(x[i], y[i])
	}
	batch.AddAll(x[:10], y[:10])
	batch.AddAll(x[10:], y[10:])
	for _, c := range []struct {
		name  string
		m     Moments
		least float64
	}{{"welford", welford, 10}, {"two-pass batches", batch, 10}} {
		l, err := c.m.Line()
		if err != nil {
			t.Fatal(err)
		}
		for q, v := range map[string]float64{
			"B0_estimate": l.Intercept, "B1_estimate": l.Slope,
			"B0_std_error": l.SEIntercept, "B1_std_error": l.SESlope,
			"residual_sd": l.ResidualSD, "r_squared": l.RSquared, "ss_residual": l.SSE,
		} {
			if got := lre(v, cert[q]); got < c.least {
				t.Errorf("%s %s = %.15g, certified %.15g: LRE %.1f, want >= %.0f", c.name, q, v, cert[q], got, c.least)
			}
		}
	}
}

// TestLineInvariants checks relations that hold for any data: r² = R²,
// the t of the slope squared is the F of the regression, residuals sum to
// zero and are uncorrelated with x, leverages sum to p = 2.
func TestLineInvariants(t *testing.T) {
	rng := newRand(11)
	for trial := 0; trial < 50; trial++ {
		n := 3 + rng.IntN(200)
		x, y := linearSample(rng, n, rng.NormFloat64()*100, math.Exp(rng.NormFloat64()), rng.NormFloat64(), rng.NormFloat64()*5, math.Exp(rng.NormFloat64()))
		var m Moments
		m.AddAll(x, y)
		l, err := m.Line()
		if err != nil {
			t.Fatal(err)
		}
		r := m.Correlation()
		if r < -1 || r > 1 || !closeRel(r*r, l.RSquared, 1e-12) {
			t.Errorf("trial %d: r = %v, R² = %v", trial, r, l.RSquared)
		}
		var sumE, sumEX, sumH, sse float64
		for i := range x {
			p := l.Diagnose(x[i], y[i])
			sumE += p.Residual
			sumEX += p.Residual * (x[i] - l.MeanX)
			sumH += p.Leverage
			sse += p.Residual * p.Residual
		}
		scale := math.Sqrt(l.Syy) + 1
		if math.Abs(sumE) > 1e-9*scale*float64(n) || math.Abs(sumEX) > 1e-9*scale*math.Sqrt(l.Sxx)*float64(n) {
			t.Errorf("trial %d: Σe = %g, Σe(x - x̄) = %g, want 0", trial, sumE, sumEX)
		}
		if math.Abs(sumH-2) > 1e-9 {
			t.Errorf("trial %d: Σh = %v, want 2", trial, sumH)
		}
		if !closeRel(sse, l.SSE, 1e-8) && math.Abs(sse-l.SSE) > 1e-12*l.Syy {
			t.Errorf("trial %d: Σe² = %v, SSE = %v", trial, sse, l.SSE)
		}
	}
}

func TestMomentsErrors(t *testing.T) {
	var two, constX, nan, empty Moments
	two.AddAll([]float64{1, 2}, []float64{3, 4})
	constX.AddAll([]float64{5, 5, 5, 5}, []float64{1, 2, 3, 4})
	nan.AddAll([]float64{1, 2, math.NaN(), 4}, []float64{1, 2, 3, 4})
	constY := Moments{}
	constY.AddAll([]float64{1, 2, 3, 4}, []float64{7, 7, 7, 7})
	for _, c := range []struct {
		name    string
		m       Moments
		line    string // "" when Line succeeds
		pearson string
	}{
		{"empty", empty, "at least 3 pairs, got 0", "at least 3 pairs, got 0"},
		{"two pairs", two, "at least 3 pairs, got 2", "at least 3 pairs, got 2"},
		{"constant x", constX, "x is constant", "a variable is constant"},
		{"constant y", constY, "", "a variable is constant"},
		{"NaN", nan, "not finite", "not finite"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := c.m.Line()
			wantErr(t, "line", err, c.line)
			_, err = c.m.PearsonTest()
			wantErr(t, "pearson", err, c.pearson)
		})
	}
	if l, _ := constY.Line(); l.Slope != 0 || l.RSquared != 1 || l.SSE != 0 {
		t.Errorf("constant y: %+v, want slope 0, R² 1, SSE 0", l)
	}
	if r := constY.Correlation(); !math.IsNaN(r) {
		t.Errorf("constant y: r = %v, want NaN", r)
	}
}

// wantErr fails unless err contains want, or is nil when want is empty.
func wantErr(t *testing.T, what string, err error, want string) {
	t.Helper()
	switch {
	case want == "" && err != nil:
		t.Errorf("%s: unexpected error %v", what, err)
	case want != "" && err == nil:
		t.Errorf("%s: no error, want one containing %q", what, want)
	case want != "" && !strings.Contains(err.Error(), want):
		t.Errorf("%s: error %q, want one containing %q", what, err, want)
	}
}
