// Package dist holds the probability families a policy can declare for a
// column, and fits them to data by maximum likelihood. It knows nothing of
// policies, columns or the engine: it takes a []float64 sample and returns
// a Dist, its log-likelihood, AIC and BIC, or an error that says why the
// sample cannot come from the family.
//
// A Family is found by name (Lookup) and may have parameters given (Fix);
// Fit estimates the rest; Rank fits several candidates and orders them by
// AIC (Akaike 1974), then BIC (Schwarz 1978). A Dist is a small value with
// value-receiver methods CDF, Survival, Quantile, LogProb, Prob and Rand
// (with an explicit *rand.Rand, so every draw repeats from a seed), the
// shape of gonum's stat/distuv; it satisfies the CDF and Quantile
// interface the goodness-of-fit tests take. Where distuv (gonum v0.17.0)
// has the family, its functions are used; this package adds what distuv
// lacks (see each model's comment) and the estimators.
//
//	family             parameters (policy names)     estimate
//	normal             mean, sd                      closed form; sd with divisor n (the MLE)
//	lognormal          meanlog, sdlog                closed form on ln x
//	exponential        rate                          closed form, 1/mean
//	gamma              shape, scale                  Newton on ln k − ψ(k) = s (Choi & Wette 1969; start Minka 2002)
//	weibull            shape, scale                  Newton on the profile score (Cohen 1965; start Menon 1963)
//	uniform            min, max                      sample extremes
//	beta               alpha, beta                   BFGS (gonum optimize) on log shapes, start by moments
//	logistic           location, scale               BFGS on location, log scale
//	student-t          location, scale, df           BFGS on location, log scale, log df; df may be given alone
//	cauchy             location, scale               BFGS on location, log scale (start median, IQR/2)
//	poisson            lambda                        closed form, mean
//	binomial           n (must be given), p          closed form, mean/n
//	negative-binomial  size, p                       Newton on the profile score for size; size may be given alone
//	geometric          p                             closed form, 1/(1 + mean); counts failures, k ≥ 0
//	benford, benford2  none                          first digit 1..9 / first two digits 10..99 of x > 0
//	categorical        expected shares               see Shares (labels, not numbers)
//
// Recorded data have a resolution: a temperature logged to 0.01 takes only
// multiples of 0.01, and at millions of rows the ties alone make a
// continuous family look wrong. Resolution detects the step; Dist.Cell
// gives the probability of one rounding cell and Dist.Rounded the whole
// discretised distribution, to compare such data with.
package dist
