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
