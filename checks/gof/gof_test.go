package gof

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Invariants over many samples, sizes and misfits: statistics are >= 0
// (A² may be +Inf), p-values lie in [0, 1], the effect size in [0, 1].
func TestInvariants(t *testing.T) {
	refs := []CDF{
		distuv.Normal{Mu: 0, Sigma: 1},
		distuv.Normal{Mu: 3, Sigma: 0.2}, // far off: p near 0
		distuv.Exponential{Rate: 1},
		distuv.Uniform{Min: -4, Max: 4},
	}
	boot := Resampling{B: 19, Seed: 1}
	for _, n := range []int{1, 2, 3, 5, 8, 13, 60, 400} {
		for seed := range uint64(8) {
			x := make([]float64, n)
			normalRef{mu: 0, sigma: 1}.Draw(newRand(100*seed+uint64(n)), x)
			s, _ := Sort(x)
			var results []Result
			for _, ref := range refs {
				for _, tst := range []Test{KS, AD, CvM} {
					r, err := Specified(tst, s, ref)
					if err != nil {
						t.Fatalf("n=%d %v: %v", n, tst, err)
					}
					results = append(results, r)
				}
			}
			for _, tst := range []Test{KS, AD, CvM} {
				if n >= 3 {
					r, err := Normal(tst, s, boot)
					if err != nil {
						t.Fatalf("n=%d normal %v: %v", n, tst, err)
					}
					results = append(results, r)
				}
				abs := make([]float64, n)
				for i, v := range s.Values() {
					abs[i] = math.Abs(v)
				}
				sa, _ := Sort(abs)
				if n >= 2 {
					r, err := Exponential(tst, sa, boot)
					if err != nil {
						t.Fatalf("n=%d exponential %v: %v", n, tst, err)
					}
					results = append(results, r)
				}
			}
			if n >= 3 {
				r, err := ShapiroWilk(s)
				if err != nil {
					t.Fatal(err)
				}
				results = append(results, r)
			}
			for _, r := range results {
				if !(r.Statistic.Value >= 0) || !(r.PValue >= 0 && r.PValue <= 1) || !(r.Effect.Value >= 0 && r.Effect.Value <= 1) || r.N != n {
					t.Errorf("n=%d %v: statistic %v, p %v, effect %v, N %d", n, r.Test, r.Statistic.Value, r.PValue, r.Effect.Value, r.N)
				}
			}
		}
	}
}

// A gross misfit gives p-values near 0 and a large distance; a sample
// placed at the reference's quantiles gives p near 1 and a small one.
func TestExtremes(t *testing.T) {
	ref := distuv.Normal{Mu: 0, Sigma: 1}
	far, _ := Sort([]float64{5, 5.5, 6, 6.5, 7, 7.5, 8, 8.5, 9, 9.5})
	x := make([]float64, 200)
	for i := range x {
		x[i] = ref.Quantile((float64(i) + 0.5) / 200)
	}
	ideal, _ := Sort(x)
	for _, tst := range []Test{KS, AD, CvM} {
		bad, err := Specified(tst, far, ref)
		if err != nil {
			t.Fatal(err)
		}
		good, err := Specified(tst, ideal, ref)
		if err != nil {
			t.Fatal(err)
		}
		if bad.PValue > 1e-6 || bad.Effect.Value < 0.99 {
			t.Errorf("%v far off: p = %v, D = %v", tst, bad.PValue, bad.Effect.Value)
		}
		if good.PValue < 0.999 || good.Effect.Value > 0.0026 {
			t.Errorf("%v at the quantiles: p = %v, D = %v", tst, good.PValue, good.Effect.Value)
		}
	}
}

func TestDistance(t *testing.T) {
	// Against U(0,1): F(x) = x. Sample 0.1, 0.4, 0.4, 0.9:
	// D+ = max(1/4-0.1, 2/4-0.4, 3/4-0.4, 1-0.9) = 0.35,
	// D- = max(0.1-0, 0.4-1/4, 0.4-2/4, 0.9-3/4) = 0.15.
	s, _ := Sort([]float64{0.4, 0.9, 0.1, 0.4})
	d := Distance(s, distuv.Uniform{Min: 0, Max: 1})
	if !near(d.DPlus, 0.35, 1e-15) || !near(d.DMinus, 0.15, 1e-15) || d.D != d.DPlus {
		t.Errorf("distance %+v, want D+ 0.35, D- 0.15", d)
	}
}

