package report

// Drift is what a drift rule found: what it compared with, and where the
// column moved.
type Drift struct {
	// Against is "baseline" or "reference"; Source is its path as the
	// policy writes it.
	Against string `json:"against"`
	Source  string `json:"source"`
	// BaseRows and Rows are the rows of the baseline (or reference) and of
	// the data judged.
	BaseRows int64 `json:"base_rows"`
	Rows     int64 `json:"rows"`
	// Exact says the measure compared every value of both sides; false
	// when one side is a baseline's sketch or a sample (the doc of the
	// measure states the approximation).
	Exact bool `json:"exact"`
	// Units is set when the ratio of the standard deviations is near a
	// power of ten, e.g. "x1000": a likely change of units.
	Units string `json:"units,omitempty"`
	// Moves lists the value ranges whose share changed most, largest
	// change first (numeric columns).
	Moves []DriftMove `json:"moves,omitempty"`
	// NewCategories lists values absent from the baseline with their
	// counts, most frequent first; Vanished lists baseline values absent
	// from the data, with their baseline counts.
	NewCategories []DriftCategory `json:"new_categories,omitempty"`
	Vanished      []DriftCategory `json:"vanished,omitempty"`
	// Histogram holds the whole histogram of the baseline (or reference)
	// and that of the data at the same edges (numeric columns).
	Histogram *DriftHistogram `json:"histogram,omitempty"`
}

// DriftHistogram is the histogram of both sides of a drift rule at the
// baseline's edges: its 5% quantiles as the baseline file records them,
// or those of the reference dataset (at most 50 bins; a baseline file
// with more has adjacent bins merged).
//
// Bin 0 holds [Edges[0], Edges[1]] and bin i > 0 holds (Edges[i],
// Edges[i+1]]. Edges[0] is the base's smallest value and the last edge
// its largest, so the edges are ascending except that the first bin is
// empty of width (Edges[0] = Edges[1]) when the smallest value alone
// holds 5% or more of the base.
//
// BaseShares[i] is the base's share of its values in bin i: a baseline's
// as its sketch estimates it, a reference's counted. Shares[i] is the
// data's share; Below and Above are the data's shares under Edges[0] and
// over the last edge, outside the base's range, so that Shares, Below and
// Above sum to 1. The binned measures (psi, jensen-shannon) count Below
// in the first bin and Above in the last. The data side is its seeded
// sample when it has more values than a drift rule keeps (Drift.Exact is
// then false).
type DriftHistogram struct {
	Edges      []Number `json:"edges"`
	BaseShares []Number `json:"base_shares"`
	Shares     []Number `json:"shares"`
	Below      Number   `json:"below"`
	Above      Number   `json:"above"`
}

// DriftMove is a value range (Lower, Upper] and its share of the values
// in the baseline and in the data; an open end is null.
type DriftMove struct {
	Lower     Number `json:"lower"`
	Upper     Number `json:"upper"`
	BaseShare Number `json:"base_share"`
	Share     Number `json:"share"`
}

// DriftCategory is a category and how many values it has.
type DriftCategory struct {
	Value string `json:"value"`
	Count int64  `json:"count"`
}
