package report

// This file holds what extremes and joint rules add to a result. Every
// field is additive: a program that reads only the fields of
// SchemaVersion's first layout keeps working.

// Extremes is what an extremes rule found on a column: the thresholds it
// fitted on the whole column, where the scores are measured from, and
// what a box plot or a histogram of the column needs.
type Extremes struct {
	// Method is tukey, zscore, robust-z, esd, grubbs or tail.
	Method string `json:"method"`
	// N counts the values judged: the column's non-null values other than
	// NaN. NaN counts the NaN values, which are not judged.
	N   int64 `json:"n"`
	NaN int64 `json:"nan,omitempty"`
	// Lower and Upper are the thresholds in the column's unit: a value
	// below Lower or above Upper is extreme. They are Tukey's fences, mean
	// ± k sd, median ± k MAD / 0.6745, or the family's quantiles at
	// alpha/(2n) and 1 − alpha/(2n) (tail). For esd and grubbs, whose
	// verdict is on values rather than a threshold, they are the least
	// extreme value flagged on each side, absent on a side with none.
	Lower *Number `json:"lower,omitempty"`
	Upper *Number `json:"upper,omitempty"`
	// Center and Scale are what scores are measured from and in: the
	// median and the IQR (tukey), the mean and the sample sd (zscore, esd,
	// grubbs), the median and the MAD (robust-z, unscaled), the family's
	// median and no scale (tail: null).
	Center Number `json:"center"`
	Scale  Number `json:"scale"`
	// Below and Above count the values flagged on each side.
	Below int64 `json:"below"`
	Above int64 `json:"above"`
	// Score says what an offending row's score is, e.g. "distance beyond
	// the nearer fence, in IQRs".
	Score string `json:"score"`
	// Box is the five-number summary with the whisker ends, for a box
	// plot; absent for zscore, which keeps no values.
	Box *Box `json:"box,omitempty"`
	// Histogram counts the judged finite values in equal-width bins over
	// their range, at most 50 (Density is the fitted family's for tail,
	// and empty otherwise). For zscore it is counted in the second pass,
	// which runs only when some value is beyond the cutoff.
	Histogram *Histogram `json:"histogram,omitempty"`
	// Steps are the steps of the generalized ESD test (esd), in the
	// order values were removed.
	Steps []ESDStep `json:"steps,omitempty"`
}

// Box is a box plot's summary of a column: the least and greatest values,
// the quartiles and the median (R type 7), and the whisker ends, the least
// and greatest values that are not extreme.
type Box struct {
	Min       Number `json:"min"`
	Q1        Number `json:"q1"`
	Median    Number `json:"median"`
	Q3        Number `json:"q3"`
	Max       Number `json:"max"`
	WhiskerLo Number `json:"whisker_lo"`
	WhiskerHi Number `json:"whisker_hi"`
}

// ESDStep is one step of the generalized ESD test: the value removed, its
// studentized deviation R from the values left and the critical value
// Lambda. The first Outliers steps (those up to the last R > Lambda) are
// the outliers.
type ESDStep struct {
	Value  Number `json:"value"`
	R      Number `json:"r"`
	Lambda Number `json:"lambda"`
}

// Joint is what a joint rule found on its columns: the estimate of their
// center and covariance, the cutoff, the rows it could not judge, and
// what a plot of the distances against the chi-square quantiles needs.
type Joint struct {
	// Method is mahalanobis; Estimator is classical (mean and sample
	// covariance) or fast-mcd (reweighted minimum covariance
	// determinant, with its consistency factor).
	Method    string `json:"method"`
	Estimator string `json:"estimator"`
	// N counts the rows judged; Skipped the rows not judged because a
	// value in one of the columns is missing or not finite.
	N       int64 `json:"n"`
	Skipped int64 `json:"skipped"`
	// Center and Covariance are the estimate, in the order of the result's
	// columns.
	Center     []Number   `json:"center"`
	Covariance [][]Number `json:"covariance"`
	// Cutoff is the Quantile of the chi-square distribution with DF (the
	// number of columns) degrees of freedom; rows whose squared distance
	// exceeds it are flagged.
	DF       int    `json:"df"`
	Quantile Number `json:"quantile"`
	Cutoff   Number `json:"cutoff"`
	// Robust estimates only: Subset is the h rows the raw MCD rests on,
	// Kept the rows kept by reweighting, Factor the consistency factor of
	// the final covariance, all among the SampleSize rows fitted; Sampled
	// says those are a seeded uniform sample of the N rows.
	Subset     int     `json:"subset,omitempty"`
	Kept       int     `json:"kept,omitempty"`
	Factor     *Number `json:"consistency_factor,omitempty"`
	Sampled    bool    `json:"sampled,omitempty"`
	SampleSize int64   `json:"sample_size,omitempty"`
	Seed       uint64  `json:"seed"`
	// QQ pairs, at up to 200 probabilities, the chi-square quantile
	// (Fitted) with the quantile of the rows' squared distances (Sample);
	// from a seeded sample of at most 10,000 distances when more rows were
	// judged.
	QQ *QQ `json:"qq,omitempty"`
}

// Contribution is one column's share of a row's squared Mahalanobis
// distance: c_j = u_j (Σ⁻¹u)_j with u the row less the center. The
// contributions of a row sum to its distance; a negative one is a
// deviation in line with the others that partly offsets them.
type Contribution struct {
	Column string `json:"column"`
	Value  Number `json:"value"`
}