func TestBootstrapDeterministic(t *testing.T) {
	x := make([]float64, 40)
	exponentialRef{rate: 2}.Draw(newRand(9), x)
	s, _ := Sort(x)
	a, err := Exponential(KS, s, Resampling{B: 199, Seed: 5})
	if err != nil {
		t.Fatal(err)
	}
	b, _ := Exponential(KS, s, Resampling{B: 199, Seed: 5})
	c, _ := Exponential(KS, s, Resampling{B: 199, Seed: 6})
	if a.PValue != b.PValue || a.Method != b.Method {
		t.Errorf("same seed: p %v and %v", a.PValue, b.PValue)
	}
	if a.PValue == c.PValue {
		t.Errorf("seeds 5 and 6 gave the same p %v (possible but unlikely)", a.PValue)
	}
	if a.Method.Kind != Bootstrap || a.Method.B != 199 || a.Method.Seed != 5 {
		t.Errorf("method %+v", a.Method)
	}
	if k := a.PValue * 200; math.Abs(k-math.Round(k)) > 1e-9 || a.PValue < 1.0/200 {
		t.Errorf("bootstrap p %v is not (1 + count)/(B + 1)", a.PValue)
	}
	d, _ := Exponential(KS, s, Resampling{})
	if d.Method.B != DefaultB {
		t.Errorf("default B = %d, want %d", d.Method.B, DefaultB)
	}
}

// The generic bootstrap through Estimated agrees with the built-in normal
// path when given the same fit, replicate for replicate.
func TestEstimatedMatchesBuiltIn(t *testing.T) {
	x := make([]float64, 30)
	normalRef{mu: 1, sigma: 3}.Draw(newRand(4), x)
	s, _ := Sort(x)
	r := Resampling{B: 99, Seed: 3}
	fitted, _ := fitNormal(s.Values())
	gen, err := Estimated(CvM, s, fitted, fitNormal, r)
	if err != nil {
		t.Fatal(err)
	}
	p, err := BootstrapPValue(CvM, gen.Statistic.Value, s.Len(), fitted, fitNormal, r)
	if err != nil {
		t.Fatal(err)
	}
	built, _ := Normal(CvM, s, r)
	if gen.PValue != p || gen.Statistic != built.Statistic {
		t.Errorf("generic p %v, helper p %v, statistics %v and %v", gen.PValue, p, gen.Statistic, built.Statistic)
	}
}

func TestErrors(t *testing.T) {
	one, _ := Sort([]float64{1})
	equal, _ := Sort([]float64{2, 2, 2, 2, 2})
	neg, _ := Sort([]float64{-1, 2, 3})
	frac, _ := Sort([]float64{1, 2.5, 3, 4.25})
	ok, _ := Sort([]float64{1, 2, 3, 4, 5, 6})
	ref := distuv.UnitNormal
	big := make([]float64, 5001)
	for i := range big {
		big[i] = float64(i)
	}
	sBig, _ := Sort(big)
	cases := []struct {
		name string
		err  error
		want string
	}{
		{"NaN", errOf(Sort([]float64{1, math.NaN()})), "sample value 2 is NaN"},
		{"Inf", errOf(Sort([]float64{math.Inf(-1)})), "sample value 1 is -Inf"},
		{"empty", errOf(Specified(KS, Sorted{}, ref)), "at least one value"},
		{"not EDF", errOf(Specified(SW, ok, ref)), "shapiro-wilk is not a test of the empirical distribution function"},
		{"estimated not EDF", errOf(Normal(ChiSq, ok, Resampling{})), "chi-square is not a test"},
		{"bootstrap not EDF", errOf(BootstrapPValue(SW, 0, 5, normalRef{0, 1}, fitNormal, Resampling{})), "not a test"},
		{"normal n", errOf(Normal(AD, one, Resampling{})), "at least 3 values, got 1"},
		{"normal equal", errOf(Normal(KS, equal, Resampling{})), "not all equal"},
		{"exponential negative", errOf(Exponential(KS, neg, Resampling{})), "values >= 0, the smallest is -1"},
		{"sw small", errOf(ShapiroWilk(one)), "between 3 and 5000 values, got 1"},
		{"sw large", errOf(ShapiroWilk(sBig)), "got 5001"},
		{"sw equal", errOf(ShapiroWilk(equal)), "not all equal"},
		{"integer cells", errOf3(IntegerCells(frac, distuv.Poisson{Lambda: 1})), "2 of 4 values are not integers (the first is 2.5)"},
		{"bin edges", errOf2(BinCells(ok, ref, []float64{1, 1})), "edge 2 (1) follows 1"},
		{"bin NaN edge", errOf2(BinCells(ok, ref, []float64{math.NaN()})), "edge 1 is NaN"},
		{"chisq lengths", errOfC(ChiSquare([]int64{1, 2}, []float64{1}, ChiSquareOptions{})), "2 observed counts but 1 probabilities"},
		{"chisq negative", errOfC(ChiSquare([]int64{1, -2}, []float64{0.5, 0.5}, ChiSquareOptions{})), "cell 2 has a negative count"},
		{"chisq sum", errOfC(ChiSquare([]int64{1, 2}, []float64{0.5, 0.6}, ChiSquareOptions{})), "sum to 1.1"},
		{"chisq empty", errOfC(ChiSquare([]int64{0, 0}, []float64{0.5, 0.5}, ChiSquareOptions{})), "at least one counted value"},
		{"chisq df", errOfC(ChiSquare([]int64{3, 4}, []float64{0.5, 0.5}, ChiSquareOptions{})), "1 cells after pooling"},
	}
	for _, c := range cases {
		if c.err == nil || !strings.Contains(c.err.Error(), c.want) {
			t.Errorf("%s: error %v, want it to contain %q", c.name, c.err, c.want)
		}
	}
}

