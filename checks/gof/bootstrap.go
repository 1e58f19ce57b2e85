package gof

import (
	"fmt"
	"math/rand/v2"
	"slices"
)

// BootstrapPValue returns the parametric bootstrap p-value of an EDF
// statistic (KS, AD or CvM) observed on n values against fitted, a
// reference estimated from those values by refit (Stute, Gonzáles
// Manteiga & Presedo Quindimil 1993, "Bootstrap based goodness-of-fit
// tests", Metrika 40:243-256; Davison & Hinkley 1997, "Bootstrap Methods
// and their Application", section 4.2.2). For each replicate b = 1..B it
// draws n values from fitted, refits, recomputes the statistic against the
// refitted reference, and it returns
//
//	p = (1 + #{b : T*_b >= T}) / (B + 1)
//
// which is never 0 and gives a test of exact level for statistics whose
// null distribution does not depend on the parameters (location-scale
// families). Replicate b draws from its own generator, PCG seeded with
// (r.Seed, b), so the p-value repeats for the same seed and B, and the
// first B' < B replicates are the same whatever B is.
//
// Cost: B draws, sorts and refits of n values; at n = 1000 and B = 999,
// tens of milliseconds for closed-form fits. At millions of rows run it on
// a uniform sample of a few thousand values: its p-value is then that of
// the sample, which the result reports through N.
func BootstrapPValue(t Test, observed float64, n int, fitted Fitted, refit Refit, r Resampling) (float64, error) {
	if n < 1 {
		return 0, fmt.Errorf("bootstrap needs at least one value")
	}
	if err := t.needEDF(); err != nil {
		return 0, err
	}
	b := r.replicates()
	buf := make([]float64, n)
	exceed := 0
	for i := range b {
		rng := rand.New(rand.NewPCG(r.Seed, uint64(i+1)))
		fitted.Draw(rng, buf)
		slices.Sort(buf)
		ref, err := refit(buf)
		if err != nil {
			return 0, fmt.Errorf("bootstrap replicate %d of %d: %w", i+1, b, err)
		}
		st, _ := edfStatistic(t, Sorted{x: buf}, ref)
		if st.Value >= observed {
			exceed++
		}
	}
	return float64(1+exceed) / float64(b+1), nil
}
