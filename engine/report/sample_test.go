package report

import (
	"bytes"
	"flag"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"
)

var update = flag.Bool("update", false, "rewrite golden files")

// sampleReport is a report with every kind of result a renderer meets: a
// failure with offending rows from two files, a warning, passes, a rule
// that could not run, a skipped rule, an undefined measure, and texts that
// need escaping in XML and Markdown (markup, a pipe, control characters,
// invalid UTF-8).
func sampleReport() *Report {
	num := func(f float64) Number { return Number(f) }
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "soil <probes> & co", File: "policies/soil.yaml", Hash: "sha256:0123456789abcdef0123456789abcdef"},
		Rows:    12345,
		Sources: []Source{{Path: "day1.csv", Format: "csv", Rows: 6000}, {Path: "day2.csv", Format: "csv", Rows: 6345}},
		Counts:  Counts{Pass: 2, Warn: 1, Fail: 2, Error: 1, Skipped: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 2, 13, 4, 5, 0, time.UTC),
		Results: []Result{
			{
				ID: "table.key", Check: "key", Columns: []string{"probe", "depth_cm"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "duplicate key share", Value: num(4.0 / 12345), Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: num(0)},
				Message:   "4 of 12,345 rows (0.03%) share their key with another row (2 duplicated keys)",
				Offending: &Offending{Count: 4, Rows: []Row{
					{Row: 17, Source: "day1.csv", Line: 18, Values: map[string]any{"probe": "P<1>", "depth_cm": int64(10)}, Score: 2},
					{Row: 6017, Source: "day2.csv", Line: 18, Values: map[string]any{"probe": "P<1>", "depth_cm": int64(10)}, Score: 2},
					{Row: 30, Source: "day1.csv", Line: 31, Values: map[string]any{"probe": "a|b\x01", "depth_cm": nil}, Score: 2},
					{Row: 31, Source: "day1.csv", Line: 32, Values: map[string]any{"probe": "a|b\x01", "depth_cm": nil}, Score: 2},
				}},
				Policy: "policies/soil.yaml:27:3",
			},
			{
				ID: "columns.probe.type", Check: "type", Columns: []string{"probe"}, Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "type error share", Value: 0, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: num(0)},
				Message:   "0 of 12,345 non-null cells (0%) fail to parse as strings",
			},
			{
				ID: "columns.moisture_pct.maximum", Check: "maximum", Columns: []string{"moisture_pct"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "above maximum share", Value: num(3.0 / 12000), Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: num(0), Fail: num(0.0001)},
				Message:   "3 of 12,000 values (0.03%) are above 100 %",
				Offending: &Offending{Count: 3, Rows: []Row{
					{Row: 9000, Source: "day2.csv", Line: 3001, Values: map[string]any{"moisture_pct": 131.5}, Score: 31.5},
					{Row: 12, Source: "day1.csv", Line: 13, Values: map[string]any{"moisture_pct": 100.25}, Score: 0.25},
				}},
				Policy: "policies/soil.yaml:14:5",
			},
			{
				ID: "columns.moisture_pct.nulls", Check: "nulls", Columns: []string{"moisture_pct"}, Status: OK, Verdict: Warn,
				Measure:   Measure{Name: "null share", Value: num(0.125), Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: num(0.1), Fail: num(0.3)},
				Message:   "1,543 of 12,345 rows (12.5%) are missing a value",
				Offending: &Offending{Count: 1543, Rows: []Row{
					{Row: 4, Source: "day1.csv", Line: 5, Values: map[string]any{"moisture_pct": nil}, Score: 1},
				}},
			},
			{
				ID: "columns.temp_c.summary.mean", Check: "summary", Columns: []string{"temp_c"}, Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "mean", Value: num(14.9875), Unit: "value"},
				Tolerance: Tolerance{Direction: "within", Fail: [2]Number{5, 25}},
			},
			{
				ID: "rows.deep-soil-stays-cool", Check: "row", Columns: []string{"depth_cm", "temp_c"}, Status: Error, Verdict: Pass,
				Measure:   Measure{Name: "false row share", Value: num(math.NaN()), Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: num(0)},
				Error:     "rows 1-6000: column \"temp_c\" is string in the data <oops> \xff",
				Policy:    "policies/soil.yaml:31:5",
			},
			{
				ID: "columns.ph.type", Check: "type", Columns: []string{"ph"}, Status: Skipped, Verdict: Pass,
				Measure:   Measure{Name: "type error share", Value: num(0), Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: num(0)},
				Message:   `required column "ph" is absent from the data`,
			},
		},
		Duration: 1.23456,
	}
}

// golden compares got with testdata/name, rewriting it with -update.
func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("output differs from %s (run go test -update to accept):\ngot:\n%s", path, got)
	}
}
