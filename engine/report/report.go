// Package report holds the result of a run (the JSON report contract) and
// its renderers. It knows nothing of data or checks; checks fill Results and
// the engine assembles a Report.
package report

import (
	"fmt"
	"math"
	"time"
)

// SchemaVersion identifies the JSON report layout. It changes when a field
// is removed or changes meaning; adding a field keeps it.
const SchemaVersion = "assay.report/1"

// Verdict is the judgement of a rule or a run. Verdicts are ordered:
// Pass < Warn < Fail, and combine by taking the worst.
type Verdict int

// Verdicts in order of severity.
const (
	Pass Verdict = iota
	Warn
	Fail
)

var verdictNames = [...]string{"pass", "warn", "fail"}

func (v Verdict) String() string {
	if v < Pass || v > Fail {
		return fmt.Sprintf("Verdict(%d)", int(v))
	}
	return verdictNames[v]
}

// Worst returns the more severe of v and w.
func (v Verdict) Worst(w Verdict) Verdict { return max(v, w) }

// MarshalText writes the verdict's name.
func (v Verdict) MarshalText() ([]byte, error) {
	if v < Pass || v > Fail {
		return nil, fmt.Errorf("invalid verdict %d", int(v))
	}
	return []byte(v.String()), nil
}

// UnmarshalText reads a verdict's name.
func (v *Verdict) UnmarshalText(b []byte) error {
	for i, n := range verdictNames {
		if n == string(b) {
			*v = Verdict(i)
			return nil
		}
	}
	return fmt.Errorf("unknown verdict %q", b)
}

// Status says whether a check could run. It is separate from the verdict: a
// check that could not run has no verdict of its own and is listed apart.
type Status int

// Execution statuses.
const (
	OK      Status = iota // the check ran; its verdict stands
	Error                 // the check could not run (see Result.Error)
	Skipped               // the check did not apply (see Result.Message)
)

var statusNames = [...]string{"ok", "error", "skipped"}

func (s Status) String() string {
	if s < OK || s > Skipped {
		return fmt.Sprintf("Status(%d)", int(s))
	}
	return statusNames[s]
}

// MarshalText writes the status's name.
func (s Status) MarshalText() ([]byte, error) {
	if s < OK || s > Skipped {
		return nil, fmt.Errorf("invalid status %d", int(s))
	}
	return []byte(s.String()), nil
}

// UnmarshalText reads a status's name.
func (s *Status) UnmarshalText(b []byte) error {
	for i, n := range statusNames {
		if n == string(b) {
			*s = Status(i)
			return nil
		}
	}
	return fmt.Errorf("unknown status %q", b)
}

// Report is the outcome of evaluating one policy on one set of sources.
type Report struct {
	Schema   string    `json:"schema"`
	Verdict  Verdict   `json:"verdict"`
	Policy   Policy    `json:"policy"`
	Rows     int64     `json:"rows"`
	Sources  []Source  `json:"sources"`
	Counts   Counts    `json:"counts"`
	Results  []Result  `json:"results"`
	Tool     Tool      `json:"tool"`
	Started  time.Time `json:"started"`
	Duration float64   `json:"duration_seconds"`

	// Units maps a column to the unit of its values, for the columns whose
	// policy gives one (e.g. "weight_kg": "kg"); charts and tables label
	// values with it.
	Units map[string]string `json:"units,omitempty"`
}

// Policy identifies the policy a report judged against.
type Policy struct {
	Name string `json:"name"`
	File string `json:"file"`
	Hash string `json:"hash"`
}

// Source is one input read.
type Source struct {
	Path   string `json:"path"`
	Format string `json:"format"` // csv, parquet, arrow-file, arrow-stream
	Rows   int64  `json:"rows"`
}

// Counts counts results by verdict, and those that could not run.
type Counts struct {
	Pass    int `json:"pass"`
	Warn    int `json:"warn"`
	Fail    int `json:"fail"`
	Error   int `json:"error"`
	Skipped int `json:"skipped"`
}

// Tool names the program that wrote the report.
type Tool struct {
	Name    string `json:"name"`
	Version string `json:"version"`
}

