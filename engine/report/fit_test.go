package report

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// fitReport is a report of two distribution rules: a failing fit on a
// sample, with candidates, a skipped one, regions with open ends and rows
// listed; and a passing categorical one, whose details are not printed.
func fitReport() *Report {
	num := func(f float64) *Number { n := Number(f); return &n }
	p := 0.0004
	return &Report{
		Schema: SchemaVersion, Verdict: Fail,
		Policy:  Policy{Name: "lab", File: "lab.yaml", Hash: "sha256:00"},
		Rows:    2_000_000,
		Sources: []Source{{Path: "lab.csv", Format: "csv", Rows: 2_000_000}},
		Counts:  Counts{Pass: 1, Fail: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 2, 13, 4, 5, 0, time.UTC),
		Results: []Result{
			{
				ID: "columns.dwell_s.distribution", Check: "distribution", Columns: []string{"dwell_s"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "KS distance", Value: 0.1259, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.05), Fail: Number(0.1)},
				Statistic: &Statistic{Name: "D", Value: 0.1262, N: 1_000_000},
				PValue:    &p,
				Estimates: map[string]float64{"shape": 2.071, "scale": 11.3},
				Message:   "KS distance 0.1259 between a sample of 1,000,000 of 2,000,000 values and gamma(shape=2.071, scale=11.3) (fitted); ks p-value 0.0004",
				Offending: &Offending{Count: 389, Rows: []Row{
					{Row: 162, Line: 163, Values: map[string]any{"dwell_s": 141.12}, Score: 13.35},
					{Row: 302, Line: 303, Values: map[string]any{"dwell_s": 104.59}, Score: 6.71},
				}},
				Fit: &Fit{
					Family: "gamma", Estimated: 2, N: 2_000_000, Sampled: true, SampleSize: 1_000_000, Seed: 1,
					Resolution: num(0.01), Test: "ks", Distance: 0.1259,
					Method: TestMethod{Kind: "asymptotic", Source: "Kolmogorov (1933) limit, at cell boundaries of step 0.01", Conservative: true},
					Candidates: []Candidate{
						{Family: "gamma", Estimates: map[string]float64{"shape": 2.071, "scale": 11.3}, LogLik: -5000.25, AIC: 10004.5, BIC: 10013.29},
						{Family: "weibull", Estimates: map[string]float64{"shape": 1.52, "scale": 26}, LogLik: -5100, AIC: 10204, BIC: 10212.79},
						{Family: "lognormal", LogLik: Number(math.NaN()), AIC: Number(math.NaN()), BIC: Number(math.NaN()),
							Skipped: "lognormal needs values above 0, but 1 of 2000000 values are not: 0"},
					},
					Regions: []Region{
						{Lo: num(7.255), Hi: num(21.465), Count: 315000, Observed: 0.315, Expected: 0.2},
						{Lo: num(49.08), Count: 68300, Observed: 0.0683, Expected: 0.05},
						{Hi: num(0.5), Count: 30000, Observed: 0.03, Expected: 0.02},
					},
				},
			},
			{
				ID: "columns.grade.distribution", Check: "distribution", Columns: []string{"grade"}, Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "TV distance", Value: 0.023, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.05), Fail: Number(0.1)},
				Fit: &Fit{Family: "categorical", N: 2000, SampleSize: 2000, Test: "chi-square", Distance: 0.023,
					Cells: []Cell{{Label: "A", Count: 1016, Expected: 0.5}}},
			},
		},
	}
}

// TestTextFit compares the text of distribution results with its golden
// file (-update rewrites it): the family on the rule line; for the failing
// one its parameters, test, sample, candidates and regions.
func TestTextFit(t *testing.T) {
	var b bytes.Buffer
	if err := WriteText(&b, fitReport(), TextOptions{}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join("testdata", "fit.text")
	if *update {
		if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if b.String() != string(want) {
		t.Errorf("text differs from %s (go test ./engine/report -update rewrites it):\n%s", path, b.String())
	}
	for _, s := range []string{"gamma · KS distance", "categorical · TV distance", "sample of 1,000,000 of 2,000,000 values",
		"above 49.08", "up to 0.5", "skipped: lognormal needs"} {
		if !strings.Contains(b.String(), s) {
			t.Errorf("text lacks %q", s)
		}
	}
}

// TestFitJSON: a fit survives a round trip through the JSON report, its
// undefined numbers written as null, its open region ends left out.
func TestFitJSON(t *testing.T) {
	rep := fitReport()
	js, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{`"aic":null`, `"skipped":"lognormal needs`, `{"lo":49.08,"count":68300`, `"sample_size":1000000`,
		`"conservative":true`, `"resolution":0.01`} {
		if !bytes.Contains(js, []byte(s)) {
			t.Errorf("JSON lacks %s", s)
		}
	}
	var back Report
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatal(err)
	}
	f, g := back.Results[0].Fit, rep.Results[0].Fit
	if f.Family != g.Family || f.SampleSize != g.SampleSize || *f.Regions[0].Hi != *g.Regions[0].Hi || f.Regions[1].Hi != nil ||
		!math.IsNaN(float64(f.Candidates[2].AIC)) || f.Candidates[0].Estimates["shape"] != 2.071 {
		t.Errorf("round trip: %+v", f)
	}
}
