package baseline

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// golden is testdata/golden.json, made by testdata/golden.py with SciPy
// (versions recorded in the file).
type golden struct {
	SciPy string `json:"scipy"`
	KS    []struct {
		Name      string
		Base, Cur []float64
		D         float64
		PAsymp    float64 `json:"p_asymp"`
		PSciPy    float64 `json:"p_scipy"`
	}
	Chi2 []struct {
		Name      string
		Base, Cur []int64
		Statistic float64
		DF        int
		P         float64
	}
	W1 []struct {
		Name      string
		Base, Cur []float64
		W1        float64
	}
	JS []struct {
		Name string
		P, Q []float64
		JS   float64
	}
}

func loadGolden(t *testing.T) golden {
	t.Helper()
	b, err := os.ReadFile("testdata/golden.json")
	if err != nil {
		t.Fatal(err)
	}
	var g golden
	if err := json.Unmarshal(b, &g); err != nil {
		t.Fatal(err)
	}
	if g.SciPy == "" || len(g.KS) == 0 {
		t.Fatal("golden.json has no cases")
	}
	return g
}

func close(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(math.Abs(want), 1e-300) || got == want
}

func TestKS2AgainstSciPy(t *testing.T) {
	g := loadGolden(t)
	for _, c := range g.KS {
		t.Run(c.Name, func(t *testing.T) {
			base, cur := Unit(append([]float64(nil), c.Base...)), Unit(append([]float64(nil), c.Cur...))
			d := KS2(base, cur)
			if !close(d, c.D, 1e-12) {
				t.Errorf("D = %.15g, SciPy ks_2samp %.15g", d, c.D)
			}
			p := KS2PValue(d, int64(len(c.Base)), int64(len(c.Cur)))
			if !close(p, c.PAsymp, 1e-9) {
				t.Errorf("p = %.15g, SciPy kstwobign.sf %.15g", p, c.PAsymp)
			}
			// ks_2samp's own p-value is exact at these sizes (method
			// "auto" below 10,000 values a side)
			exact, ok := KS2ExactPValue(d, int64(len(c.Base)), int64(len(c.Cur)))
			if !ok || !close(exact, c.PSciPy, 1e-6) {
				t.Errorf("exact p = %.15g (%v), SciPy ks_2samp %.15g", exact, ok, c.PSciPy)
			}
		})
	}
}

func TestWasserstein1AgainstSciPy(t *testing.T) {
	g := loadGolden(t)
	for _, c := range g.W1 {
		w := Wasserstein1(Unit(append([]float64(nil), c.Base...)), Unit(append([]float64(nil), c.Cur...)))
		if !close(w, c.W1, 1e-10) {
			t.Errorf("%s: W1 = %.15g, SciPy wasserstein_distance %.15g", c.Name, w, c.W1)
		}
	}
}

func TestChiSquareHomogeneityAgainstSciPy(t *testing.T) {
	g := loadGolden(t)
	for _, c := range g.Chi2 {
		h, err := ChiSquareHomogeneity(c.Base, c.Cur)
		if err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		if !close(h.Statistic, c.Statistic, 1e-12) || h.DF != c.DF || !close(h.PValue, c.P, 1e-9) {
			t.Errorf("%s: X2 = %.15g df %d p %.15g, SciPy chi2_contingency %.15g df %d p %.15g",
				c.Name, h.Statistic, h.DF, h.PValue, c.Statistic, c.DF, c.P)
		}
	}
}

func TestJensenShannonAgainstSciPy(t *testing.T) {
	g := loadGolden(t)
	for _, c := range g.JS {
		if js := JensenShannon(c.P, c.Q); !close(js, c.JS, 1e-12) {
			t.Errorf("%s: JS = %.15g, SciPy jensenshannon^2 %.15g", c.Name, js, c.JS)
		}
	}
}

