package dist_test

import (
	"fmt"

	"github.com/assay-project/assay/checks/dist"
)

// Fit candidate families to the 23 ball-bearing fatigue lives of Lieblein
// & Zelen (1956) and rank them; the Weibull estimates agree with the
// published shape 2.102 and scale 81.88.
func Example() {
	lives := []float64{17.88, 28.92, 33.00, 41.52, 42.12, 45.60, 48.48, 51.84,
		51.96, 54.12, 55.56, 67.80, 68.64, 68.64, 68.88, 84.12, 93.12, 98.64,
		105.12, 105.84, 127.92, 128.04, 173.40}
	var candidates []dist.Family
	for _, name := range []string{"weibull", "gamma", "lognormal", "exponential", "poisson"} {
		f, err := dist.Lookup(name)
		if err != nil {
			fmt.Println(err)
			return
		}
		candidates = append(candidates, f)
	}
	for _, fit := range dist.Rank(lives, candidates) {
		if fit.Err != nil {
			fmt.Printf("%-12s skipped: %v\n", fit.Family.Name(), fit.Err)
			continue
		}
		fmt.Printf("%-12s AIC %.2f  BIC %.2f ", fit.Family.Name(), fit.AIC, fit.BIC)
		for _, p := range fit.Family.Params() {
			fmt.Printf(" %s %.5g", p.Name, fit.Dist.Param(p.Name))
		}
		fmt.Println()
	}

	w, err := dist.Lookup("weibull")
	if err != nil {
		fmt.Println(err)
		return
	}
	fit, err := w.Fit(lives)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("weibull shape %.3f, scale %.2f; 10%% fail by %.1f million revolutions\n",
		fit.Dist.Param("shape"), fit.Dist.Param("scale"), fit.Dist.Quantile(0.1))
	// Output:
	// gamma        AIC 230.06  BIC 232.33  shape 4.0254 scale 17.942
	// lognormal    AIC 230.26  BIC 232.53  meanlog 4.1505 sdlog 0.52165
	// weibull      AIC 231.38  BIC 233.65  shape 2.1021 scale 81.878
	// exponential  AIC 244.87  BIC 246.01  rate 0.013846
	// poisson      skipped: poisson is not comparable with weibull, the first candidate: their likelihoods are over different values (k = 0, 1, 2, ..., x > 0)
	// weibull shape 2.102, scale 81.88; 10% fail by 28.1 million revolutions
}

// A policy that declares the parameters: the sample is only checked and
// scored, and values the family cannot produce are named.
func ExampleFamily_Fix() {
	f, err := dist.Lookup("binomial")
	if err != nil {
		fmt.Println(err)
		return
	}
	f, err = f.Fix(map[string]float64{"n": 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	_, err = f.Fit([]float64{3, 4, 12, 2.5, 7})
	fmt.Println(err)
	fit, err := f.Fit([]float64{3, 4, 6, 2, 5})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%v, K = %d\n", fit.Dist, fit.K)
	// Output:
	// binomial(n=10) needs whole numbers from 0 to 10, but 2 of 5 values are not: 12, 2.5
	// binomial(n=10, p=0.4), K = 1
}