func errOf[T any](_ T, err error) error                  { return err }
func errOf2[A, B any](_ A, _ B, err error) error         { return err }
func errOf3[A, B, C any](_ A, _ B, _ C, err error) error { return err }
func errOfC(_ ChiSquareResult, err error) error          { return err }

func TestPooling(t *testing.T) {
	// Expected counts 1, 2, 3, 10, 4, 1 with minimum 5: cells {0,1,2}
	// (6), {3} (10), and the remainder {4,5} (5) - which reaches 5 itself.
	// With minimum 6 the remainder {4,5} joins {3}.
	obs := []int64{1, 1, 4, 9, 5, 1}
	probs := []float64{1. / 21, 2. / 21, 3. / 21, 10. / 21, 4. / 21, 1. / 21}
	for _, c := range []struct {
		min  float64
		want [][2]int
	}{
		{5, [][2]int{{0, 2}, {3, 3}, {4, 5}}},
		{6, [][2]int{{0, 2}, {3, 5}}},
	} {
		r, err := ChiSquare(obs, probs, ChiSquareOptions{MinExpected: c.min})
		if err != nil {
			t.Fatal(err)
		}
		var got [][2]int
		var o int64
		for _, cell := range r.Cells {
			got = append(got, [2]int{cell.First, cell.Last})
			o += cell.Observed
			if cell.Expected < c.min {
				t.Errorf("min %v: cell %+v expects fewer than the minimum", c.min, cell)
			}
		}
		if len(got) != len(c.want) || o != 21 {
			t.Fatalf("min %v: cells %v (observed total %d), want %v", c.min, got, o, c.want)
		}
		for i := range got {
			if got[i] != c.want[i] {
				t.Errorf("min %v: cells %v, want %v", c.min, got, c.want)
			}
		}
		if r.DF != len(c.want)-1 {
			t.Errorf("min %v: df %d", c.min, r.DF)
		}
	}
}

// Total variation: observed shares (0.5, 0.5, 0) against (0.25, 0.25, 0.5).
func TestChiSquareEffect(t *testing.T) {
	r, err := ChiSquare([]int64{50, 50, 0}, []float64{0.25, 0.25, 0.5}, ChiSquareOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !near(r.Effect.Value, 0.5, 1e-15) || r.Effect.Name != "total variation" {
		t.Errorf("effect %+v, want total variation 0.5", r.Effect)
	}
}

func TestBinCells(t *testing.T) {
	s, _ := Sort([]float64{-3, -1, -1, 0, 0.5, 2, 9})
	obs, probs, err := BinCells(s, distuv.Uniform{Min: -4, Max: 4}, []float64{-1, 0, 2})
	if err != nil {
		t.Fatal(err)
	}
	wantObs := []int64{3, 1, 2, 1}
	wantP := []float64{3. / 8, 1. / 8, 2. / 8, 2. / 8}
	for i := range wantObs {
		if obs[i] != wantObs[i] || !near(probs[i], wantP[i], 1e-15) {
			t.Errorf("cells %v %v, want %v %v", obs, probs, wantObs, wantP)
			break
		}
	}
}

func TestNames(t *testing.T) {
	for v, want := range map[string]string{
		KS.String(): "kolmogorov-smirnov", ChiSq.String(): "chi-square", Test(99).String(): "test(99)",
		Bootstrap.String(): "bootstrap", MethodKind(0).String(): "method(0)",
	} {
		if v != want {
			t.Errorf("name %q, want %q", v, want)
		}
	}
	b, _ := AD.MarshalText()
	if string(b) != "anderson-darling" {
		t.Errorf("MarshalText %q", b)
	}
}