// Result is the outcome of one rule.
type Result struct {
	ID        string             `json:"id"`
	Check     string             `json:"check"`
	Columns   []string           `json:"columns"`
	Status    Status             `json:"status"`
	Verdict   Verdict            `json:"verdict"`
	Measure   Measure            `json:"measure"`
	Tolerance Tolerance          `json:"tolerance"`
	Statistic *Statistic         `json:"statistic,omitempty"`
	PValue    *float64           `json:"p_value,omitempty"`
	Estimates map[string]float64 `json:"estimates,omitempty"`
	Message   string             `json:"message,omitempty"`
	Error     string             `json:"error,omitempty"`
	Offending *Offending         `json:"offending,omitempty"`
	Policy    string             `json:"policy_position,omitempty"` // file:line:col of the rule
	// Fit is set by distribution rules: the family judged, how it was
	// fitted and tested, the candidates, where the data depart from it, and
	// what a plot needs. Statistic, PValue and Estimates then hold the
	// test's statistic (with the n it used), its p-value, and the
	// parameters of the family judged, given or estimated.
	Fit *Fit `json:"fit,omitempty"`
	// Pair is set by pair rules: the line, points and cells behind the
	// measure (see Pair).
	Pair *Pair `json:"pair,omitempty"`
	// Segments is set by rules with by or where: the rows judged and the
	// groups, worst first (see Segments).
	Segments *Segments `json:"segments,omitempty"`
	// Extremes is set by extremes rules: the method, the thresholds fitted
	// on the whole column, and what a box plot needs (see Extremes).
	Extremes *Extremes `json:"extremes,omitempty"`
	// Joint is set by joint rules: the estimate, the cutoff, the rows not
	// judged, and what a distance plot needs (see Joint).
	Joint *Joint `json:"joint,omitempty"`
	// Drift is set by drift rules: what the column was compared with,
	// where it moved and, for numbers, the histograms of both sides at the
	// same edges (see Drift and DriftHistogram).
	Drift *Drift `json:"drift,omitempty"`
}

// Fit is what a distribution rule found.
type Fit struct {
	// Family is the family judged, e.g. "lognormal": the only one written,
	// or the best candidate.
	Family string `json:"family"`
	// Estimated is how many of its parameters were estimated from the
	// data (by maximum likelihood); the others were given by the policy.
	Estimated int `json:"estimated"`
	// N is the number of values in the column (non-null), counted exactly.
	N int64 `json:"n"`
	// Sampled says the fit and the test ran on a seeded random sample of
	// SampleSize of the N values; otherwise SampleSize is N.
	Sampled    bool   `json:"sampled"`
	SampleSize int64  `json:"sample_size"`
	Seed       uint64 `json:"seed"`
	// Resolution is the step the family was compared at (its cells'
	// boundaries), detected or given; absent when the values were compared
	// as they are.
	Resolution *Number `json:"resolution,omitempty"`
	// Test names the goodness-of-fit test (ks, anderson-darling,
	// cramer-von-mises, shapiro-wilk, chi-square); Method says how its
	// p-value was obtained; DF is the chi-square degrees of freedom.
	Test   string     `json:"test"`
	Method TestMethod `json:"method"`
	DF     int        `json:"df,omitempty"`
	// Distance is the KS distance (largest gap between the empirical and
	// the fitted CDF) or, for chi-square, the total variation distance
	// between observed and expected cell shares, whichever measure the
	// rule judges.
	Distance Number `json:"distance"`
	// Candidates lists every family tried, the judged one first, ranked by
	// AIC then BIC; those that could not be fitted follow with the reason.
	Candidates []Candidate `json:"candidates"`
	// Regions are the value ranges (or categories, or leading digits)
	// whose observed share exceeds the fitted share the most, worst first;
	// set when the verdict is not pass.
	Regions []Region `json:"regions,omitempty"`
	// QQ holds up to 200 quantile pairs for a Q-Q plot (numeric families).
	QQ *QQ `json:"qq,omitempty"`
	// Histogram holds the sample's histogram with the fitted density
	// (numeric families).
	Histogram *Histogram `json:"histogram,omitempty"`
	// Cells holds, for categorical and Benford rules, every category (or
	// leading digit) with its observed count and expected share.
	Cells []Cell `json:"cells,omitempty"`
}

// TestMethod describes how a p-value was obtained.
type TestMethod struct {
	// Kind is exact, asymptotic, approximation or bootstrap.
	Kind string `json:"kind"`
	// Source names the publication or procedure followed.
	Source string `json:"source"`
	// Replicates is the number of parametric bootstrap replicates (0 when
	// no bootstrap was run).
	Replicates int `json:"replicates,omitempty"`
	// Conservative says the p-value is an upper bound of the true one.
	Conservative bool `json:"conservative,omitempty"`
}

