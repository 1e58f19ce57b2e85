package report

// This file holds what pair rules and segmented rules add to a result.
// Every field is additive: a program that reads only the fields of
// SchemaVersion's first layout keeps working.

// Pair is what a pair rule found, with what a scatter plot of its two
// columns needs: the fitted line, a bounded sample of the points (the
// flagged points are the result's offending rows).
type Pair struct {
	// Relation is linear, monotonic, ordered, association or determines.
	Relation string `json:"relation"`
	// N counts the rows with both values, the rows the rule judged.
	N int64 `json:"n"`
	// Sampled says the fit or the coefficient rests on a seeded uniform
	// sample of SampleSize of the N pairs (Seed seeds it); otherwise
	// every pair was used.
	Sampled    bool   `json:"sampled,omitempty"`
	SampleSize int64  `json:"sample_size,omitempty"`
	Seed       uint64 `json:"seed,omitempty"`
	// Line is the line a linear rule fitted.
	Line *Line `json:"line,omitempty"`
	// Points is a seeded uniform sample of at most 500 of the pairs
	// (linear, monotonic and ordered rules), for a scatter plot.
	Points *Points `json:"points,omitempty"`
	// Cells are the cells of an association's contingency table that
	// depart most from independence, largest |Pearson residual| first, at
	// most 10.
	Cells []PairCell `json:"cells,omitempty"`
	// Violations are the values of A seen with several values of B
	// (determines), most rows first, at most the run's listing cap;
	// ViolationCount counts them all.
	Violations     []Violation `json:"violations,omitempty"`
	ViolationCount int         `json:"violation_count,omitempty"`
}

// Line is a fitted line y = Intercept + Slope·x.
type Line struct {
	// Fit is ols (least squares), theil-sen or huber.
	Fit       string `json:"fit"`
	Intercept Number `json:"intercept"`
	Slope     Number `json:"slope"`
	// Scale is the residual standard deviation: s = sqrt(SSE/(n-2)) for
	// least squares, median|residual|/0.6745 for the robust fits.
	Scale Number `json:"scale"`
	// SlopeLow and SlopeHigh bound, with 95% confidence, the exact
	// Theil-Sen slope when it was estimated from sampled pairs of points.
	SlopeLow  *Number `json:"slope_low,omitempty"`
	SlopeHigh *Number `json:"slope_high,omitempty"`
	// Rule and Cutoff say which rows a residuals rule flags: those whose
	// score (|studentized residual|, Cook's distance or |standardized
	// residual|) is above Cutoff.
	Rule   string  `json:"rule,omitempty"`
	Cutoff *Number `json:"cutoff,omitempty"`
}

// Points are pairs (X[i], Y[i]).
type Points struct {
	X []Number `json:"x"`
	Y []Number `json:"y"`
}

// PairCell is one combination of values of an association's columns:
// Observed rows hold it, Expected would under independence, and Residual
// is the Pearson residual (Observed - Expected)/sqrt(Expected).
type PairCell struct {
	A        string `json:"a"`
	B        string `json:"b"`
	Observed int64  `json:"observed"`
	Expected Number `json:"expected"`
	Residual Number `json:"residual"`
}

// Violation is a value of A seen with several values of B, Rows rows in
// all; Values lists those values of B with their rows, most rows first.
type Violation struct {
	A      string       `json:"a"`
	Rows   int64        `json:"rows"`
	Values []ValueCount `json:"values"`
}

// ValueCount is a value and how many rows hold it.
type ValueCount struct {
	Value string `json:"value"`
	Rows  int64  `json:"rows"`
}

// Segments says on which rows a rule was judged: those where its where
// expression held, in groups by the values of its by columns. With groups
// the result's measure, verdict, statistic and estimates are those of the
// worst group (Groups[0]); its offending count adds up every group's, and
// its offending rows are the worst of all groups.
type Segments struct {
	By    []string `json:"by,omitempty"`
	Where string   `json:"where,omitempty"`
	// Rows counts the rows judged (where the expression held) of RowsRead.
	Rows     int64 `json:"rows"`
	RowsRead int64 `json:"rows_read"`
	// GroupCount counts the groups formed, exactly, and Counts them by
	// verdict and status.
	GroupCount int     `json:"group_count,omitempty"`
	Counts     *Counts `json:"counts,omitempty"`
	// Groups lists the groups worst first (by verdict, then by how far the
	// measure lies on its bad side), those that could not be judged last;
	// at most the run's listing cap.
	Groups []Group `json:"groups,omitempty"`
}

// Group is the outcome of a rule on one group of rows.
type Group struct {
	// Key holds the group's value of each by column (null for missing).
	Key       map[string]any     `json:"key"`
	Rows      int64              `json:"rows"`
	Status    Status             `json:"status"`
	Verdict   Verdict            `json:"verdict"`
	Measure   Number             `json:"measure"`
	Offending int64              `json:"offending"`
	Estimates map[string]float64 `json:"estimates,omitempty"`
	Message   string             `json:"message,omitempty"`
	Error     string             `json:"error,omitempty"`
}
