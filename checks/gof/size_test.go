package gof

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func newRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 0x9e3779b97f4a7c15)) }

// quantile is the type 7 sample quantile (linear interpolation).
func quantile(x []float64, p float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	h := p * float64(len(s)-1)
	i := int(h)
	if i+1 >= len(s) {
		return s[len(s)-1]
	}
	return s[i] + (h-float64(i))*(s[i+1]-s[i])
}

// gammaRef is a gamma reference fitted by the method of moments, standing
// in for a family from outside the package in the generic bootstrap path.
type gammaRef struct{ distuv.Gamma }

func (g gammaRef) Draw(rng *rand.Rand, dst []float64) {
	d := distuv.Gamma{Alpha: g.Alpha, Beta: g.Beta, Src: rng}
	for i := range dst {
		dst[i] = d.Rand()
	}
}

func fitGammaMoments(x []float64) (Fitted, error) {
	m, sd := meanSD(x)
	v := sd * sd
	return gammaRef{distuv.Gamma{Alpha: m * m / v, Beta: m / v}}, nil
}

// Size under the null: over 1000 seeded samples from the declared family a
// test at level 5 % must reject between 3.5 % and 6.5 % of them (a
// binomial(1000, 0.05) count lies in that band with probability above
// 0.97 at the nominal size; the seeds are fixed, so the outcome is fixed).
func TestSizeUnderNull(t *testing.T) {
	const reps, n, alpha = 1000, 50, 0.05
	normal := func(rng *rand.Rand, x []float64) { normalRef{mu: 10, sigma: 2}.Draw(rng, x) }
	exponential := func(rng *rand.Rand, x []float64) { exponentialRef{rate: 0.5}.Draw(rng, x) }
	gamma := func(rng *rand.Rand, x []float64) { gammaRef{distuv.Gamma{Alpha: 2.5, Beta: 0.7}}.Draw(rng, x) }
	stdNormal := distuv.Normal{Mu: 10, Sigma: 2}
	boot := Resampling{B: 99, Seed: 7}
	poisson := func(rng *rand.Rand, x []float64) {
		d := distuv.Poisson{Lambda: 3.5, Src: rng}
		for i := range x {
			x[i] = d.Rand()
		}
	}
	cases := []struct {
		name string
		slow bool
		draw func(*rand.Rand, []float64)
		test func(Sorted) (Result, error)
		n    int // sample size when not n
	}{
		{"KS specified", false, normal, func(s Sorted) (Result, error) { return Specified(KS, s, stdNormal) }, 0},
		{"AD specified", false, normal, func(s Sorted) (Result, error) { return Specified(AD, s, stdNormal) }, 0},
		{"CvM specified", false, normal, func(s Sorted) (Result, error) { return Specified(CvM, s, stdNormal) }, 0},
		// Dallal-Wilkinson decides every rejection at 5 %; the bootstrap
		// above p = 0.1 only refines non-rejections, so a small B will do.
		{"KS normal estimated (Lilliefors)", false, normal, func(s Sorted) (Result, error) { return Normal(KS, s, Resampling{B: 19}) }, 0},
		{"AD normal estimated", false, normal, func(s Sorted) (Result, error) { return Normal(AD, s, boot) }, 0},
		{"CvM normal estimated", false, normal, func(s Sorted) (Result, error) { return Normal(CvM, s, boot) }, 0},
		{"Shapiro-Wilk", false, normal, ShapiroWilk, 0},
		{"AD exponential estimated", false, exponential, func(s Sorted) (Result, error) { return Exponential(AD, s, boot) }, 0},
		{"KS exponential estimated (bootstrap)", true, exponential, func(s Sorted) (Result, error) { return Exponential(KS, s, boot) }, 0},
		{"CvM exponential estimated (bootstrap)", true, exponential, func(s Sorted) (Result, error) { return Exponential(CvM, s, boot) }, 0},
		{"AD gamma estimated (bootstrap)", true, gamma, func(s Sorted) (Result, error) {
			f, _ := fitGammaMoments(s.Values())
			return Estimated(AD, s, f, fitGammaMoments, boot)
		}, 0},
		{"KS at resolution 0.1", false, func(rng *rand.Rand, x []float64) {
			normal(rng, x)
			for i := range x {
				x[i] = math.Round(x[i]*10) / 10
			}
		}, func(s Sorted) (Result, error) { return KSAtResolution(s, stdNormal, Resolution{Step: 0.1}) }, 0},
		{"chi-square Poisson specified", false, poisson, func(s Sorted) (Result, error) {
			obs, probs, _, err := IntegerCells(s, distuv.Poisson{Lambda: 3.5})
			if err != nil {
				return Result{}, err
			}
			r, err := ChiSquare(obs, probs, ChiSquareOptions{})
			return r.Result, err
		}, 200},
		{"chi-square Poisson estimated", false, poisson, func(s Sorted) (Result, error) {
			m, _ := meanSD(s.Values())
			obs, probs, _, err := IntegerCells(s, distuv.Poisson{Lambda: m})
			if err != nil {
				return Result{}, err
			}
			r, err := ChiSquare(obs, probs, ChiSquareOptions{Estimated: 1})
			return r.Result, err
		}, 200},
	}
	for ci, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if c.slow && testing.Short() {
				t.Skip("bootstrap size check skipped in -short")
			}
			x := make([]float64, n)
			if c.n > 0 {
				x = make([]float64, c.n)
			}
			rejected := 0
			for i := range reps {
				c.draw(newRand(uint64(1000*ci+i)), x)
				s, err := Sort(x)
				if err != nil {
					t.Fatal(err)
				}
				r, err := c.test(s)
				if err != nil {
					t.Fatalf("sample %d: %v", i, err)
				}
				if r.PValue <= alpha {
					rejected++
				}
			}
			rate := float64(rejected) / reps
			if rate < 0.035 || rate > 0.065 {
				t.Errorf("rejected %.1f%% of %d null samples at the 5%% level, want 3.5%% to 6.5%%", 100*rate, reps)
			}
			t.Logf("size %.1f%%", 100*rate)
		})
	}
}