// Candidate is one family a distribution rule tried.
type Candidate struct {
	Family string `json:"family"`
	// Estimates are its parameters, given or fitted.
	Estimates map[string]float64 `json:"estimates,omitempty"`
	// LogLik is the maximised log-likelihood; AIC = 2k - 2 LogLik and
	// BIC = k ln n - 2 LogLik, k the parameters estimated, n the values
	// fitted.
	LogLik Number `json:"log_likelihood"`
	AIC    Number `json:"aic"`
	BIC    Number `json:"bic"`
	// Skipped says why the family could not be fitted; the numbers are
	// then null.
	Skipped string `json:"skipped,omitempty"`
}

// Region is a range of values where the data hold more than the fitted
// family expects. Lo and Hi bound it (Lo <= x < Hi for continuous
// families, whole numbers Lo..Hi for discrete ones); Label names a
// category or leading digits instead. Observed and Expected are shares of
// the values, Count the values of the sample in it.
type Region struct {
	Lo       *Number `json:"lo,omitempty"`
	Hi       *Number `json:"hi,omitempty"`
	Label    string  `json:"label,omitempty"`
	Count    int64   `json:"count"`
	Observed Number  `json:"observed"`
	Expected Number  `json:"expected"`
}

// QQ is a Q-Q plot: Sample[i] is the sample quantile and Fitted[i] the
// fitted family's quantile at probability (i + 1/2)/len.
type QQ struct {
	Fitted []Number `json:"fitted"`
	Sample []Number `json:"sample"`
}

// Histogram counts the sample in bins Edges[i] <= x < Edges[i+1] (the last
// bin includes its upper edge). Density[i] is the fitted probability per
// unit of x in bin i: the density at its centre for continuous families,
// the bin's probability over its width for discrete ones; Counts[i]/(n
// width) is the sample's counterpart.
type Histogram struct {
	Edges   []Number `json:"edges"`
	Counts  []int64  `json:"counts"`
	Density []Number `json:"density"`
}

// Cell is one category (or leading digits) of a categorical or Benford
// rule: its observed count and its expected share.
type Cell struct {
	Label    string `json:"label"`
	Count    int64  `json:"count"`
	Expected Number `json:"expected"`
}

// Measure is the one number a rule is judged on. Value is NaN when the
// measure is undefined (e.g. the mean of no values); JSON then writes null.
type Measure struct {
	Name  string `json:"name"`
	Value Number `json:"value"`
	Unit  string `json:"unit"` // share, count or value
}

// Tolerance is the thresholds as the report shows them. For the directions
// "at most" and "at least" Warn and Fail hold one number each; for "within"
// they hold [lo, hi] intervals.
type Tolerance struct {
	Direction string `json:"direction"`
	Warn      any    `json:"warn"`
	Fail      any    `json:"fail"`
}

// Statistic is a test statistic with its name.
type Statistic struct {
	Name  string `json:"name"`
	Value Number `json:"value"`
	N     int64  `json:"n,omitempty"`
}

// Offending lists rows that break a rule. Count is exact; Rows holds at most
// the run's listing cap, worst first.
type Offending struct {
	Count int64 `json:"count"`
	Rows  []Row `json:"rows"`
}

// Row is one offending row. Row is the 1-based data-row number across all
// inputs in order, header excluded; Source and Line locate it in its file
// (Line is the file line where the row starts, for text inputs).
type Row struct {
	Row    int64          `json:"row"`
	Source string         `json:"source,omitempty"`
	Line   int64          `json:"line,omitempty"`
	Values map[string]any `json:"values"`
	Score  Number         `json:"score"`
	// Contributions split the squared distance of a row that a joint rule
	// flags among its columns, largest first (see Contribution).
	Contributions []Contribution `json:"contributions,omitempty"`
	// Fitted is, for rows a linear pair rule flags, the value of the
	// second column its line predicts from the first.
	Fitted *Number `json:"fitted,omitempty"`
}

// Number is a float64 that JSON writes as null when it is NaN or infinite,
// since JSON has no literal for those.
type Number float64

// MarshalJSON writes the number, or null.
func (n Number) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return fmt.Appendf(nil, "%v", f), nil
}

// UnmarshalJSON reads a number, or null as NaN.
func (n *Number) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*n = Number(math.NaN())
		return nil
	}
	var f float64
	if _, err := fmt.Sscan(string(b), &f); err != nil {
		return fmt.Errorf("report number %q: %w", b, err)
	}
	*n = Number(f)
	return nil
}
