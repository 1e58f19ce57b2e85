package report

import (
	"bytes"
	"encoding/json"
	"reflect"
	"testing"
	"time"
)

// pairsAndGroupsReport has a residuals rule with its flagged rows, a
// dependency with its violating groups, an association's cells and an
// ordered rule judged per site on filtered rows.
func pairsAndGroupsReport() *Report {
	cut, lo, hi := Number(3.874), Number(1.46), Number(1.52)
	fit1, fit2 := Number(171.647), Number(55.667)
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "relations", File: "relations.yaml", Hash: "sha256:00"},
		Rows:    400,
		Sources: []Source{{Path: "plant.csv", Format: "csv", Rows: 400}},
		Counts:  Counts{Pass: 1, Warn: 1, Fail: 2},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC),
		Results: []Result{
			{
				ID: "pairs.heating.residuals", Check: "linear", Columns: []string{"temp_c", "kwh"}, Verdict: Fail,
				Measure:   Measure{Name: "flagged row share", Value: 0.005, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Message:   "2 of 400 rows (0.5%) have |standardized residual| above 3.874 from the theil-sen line",
				Offending: &Offending{Count: 2, Rows: []Row{
					{Row: 300, Line: 301, Values: map[string]any{"temp_c": -38.0, "kwh": 135.0}, Score: 10.97, Fitted: &fit1},
					{Row: 137, Line: 138, Values: map[string]any{"temp_c": 9.9, "kwh": 87.72}, Score: 8.947, Fitted: &fit2},
				}},
				Pair: &Pair{Relation: "linear", N: 400, Sampled: true, SampleSize: 300, Seed: 1,
					Line: &Line{Fit: "theil-sen", Intercept: 79.64, Slope: -2.421, Scale: 3.93, SlopeLow: &lo, SlopeHigh: &hi,
						Rule: "standardized", Cutoff: &cut}},
			},
			{
				ID: "pairs.sku+category.determines", Check: "determines", Columns: []string{"sku", "category"}, Verdict: Fail,
				Measure:   Measure{Name: "violating row share", Value: 0.06, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Pair: &Pair{Relation: "determines", N: 300, ViolationCount: 3, Violations: []Violation{
					{A: "S-033", Rows: 11, Values: []ValueCount{{Value: "paint", Rows: 9}, {Value: "kitchen", Rows: 2}}},
					{A: "S-017", Rows: 7, Values: []ValueCount{{Value: "paint", Rows: 6}, {Value: "garden", Rows: 1}}},
				}},
			},
			{
				ID: "pairs.region+product.cramers-v", Check: "association", Columns: []string{"region", "product"}, Verdict: Warn,
				Measure:   Measure{Name: "Cramér's V", Value: 0.3614, Unit: "value"},
				Tolerance: Tolerance{Direction: "within", Warn: [2]Number{0.4, 1}},
				Pair: &Pair{Relation: "association", N: 300, Cells: []PairCell{
					{A: "N", B: "A", Observed: 44, Expected: 25.2, Residual: 3.745},
					{A: "N", B: "C", Observed: 7, Expected: 22.1, Residual: -3.212},
				}},
			},
			{
				ID: "pairs.booking.ordered", Check: "ordered", Columns: []string{"read_at", "booked_at"}, Verdict: Warn,
				Measure:   Measure{Name: "out-of-order share", Value: 0.0051, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0), Fail: Number(0.01)},
				Segments: &Segments{By: []string{"site"}, Where: `status == "final"`, Rows: 593, RowsRead: 600, GroupCount: 4,
					Counts: &Counts{Warn: 2, Pass: 1, Error: 1},
					Groups: []Group{
						{Key: map[string]any{"site": "s3"}, Rows: 197, Verdict: Warn, Measure: 0.0051, Offending: 1},
						{Key: map[string]any{"site": "s2"}, Rows: 198, Verdict: Warn, Measure: 0.0050, Offending: 1},
						{Key: map[string]any{"site": nil}, Rows: 1, Status: Error, Error: "too few rows"},
					}},
			},
		},
	}
}

// TestTextRelate renders what pair and segmented rules add: the line and
// its cutoff, the fitted column of flagged rows, violating groups, the
// cells of an association and the groups worst first.
func TestTextRelate(t *testing.T) {
	var b bytes.Buffer
	if err := WriteText(&b, pairsAndGroupsReport(), TextOptions{}); err != nil {
		t.Fatal(err)
	}
	golden(t, "relate.text", b.Bytes())
}

// TestRelateJSON: the fields pair rules and segments add keep their names
// and read back the same.
func TestRelateJSON(t *testing.T) {
	rep := pairsAndGroupsReport()
	js, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	var raw struct {
		Results []map[string]json.RawMessage `json:"results"`
	}
	if err := json.Unmarshal(js, &raw); err != nil {
		t.Fatal(err)
	}
	for _, want := range []struct {
		result int
		field  string
	}{{0, "pair"}, {0, "offending"}, {1, "pair"}, {2, "pair"}, {3, "segments"}} {
		if _, ok := raw.Results[want.result][want.field]; !ok {
			t.Errorf("result %d has no field %q: %s", want.result, want.field, js)
		}
	}
	for _, name := range []string{`"fitted":171.647`, `"slope_low":1.46`, `"violation_count":3`, `"rows_read":600`,
		`"group_count":4`, `"key":{"site":null}`, `"residual":-3.212`} {
		if !bytes.Contains(js, []byte(name)) {
			t.Errorf("JSON lacks %s", name)
		}
	}
	var back Report
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back.Results[0].Pair, rep.Results[0].Pair) || !reflect.DeepEqual(back.Results[3].Segments, rep.Results[3].Segments) {
		t.Errorf("read back:\n%+v\n%+v", back.Results[0].Pair, back.Results[3].Segments)
	}
}
