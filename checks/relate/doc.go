// Package relate measures relationships between two columns: linear fits
// with their diagnostics, robust lines, rank correlations, association of
// two categorical columns, and functional dependency. It knows nothing of
// policies or the engine: it takes float64 slices or string values, or
// summaries that the caller fills while streaming, and returns values with
// the formula and reference in each doc comment.
//
//	what                     function / type                    method
//	moments, r, line         Moments (Add, AddAll, Merge)       Welford (1962); Chan, Golub & LeVeque (1979); Pébay (2008)
//	Pearson test             Moments.PearsonTest                t on n-2 df
//	least squares            LeastSquares                       Householder QR on centred, scaled columns
//	residual diagnostics     Line.Diagnose, Cutoffs             rstudent, Cook (1977), leverage; per row on a 2nd pass
//	robust line              TheilSen                           Theil (1950), Sen (1968); exact to 2²¹ pairs, sampled above
//	robust line              Huber                              Huber (1964) M-estimate by IRLS, MAD scale (as MASS::rlm)
//	Spearman                 SpearmanTest                       exact n <= 9, AS 89 Edgeworth n <= 1290, t otherwise (as R)
//	Kendall tau-b            KendallTest                        Knight (1966) O(n log n); exact n < 50, normal with ties (as R)
//	association              Table.Independence                 Pearson chi-square; Cramér's V; Bergsma (2013) corrected V
//	functional dependency    Dependency                         share of rows in groups of A with several B
//
// # Streaming
//
// Moments, Table and Dependency are mergeable summaries: fill one per batch
// or shard and Merge them. A rule that flags rows fits on the first pass
// (Moments.Line; Dependency.Result) and judges each row on a second pass
// (Line.Diagnose, Cutoffs.Flags; Dependency.Violates) without keeping the
// rows. The robust fits and rank correlations need the values themselves;
// a robust line then scores rows on a second pass the same way
// (RobustLine.Standardized). At 10⁶ pairs each of them takes well under a
// second of CPU (see the benchmarks).
//
// # p-values
//
// Every test is two-sided and follows the method R's cor.test and
// chisq.test (R 4.2.2) choose by default, so that results can be checked
// against R to rounding; Correlation.PMethod says which was used.
package relate