// Hand-computed examples, the arithmetic written out.
func TestHandComputed(t *testing.T) {
	tests := []struct {
		name      string
		got, want float64
	}{
		// PSI of b = (0.5, 0.5) against c = (0.25, 0.75):
		//   (0.25-0.5) ln(0.25/0.5) + (0.75-0.5) ln(0.75/0.5)
		// = 0.25 ln 2 + 0.25 ln 1.5 = 0.25 ln 3 = 0.274653072167...
		{"psi two bins", PSI([]float64{0.5, 0.5}, []float64{0.25, 0.75}), 0.25 * math.Log(3)},
		// PSI with an empty current bin: c = (0, 1), b = (0.5, 0.5); the
		// 0 is floored at 1e-4:
		//   (1e-4 - 0.5) ln(1e-4/0.5) + (1 - 0.5) ln(1/0.5)
		// = 0.4999 ln 5000 + 0.5 ln 2 = 0.4999*8.517193 + 0.346574 = 4.604299
		{"psi empty bin", PSI([]float64{0.5, 0.5}, []float64{0, 1}), 0.4999*math.Log(5000) + 0.5*math.Log(2)},
		// PSI of equal shares is 0.
		{"psi equal", PSI([]float64{0.2, 0.3, 0.5}, []float64{0.2, 0.3, 0.5}), 0},
		// JS of p = (1, 0), q = (0.5, 0.5): m = (0.75, 0.25);
		//   KL(p||m) = 1 log2(1/0.75) = 0.415037
		//   KL(q||m) = 0.5 log2(0.5/0.75) + 0.5 log2(0.5/0.25) = -0.292481 + 0.5 = 0.207519
		//   JS = (0.415037 + 0.207519)/2 = 0.311278
		{"js", JensenShannon([]float64{1, 0}, []float64{0.5, 0.5}), (math.Log2(4.0/3) + 0.5*math.Log2(2.0/3) + 0.5) / 2},
		// W1 of {0, 1} against {2, 3}: F - G is 1/2 on [0,1), 1 on [1,2),
		// 1/2 on [2,3): 0.5 + 1 + 0.5 = 2 (every unit of mass moves 2).
		{"w1 shift", Wasserstein1(Unit([]float64{0, 1}), Unit([]float64{2, 3})), 2},
		// W1 of {0} against {0, 10}: half the mass moves 10: 5.
		{"w1 half", Wasserstein1(Unit([]float64{0}), Unit([]float64{0, 10})), 5},
		// KS of {1, 2, 3} against {3, 4}: after 2, F = 2/3 and G = 0.
		{"ks", KS2(Unit([]float64{1, 2, 3}), Unit([]float64{3, 4})), 2.0 / 3},
		// weights count: {0 (weight 3), 1 (weight 1)} against {0, 1}: at
		// 0, F = 3/4 and G = 1/2, so D = 1/4, and W1 = 1/4 * 1.
		{"ks weighted", KS2(Weighted{X: []float64{0, 1}, W: []float64{3, 1}}, Unit([]float64{0, 1})), 0.25},
		{"w1 weighted", Wasserstein1(Weighted{X: []float64{0, 1}, W: []float64{3, 1}}, Unit([]float64{0, 1})), 0.25},
	}
	for _, tt := range tests {
		if !close(tt.got, tt.want, 1e-12) {
			t.Errorf("%s = %.15g, want %.15g", tt.name, tt.got, tt.want)
		}
	}
}

func TestPowerOfTen(t *testing.T) {
	tests := []struct {
		r  float64
		k  int
		ok bool
	}{
		{1000, 3, true}, {1040, 3, true}, {960, 3, true}, {1060, 0, false},
		{0.001, -3, true}, {0.00102, -3, true}, {10, 1, true}, {1, 0, false},
		{1.04, 0, false}, {2, 0, false}, {500, 0, false}, {0, 0, false}, {-1000, 0, false},
		{math.Inf(1), 0, false}, {math.NaN(), 0, false},
	}
	for _, tt := range tests {
		k, ok := PowerOfTen(tt.r)
		if k != tt.k || ok != tt.ok {
			t.Errorf("PowerOfTen(%g) = %d, %v; want %d, %v", tt.r, k, ok, tt.k, tt.ok)
		}
	}
}

func TestKS2PValueInvariants(t *testing.T) {
	prev := 1.0
	for d := 0.0; d <= 1; d += 0.01 {
		p := KS2PValue(d, 200, 300)
		if p < 0 || p > 1 || p > prev+1e-12 {
			t.Fatalf("p(%g) = %g after %g: not a decreasing value in [0,1]", d, p, prev)
		}
		prev = p
	}
}

func TestMovesAndShares(t *testing.T) {
	bins := []Bin{{Upper: 1, Share: 0.5}, {Upper: 2, Share: 0.25}, {Upper: 3, Share: 0.25}}
	// 4 values: 0.5 in bin 0; 5 and 9 beyond the last edge, counted in the last bin; 1.5 in bin 1
	cur := Shares(bins, []float64{0.5, 1.5, 5, 9})
	want := []float64{0.25, 0.25, 0.5}
	for i := range want {
		if cur[i] != want[i] {
			t.Fatalf("shares = %v, want %v", cur, want)
		}
	}
	m := Moves(bins, []float64{0.5, 0.25, 0.25}, cur, 2)
	// both bin 0 and the last moved by 0.25: ties keep their order
	if len(m) != 2 || !math.IsInf(m[0].Lower, -1) || m[0].Upper != 1 || m[0].Cur != 0.25 ||
		m[1].Lower != 2 || !math.IsInf(m[1].Upper, 1) || m[1].Base != 0.25 || m[1].Cur != 0.5 {
		t.Errorf("moves = %+v", m)
	}
}

// Exact two-sample p-values worked by hand. n = m = 2: the 6 orders of
// the merged ranks are xxyy, xyxy, xyyx, yxxy, yxyx, yyxx; D is 1 for
// xxyy and yyxx and 1/2 for the other four, so P(D >= 1) = 2/6 and
// P(D >= 1/2) = 1. n = 1, m = 2: orders xyy, yxy, yyx with D = 1, 1/2, 1,
// so P(D >= 1) = 2/3.
func TestKS2ExactPValueByHand(t *testing.T) {
	tests := []struct {
		d    float64
		n, m int64
		want float64
	}{
		{1, 2, 2, 1.0 / 3}, {0.5, 2, 2, 1}, {1, 1, 2, 2.0 / 3}, {0.5, 1, 2, 1}, {0, 3, 4, 1},
	}
	for _, tt := range tests {
		got, ok := KS2ExactPValue(tt.d, tt.n, tt.m)
		if !ok || !close(got, tt.want, 1e-12) {
			t.Errorf("KS2ExactPValue(%g, %d, %d) = %g, %v; want %g", tt.d, tt.n, tt.m, got, ok, tt.want)
		}
	}
	if _, ok := KS2ExactPValue(0.1, 10_000, 10_000); ok {
		t.Error("1e8 cells computed exactly, want refused")
	}
}
