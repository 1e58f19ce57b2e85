package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

func num(v float64) *Number {
	n := Number(v)
	return &n
}

// extremesReport holds an esd result, a tukey result and a joint result
// that did not pass, each with listed rows.
func extremesReport() *Report {
	row := func(r int64, values map[string]any, score float64, cs ...Contribution) Row {
		return Row{Row: r, Line: r + 1, Values: values, Score: Number(score), Contributions: cs}
	}
	return &Report{
		Schema: SchemaVersion, Verdict: Fail, Policy: Policy{Name: "greenhouse", File: "greenhouse.yaml"},
		Rows: 600, Sources: []Source{{Path: "climate.csv", Format: "csv", Rows: 600}}, Counts: Counts{Fail: 3},
		Tool: Tool{Name: "assay", Version: "test"},
		Results: []Result{
			{
				ID: "columns.y.extremes", Check: "extremes", Columns: []string{"y"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "extreme share", Value: 3.0 / 54, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Message:   "3 of 54 values (5.56%) outliers by the generalized ESD test (3 found, up to 4 looked for, alpha 0.05)",
				Extremes: &Extremes{Method: "esd", N: 54, Upper: num(5.34), Center: 2.321, Scale: 1.183, Above: 3,
					Score: "R, the studentized deviation when the test removed the value",
					Steps: []ESDStep{{6.01, 3.118906, 3.158794}, {5.42, 2.942973, 3.151430}, {5.34, 3.179424, 3.143890}, {4.64, 2.810181, 3.136165}}},
				Offending: &Offending{Count: 3, Rows: []Row{row(52, map[string]any{"y": 5.34}, 3.179424),
					row(54, map[string]any{"y": 6.01}, 3.118906), row(53, map[string]any{"y": 5.42}, 2.942973)}},
			},
			{
				ID: "columns.air_temp_c.extremes", Check: "extremes", Columns: []string{"air_temp_c"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "extreme share", Value: 0.06, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.01), Fail: Number(0.05)},
				Extremes: &Extremes{Method: "tukey", N: 600, NaN: 2, Lower: num(14.88), Upper: num(29.52), Center: 22.22, Scale: 3.66,
					Below: 16, Above: 20, Score: "distance beyond the nearer fence, in IQRs"},
				Offending: &Offending{Count: 36, Rows: []Row{row(291, map[string]any{"air_temp_c": 41.2}, 3.178)}},
			},
			{
				ID: "joint.climate", Check: "joint", Columns: []string{"air_temp_c", "humidity_pct"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "outlying row share", Value: 0.01, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0), Fail: Number(0.005)},
				Joint: &Joint{Method: "mahalanobis", Estimator: "fast-mcd", N: 598, Skipped: 2, Center: []Number{22.24, 59.52},
					Covariance: [][]Number{{9, -19}, {-19, 64}}, DF: 2, Quantile: 0.999, Cutoff: 13.8155, Subset: 300, Kept: 587,
					Factor: num(1.0712), Sampled: true, SampleSize: 500, Seed: 1},
				Offending: &Offending{Count: 6, Rows: []Row{
					row(555, map[string]any{"air_temp_c": 15.68, "humidity_pct": 43.15}, 56.25,
						Contribution{"air_temp_c", 31.2}, Contribution{"humidity_pct", 25.05}),
					row(150, map[string]any{"air_temp_c": 15.69, "humidity_pct": 43.17}, 45.02,
						Contribution{"humidity_pct", 45.07}, Contribution{"air_temp_c", -0.05}),
				}},
			},
		},
	}
}

// TestTextExtremes compares the text of extremes and joint results with
// its golden file (-update rewrites it): the thresholds and counts, the
// ESD steps, the estimate and cutoff, and the columns contributing most
// beside each listed row.
func TestTextExtremes(t *testing.T) {
	var b bytes.Buffer
	if err := WriteText(&b, extremesReport(), TextOptions{}); err != nil {
		t.Fatal(err)
	}
	golden(t, "extremes.text", b.Bytes())
	for _, s := range []string{
		"extreme: at or above 5.34 · mean 2.321 · sd 1.183",
		"extreme: below 14.88 or above 29.52 · median 22.22 · IQR 3.66",
		"16 below, 20 above, of 600 values judged",
		"5.34  3.179   3.144",
		"robust estimate (FAST-MCD, reweighted, consistency factor 1.071) on a seeded sample of 500 rows (seed 1); 598 rows judged, 2 with a missing or non-finite value not judged",
		"cutoff: squared distance above 13.82 (chi-square 0.999 quantile, 2 degrees of freedom)",
		"humidity_pct 45.07, air_temp_c -0.05",
	} {
		if !strings.Contains(b.String(), s) {
			t.Errorf("text lacks %q", s)
		}
	}
}

// TestExtremesJSON: the fields extremes and joint rules add survive a
// round trip through the JSON report, absent sides left out.
func TestExtremesJSON(t *testing.T) {
	rep := extremesReport()
	js, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{`"extremes":{"method":"esd","n":54,"upper":5.34,`, `"steps":[{"value":6.01,"r":3.118906,"lambda":3.158794}`,
		`"contributions":[{"column":"air_temp_c","value":31.2}`, `"estimator":"fast-mcd"`, `"consistency_factor":1.0712`,
		`"covariance":[[9,-19],[-19,64]]`} {
		if !bytes.Contains(js, []byte(s)) {
			t.Errorf("JSON lacks %s", s)
		}
	}
	if bytes.Contains(js, []byte(`"lower":null`)) {
		t.Error("an absent threshold is written as null")
	}
	var back Report
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatal(err)
	}
	e, j := back.Results[0].Extremes, back.Results[2].Joint
	if e.Lower != nil || *e.Upper != 5.34 || len(e.Steps) != 4 || j.Kept != 587 || float64(*j.Factor) != 1.0712 ||
		back.Results[2].Offending.Rows[1].Contributions[1].Value != -0.05 || math.IsNaN(float64(e.Center)) {
		t.Errorf("round trip: %+v %+v", e, j)
	}
}
