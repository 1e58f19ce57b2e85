// Package outlier finds extreme values in one column and extreme rows in
// several columns together, and says how far off each one is. It knows
// nothing of policies, columns or the engine: it takes []float64 values (one
// slice per column for the joint methods) and returns fitted thresholds,
// test results and flagged positions with their scores.
//
// # Methods
//
//	method                   function                reference
//	quantile                 Quantile7               Hyndman & Fan (1996), definition 7 (R's default)
//	Tukey fences             TukeyFences             Tukey (1977); quartiles by definition 7
//	z-score                  NewZScore               mean and sample sd; cutoff 3 is common practice
//	modified z-score         NewRobustZ              Iglewicz & Hoaglin (1993), 0.6745 (x − median)/MAD, cutoff 3.5
//	tail probability         NewTail                 fitted family, Bonferroni level alpha/n split over both tails
//	generalized ESD          GeneralizedESD          Rosner (1983)
//	Grubbs' test             Grubbs                  Grubbs (1950, 1969); critical value and p-value from Student's t
//	moments, co-moments      CoMoments               Chan, Golub & LeVeque (1979); Pébay (2008) pairwise merge
//	Mahalanobis, classical   Classical               mean and sample covariance
//	Mahalanobis, robust      FastMCD                 Rousseeuw & Van Driessen (1999); Croux & Haesbroeck (1999) factor
//	contributions            Scatter.Contributions   c_j = (x − μ)_j [Σ⁻¹(x − μ)]_j, summing to d²
//
// # Two passes
//
// Every univariate rule is fitted on the whole column first (exact
// quartiles, median and MAD need the sorted values; mean and sd need only
// moments) and then scores single values, so a caller can fit after a first
// pass over the data and flag rows in a second. The same holds for the joint
// methods: a Scatter (center and covariance) is fitted once, then
// Scatter.Dist2 scores one row at a time without allocating. CoMoments
// accumulate over batches and merge, so the classical estimate needs no
// second copy of the data; FastMCD needs the rows (all of them, or a seeded
// sample whose estimate then scores every row).
//
// Scores are oriented so that larger is further out; Scan and Scatter.Flag
// return the flagged positions sorted by score, largest first, ties by
// position.
//
// # References
//
//   - Chan, T. F., Golub, G. H. & LeVeque, R. J. (1979). Updating formulae and
//     a pairwise algorithm for computing sample variances. Stanford CS report
//     STAN-CS-79-773; (1983) Algorithms for computing the sample variance:
//     analysis and recommendations. The American Statistician 37(3):242-247.
//   - Croux, C. & Haesbroeck, G. (1999). Influence function and efficiency of
//     the minimum covariance determinant scatter matrix estimator. Journal of
//     Multivariate Analysis 71:161-190.
//   - Grubbs, F. E. (1950). Sample criteria for testing outlying
//     observations. Annals of Mathematical Statistics 21:27-58; Grubbs, F. E.
//     (1969). Procedures for detecting outlying observations in samples.
//     Technometrics 11(1):1-21.
//   - Hyndman, R. J. & Fan, Y. (1996). Sample quantiles in statistical
//     packages. The American Statistician 50(4):361-365.
//   - Iglewicz, B. & Hoaglin, D. C. (1993). How to Detect and Handle Outliers.
//     ASQC Basic References in Quality Control 16, section 3.3.
//   - NIST/SEMATECH e-Handbook of Statistical Methods, sections 1.3.5.17.1
//     (Grubbs) and 1.3.5.17.3 (generalized ESD).
//   - Pébay, P. (2008). Formulas for robust, one-pass parallel computation of
//     covariances and arbitrary-order statistical moments. Sandia report
//     SAND2008-6212.
//   - Rosner, B. (1983). Percentage points for a generalized ESD many-outlier
//     procedure. Technometrics 25(2):165-172.
//   - Rousseeuw, P. J. & Van Driessen, K. (1999). A fast algorithm for the
//     minimum covariance determinant estimator. Technometrics 41(3):212-223.
//   - Rousseeuw, P. J. & Van Zomeren, B. C. (1990). Unmasking multivariate
//     outliers and leverage points. JASA 85(411):633-639.
//   - Tukey, J. W. (1977). Exploratory Data Analysis. Addison-Wesley.
//   - Wichura, M. J. (1988). Algorithm AS 241: the percentage points of the
//     normal distribution. Applied Statistics 37(3):477-484.
//
// Volume and page numbers not recorded in shared/reference/VALUES.md are
// as remembered, not re-read.
package outlier
