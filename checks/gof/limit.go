package gof

// KolmogorovLimitSurvival returns P(K > x) for Kolmogorov's limiting
// distribution K of sqrt(n) D_n (see kolmogorovLimitSurvival), the
// asymptotic law also of the two-sample statistic sqrt(n m / (n + m))
// D_{n,m} (Smirnov 1939).
func KolmogorovLimitSurvival(x float64) float64 { return kolmogorovLimitSurvival(x) }
