package report

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// distributionReport is a report with the results a distribution rule
// gives: a numeric fit that fails, with candidates, regions, a histogram,
// a Q-Q plot and offending rows, and a categorical one that passes, with
// cells. The values are made up for the rendering (quantiles of two
// normals, for a cool shoulder), not a statistical reference.
func distributionReport() *Report {
	var xs []float64
	warm := distuv.Normal{Mu: 34.5, Sigma: 0.3}
	cool := distuv.Normal{Mu: 33.4, Sigma: 0.4}
	for i := range 240 {
		xs = append(xs, math.Round(warm.Quantile((float64(i)+0.5)/240)*100)/100)
	}
	for i := range 60 {
		xs = append(xs, math.Round(cool.Quantile((float64(i)+0.5)/60)*100)/100)
	}
	mean, sd := stat.MeanStdDev(xs, nil)
	fitted := distuv.Normal{Mu: mean, Sigma: sd}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range xs {
		lo, hi = min(lo, x), max(hi, x)
	}
	const bins = 12
	h := &Histogram{Counts: make([]int64, bins), Density: make([]Number, bins)}
	for j := 0; j <= bins; j++ {
		h.Edges = append(h.Edges, Number(lo+(hi-lo)*float64(j)/bins))
	}
	for _, x := range xs {
		h.Counts[min(bins-1, int((x-lo)/(hi-lo)*bins))]++
	}
	for j := range bins {
		h.Density[j] = Number(fitted.Prob(float64(h.Edges[j]+h.Edges[j+1]) / 2))
	}
	sorted := append([]float64(nil), xs...)
	slices.Sort(sorted)
	qq := &QQ{}
	for i := range 50 {
		p := (float64(i) + 0.5) / 50
		qq.Fitted = append(qq.Fitted, Number(fitted.Quantile(p)))
		qq.Sample = append(qq.Sample, Number(stat.Quantile(p, stat.Empirical, sorted, nil)))
	}
	num := func(f float64) *Number { n := Number(f); return &n }
	pv := 0.0004
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "brood-nest", File: "brood.yaml", Hash: "sha256:00ff"},
		Rows:    300,
		Sources: []Source{{Path: "brood.csv", Format: "csv", Rows: 300}},
		Counts:  Counts{Pass: 2, Fail: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 9, 8, 30, 0, 0, time.UTC),
		Units:   map[string]string{"brood_temp_c": "°C"},
		Results: []Result{
			{
				ID: "columns.brood_temp_c.distribution", Check: "distribution", Columns: []string{"brood_temp_c"},
				Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "KS distance", Value: 0.1123, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.05), Fail: Number(0.1)},
				Statistic: &Statistic{Name: "D", Value: 0.1123, N: 300},
				PValue:    &pv,
				Estimates: map[string]float64{"mean": mean, "sd": sd},
				Message:   "KS distance 0.1123 between 300 values and normal (fitted)",
				Offending: &Offending{Count: 61, Rows: []Row{
					{Row: 300, Line: 301, Values: map[string]any{"brood_temp_c": 32.5}, Score: 3.1},
					{Row: 299, Line: 300, Values: map[string]any{"brood_temp_c": 32.73}, Score: 2.4},
					{Row: 298, Line: 299, Values: map[string]any{"brood_temp_c": 32.84}, Score: 2.1},
				}},
				Policy: "brood.yaml:7:5",
				Fit: &Fit{
					Family: "normal", Estimated: 2, N: 300, SampleSize: 300, Seed: 1,
					Resolution: num(0.01), Test: "ks",
					Method:   TestMethod{Kind: "asymptotic", Source: "Kolmogorov (1933)", Conservative: true},
					Distance: 0.1123,
					Candidates: []Candidate{
						{Family: "normal", Estimates: map[string]float64{"mean": mean, "sd": sd}, LogLik: -250.5, AIC: 505, BIC: 512.4},
						{Family: "lognormal", Estimates: map[string]float64{"meanlog": 3.53, "sdlog": 0.018}, LogLik: -251, AIC: 506, BIC: 513.4},
						{Family: "gamma", Skipped: "did not converge", LogLik: Number(math.NaN()), AIC: Number(math.NaN()), BIC: Number(math.NaN())},
					},
					Regions:   []Region{{Hi: num(33.9), Count: 61, Observed: 0.2033, Expected: 0.1209}},
					QQ:        qq,
					Histogram: h,
				},
			},
			{
				ID: "columns.frame.distribution", Check: "distribution", Columns: []string{"frame"},
				Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "TV distance", Value: 0.02, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.05), Fail: Number(0.1)},
				Fit: &Fit{
					Family: "categorical", N: 300, SampleSize: 300, Test: "chi-square", DF: 2,
					Method:   TestMethod{Kind: "asymptotic", Source: "Pearson (1900)"},
					Distance: 0.02,
					Cells: []Cell{
						{Label: "brood", Count: 150, Expected: 0.5},
						{Label: "honey", Count: 96, Expected: 0.3},
						{Label: "pollen", Count: 54, Expected: 0.2},
					},
				},
			},
			{
				ID: "table.rows", Check: "rows", Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "row count", Value: 300, Unit: "count"},
				Tolerance: Tolerance{Direction: "within", Fail: [2]Number{100, Number(math.Inf(1))}},
			},
		},
		Duration: 0.25,
	}
}

// outlierReport is a report with the results of extremes and joint rules:
// Tukey fences with a box plot, a histogram and three listed values; a
// z-score rule that kept no values to plot; and a joint rule with its
// distances against chi-square quantiles and rows with their columns'
// contributions. The numbers are made up for the rendering.
func outlierReport() *Report {
	num := func(f float64) *Number { n := Number(f); return &n }
	counts := []int64{1, 0, 0, 30, 200, 66, 0, 0, 1, 1}
	h := &Histogram{Counts: counts}
	for i := range len(counts) + 1 {
		h.Edges = append(h.Edges, Number(470+7.5*float64(i)))
	}
	chi2 := distuv.ChiSquared{K: 2}
	qq := &QQ{}
	for i := range 40 {
		p := (float64(i) + 0.5) / 40
		d := chi2.Quantile(p)
		if i >= 38 {
			d += 20 * float64(i-37) // two rows far out
		}
		qq.Fitted = append(qq.Fitted, Number(chi2.Quantile(p)))
		qq.Sample = append(qq.Sample, Number(d))
	}
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "filling-line", File: "line.yaml", Hash: "sha256:0a0b"},
		Rows:    300,
		Sources: []Source{{Path: "line.csv", Format: "csv", Rows: 300}},
		Counts:  Counts{Warn: 1, Pass: 1, Fail: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 9, 9, 0, 0, 0, time.UTC),
		Units:   map[string]string{"fill_g": "g", "temp_c": "°C"},
		Results: []Result{
			{
				ID: "columns.fill_g.extremes", Check: "extremes", Columns: []string{"fill_g"}, Status: OK, Verdict: Warn,
				Measure:   Measure{Name: "extreme share", Value: 0.01, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0), Fail: Number(0.02)},
				Message:   "3 of 300 values (1%) beyond Tukey's fences [490.2, 510.7]",
				Estimates: map[string]float64{"lower": 490.2, "upper": 510.7},
				Offending: &Offending{Count: 3, Rows: []Row{
					{Row: 250, Line: 251, Values: map[string]any{"fill_g": 545.0}, Score: 6.7},
					{Row: 120, Line: 121, Values: map[string]any{"fill_g": 470.0}, Score: 3.97},
					{Row: 40, Line: 41, Values: map[string]any{"fill_g": int64(530)}, Score: 3.79},
				}},
				Extremes: &Extremes{
					Method: "tukey", N: 300, Lower: num(490.2), Upper: num(510.7), Center: 499.9, Scale: 5.1,
					Below: 1, Above: 2, Score: "distance beyond the nearer fence, in IQRs",
					Box:       &Box{Min: 470, Q1: 497.9, Median: 499.9, Q3: 503, Max: 545, WhiskerLo: 491.3, WhiskerHi: 509.8},
					Histogram: h,
				},
			},
			{
				ID: "columns.temp_c.extremes", Check: "extremes", Columns: []string{"temp_c"}, Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "extreme share", Value: 0, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0.01)},
				Message:   "no value beyond 3 sd of the mean",
				Extremes: &Extremes{
					Method: "zscore", N: 300, Lower: num(11.2), Upper: num(28.8), Center: 20, Scale: 2.93,
					Score: "distance from the mean, in sd",
				},
			},
			{
				ID: "joint.climate", Check: "joint", Columns: []string{"temp_c", "fill_g"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "outlying row share", Value: 2.0 / 300, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0), Fail: Number(0.005)},
				Message:   "2 of 300 rows (0.67%) lie beyond the squared Mahalanobis distance 13.82",
				Estimates: map[string]float64{"cutoff": 13.82, "center.temp_c": 20, "center.fill_g": 500},
				Offending: &Offending{Count: 2, Rows: []Row{
					{Row: 7, Line: 8, Values: map[string]any{"temp_c": 27.5, "fill_g": 491.0}, Score: 48.2,
						Contributions: []Contribution{{Column: "temp_c", Value: 30.1}, {Column: "fill_g", Value: 18.1}}},
					{Row: 99, Line: 100, Values: map[string]any{"temp_c": 13.0, "fill_g": 508.5}, Score: 27.4,
						Contributions: []Contribution{{Column: "fill_g", Value: 15.2}, {Column: "temp_c", Value: 12.2}}},
				}},
				Joint: &Joint{
					Method: "mahalanobis", Estimator: "classical", N: 300, Skipped: 4,
					Center:     []Number{20, 500},
					Covariance: [][]Number{{8.6, -3.1}, {-3.1, 26}},
					DF:         2, Quantile: 0.999, Cutoff: 13.82, Seed: 1,
					QQ: qq,
				},
			},
		},
		Duration: 0.5,
	}
}

// relationReport is a report with the results of pair rules (a linear
// line with flagged residuals, an order between two columns, an
// association's cells, a column that should determine another) and of a
// rule judged by groups. The numbers are made up for the rendering.
func relationReport() *Report {
	num := func(f float64) *Number { n := Number(f); return &n }
	pts := &Points{}
	for i := range 60 {
		x := 5 + 0.5*float64(i)
		pts.X = append(pts.X, Number(x))
		pts.Y = append(pts.Y, Number(2+1.5*x+math.Sin(float64(i))))
	}
	ordered := &Points{}
	for i := range 30 {
		ordered.X = append(ordered.X, Number(i))
		ordered.Y = append(ordered.Y, Number(float64(i)+2+math.Cos(float64(i))))
	}
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "greenhouse", File: "house.yaml", Hash: "sha256:0c0d"},
		Rows:    1000,
		Sources: []Source{{Path: "house.csv", Format: "csv", Rows: 1000}},
		Counts:  Counts{Fail: 3, Warn: 1, Pass: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 9, 10, 0, 0, 0, time.UTC),
		Units:   map[string]string{"outside_c": "°C", "heater_kwh": "kWh"},
		Results: []Result{
			{
				ID: "pairs.heat", Check: "linear", Columns: []string{"outside_c", "heater_kwh"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "far row share", Value: 0.002, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Message:   "2 of 1,000 rows have |standardized residual| above 4 from the theil-sen line",
				Estimates: map[string]float64{"intercept": 2, "slope": 1.5, "scale": 0.7, "cutoff": 4},
				Offending: &Offending{Count: 2, Rows: []Row{
					{Row: 17, Line: 18, Values: map[string]any{"outside_c": 10.0, "heater_kwh": 30.0}, Score: 16.4, Fitted: num(17)},
					{Row: 410, Line: 411, Values: map[string]any{"outside_c": 25.0, "heater_kwh": 20.5}, Score: 6.9, Fitted: num(39.5)},
				}},
				Pair: &Pair{
					Relation: "linear", N: 1000, Sampled: true, SampleSize: 500, Seed: 1, Points: pts,
					Line: &Line{Fit: "theil-sen", Intercept: 2, Slope: 1.5, Scale: 0.7, SlopeLow: num(1.48), SlopeHigh: num(1.52),
						Rule: "standardized", Cutoff: num(4)},
				},
			},
			{
				ID: "pairs.min-below-max", Check: "ordered", Columns: []string{"min_c", "max_c"}, Status: OK, Verdict: Warn,
				Measure:   Measure{Name: "out of order share", Value: 0.001, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0), Fail: Number(0.01)},
				Offending: &Offending{Count: 1, Rows: []Row{
					{Row: 5, Line: 6, Values: map[string]any{"min_c": 21.0, "max_c": 12.0}, Score: 9},
				}},
				Pair: &Pair{Relation: "ordered", N: 1000, Points: ordered},
			},
			{
				ID: "pairs.bay-crop", Check: "association", Columns: []string{"bay", "crop"}, Status: OK, Verdict: Pass,
				Measure:   Measure{Name: "Cramér's V", Value: 0.05, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0.3)},
				Statistic: &Statistic{Name: "chi-square", Value: 7.5, N: 1000},
				Pair: &Pair{Relation: "association", N: 1000, Cells: []PairCell{
					{A: "B1", B: "tomato", Observed: 140, Expected: 125, Residual: 1.342},
					{A: "B2", B: "<basil>", Observed: 110, Expected: 125, Residual: -1.342},
				}},
			},
			{
				ID: "pairs.sensor-bay", Check: "determines", Columns: []string{"sensor", "bay"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "conflicting row share", Value: 0.012, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Pair: &Pair{Relation: "determines", N: 1000, ViolationCount: 3, Violations: []Violation{
					{A: "S-07", Rows: 8, Values: []ValueCount{{Value: "B1", Rows: 6}, {Value: "B2", Rows: 2}}},
				}},
			},
			{
				ID: "columns.co2_ppm.summary.mean", Check: "summary", Columns: []string{"co2_ppm"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "mean", Value: 1250, Unit: "value"},
				Tolerance: Tolerance{Direction: "within", Fail: [2]Number{400, 1200}},
				Message:   "the mean of bay B3 is 1,250, outside [400, 1200]",
				Segments: &Segments{
					By: []string{"bay"}, Where: "crop == \"tomato\"", Rows: 600, RowsRead: 1000, GroupCount: 3,
					Counts: &Counts{Fail: 1, Pass: 2},
					Groups: []Group{
						{Key: map[string]any{"bay": "B3"}, Rows: 200, Status: OK, Verdict: Fail, Measure: 1250},
						{Key: map[string]any{"bay": "B1"}, Rows: 200, Status: OK, Verdict: Pass, Measure: 800},
						{Key: map[string]any{"bay": nil}, Rows: 200, Status: Error, Error: "no values"},
					},
				},
			},
		},
		Duration: 0.75,
	}
}

// driftReport is a report with the results of drift rules: a numeric
// column whose values grew a thousandfold (all of them now above the
// baseline's range), one that shifted against a reference whose smallest
// value holds a fifth of it (a first bin of no width), each with both
// histograms, and a categorical one with a new value. The numbers are
// made up for the rendering.
func driftReport() *Report {
	open := Number(math.NaN())
	return &Report{
		Schema:  SchemaVersion,
		Verdict: Fail,
		Policy:  Policy{Name: "batches", File: "batches.yaml", Hash: "sha256:0e0f"},
		Rows:    1000,
		Sources: []Source{{Path: "batch.csv", Format: "csv", Rows: 1000}},
		Counts:  Counts{Fail: 2, Warn: 1},
		Tool:    Tool{Name: "assay", Version: "0.1.0"},
		Started: time.Date(2025, 6, 9, 11, 0, 0, 0, time.UTC),
		Units:   map[string]string{"weight": "kg", "yield": "t/ha"},
		Results: []Result{
			{
				ID: "columns.weight.drift.ks", Check: "drift", Columns: []string{"weight"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "KS distance", Value: 1, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.1), Fail: Number(0.2)},
				Message:   "KS distance 1 between the data and the baseline",
				Drift: &Drift{
					Against: "baseline", Source: "reference.baseline.json", BaseRows: 1000, Rows: 1000, Units: "x1000",
					Moves: []DriftMove{
						{Lower: 66.91, Upper: open, BaseShare: 0.049, Share: 1},
						{Lower: 45.55, Upper: 46.87, BaseShare: 0.053, Share: 0},
						{Lower: open, Upper: 33.79, BaseShare: 0.052, Share: 0},
					},
					Histogram: &DriftHistogram{
						Edges:      []Number{22.4, 33.79, 38.2, 42, 45.55, 46.87, 51.3, 57, 66.91, 81.2},
						BaseShares: []Number{0.052, 0.11, 0.13, 0.15, 0.053, 0.16, 0.17, 0.126, 0.049},
						Shares:     []Number{0, 0, 0, 0, 0, 0, 0, 0, 0},
						Above:      1,
					},
				},
			},
			{
				ID: "columns.yield.drift.psi", Check: "drift", Columns: []string{"yield"}, Status: OK, Verdict: Warn,
				Measure:   Measure{Name: "PSI", Value: 0.16, Unit: "value"},
				Tolerance: Tolerance{Direction: "at most", Warn: Number(0.1), Fail: Number(0.25)},
				Drift: &Drift{
					Against: "reference", Source: "reference.csv", BaseRows: 1000, Rows: 1000, Exact: true,
					Moves: []DriftMove{
						{Lower: 4, Upper: 6, BaseShare: 0.2, Share: 0.35},
						{Lower: open, Upper: 0, BaseShare: 0.2, Share: 0.1},
					},
					Histogram: &DriftHistogram{
						Edges:      []Number{0, 0, 2, 4, 6, 9},
						BaseShares: []Number{0.2, 0.2, 0.2, 0.2, 0.2},
						Shares:     []Number{0.08, 0.15, 0.2, 0.35, 0.1},
						Below:      0.02,
						Above:      0.1,
					},
				},
			},
			{
				ID: "columns.site.drift.new-categories", Check: "drift", Columns: []string{"site"}, Status: OK, Verdict: Fail,
				Measure:   Measure{Name: "new category share", Value: 0.02, Unit: "share"},
				Tolerance: Tolerance{Direction: "at most", Fail: Number(0)},
				Drift: &Drift{
					Against: "reference", Source: "reference.csv", BaseRows: 1000, Rows: 1000, Exact: true,
					NewCategories: []DriftCategory{{Value: "<Z>", Count: 20}},
					Vanished:      []DriftCategory{{Value: "Q", Count: 3}},
				},
			},
		},
		Duration: 0.3,
	}
}

func renderHTML(t *testing.T, r *Report) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := WriteHTML(&b, r); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestHTMLGolden(t *testing.T) {
	for _, c := range []struct {
		name string
		r    *Report
	}{
		{"sample.html", sampleReport()},
		{"distribution.html", distributionReport()},
		{"outliers.html", outlierReport()},
		{"relations.html", relationReport()},
		{"drift.html", driftReport()},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := renderHTML(t, c.r)
			if again := renderHTML(t, c.r); !bytes.Equal(got, again) {
				t.Fatal("two renderings of the same report differ")
			}
			golden(t, c.name, got)
		})
	}
}

// TestHTMLStructure parses the page and checks it against the report: a
// section per rule headed by its id, as many offending rows listed as the
// report lists, and a chart for each kind of plot data a result carries,
// each with a title and a description.
func TestHTMLStructure(t *testing.T) {
	for _, r := range []*Report{sampleReport(), distributionReport(), outlierReport(), relationReport(), driftReport()} {
		t.Run(r.Policy.Name, func(t *testing.T) {
			doc := parseHTML(t, renderHTML(t, r))
			sections := doc.findAll(func(n *node) bool { return n.tag == "section" && n.hasClass("rule") })
			byID := map[string]*node{}
			for _, s := range sections {
				if code := s.find(func(n *node) bool { return n.tag == "code" && n.parent.tag == "h3" }); code != nil {
					byID[code.text()] = s
				}
			}
			if len(sections) != len(r.Results) || len(byID) != len(r.Results) {
				t.Fatalf("%d rule sections, %d headed by a rule id, want %d", len(sections), len(byID), len(r.Results))
			}
			for _, res := range r.Results {
				s := byID[res.ID]
				if s == nil {
					t.Errorf("no section for rule %s", res.ID)
					continue
				}
				var listed int
				if tb := s.find(func(n *node) bool { return n.tag == "table" && n.hasClass("offending") }); tb != nil {
					listed = len(tb.findAll(func(n *node) bool { return n.tag == "tr" && n.parent.tag == "tbody" }))
					if cap := tb.find(func(n *node) bool { return n.tag == "caption" }); cap == nil ||
						!strings.Contains(cap.text(), groupDigits(res.Offending.Count)) {
						t.Errorf("%s: offending table caption does not give the count %d", res.ID, res.Offending.Count)
					}
				}
				want := 0
				if res.Offending != nil && res.Status == OK {
					want = len(res.Offending.Rows)
				}
				if listed != want {
					t.Errorf("%s: %d offending rows in the table, want %d", res.ID, listed, want)
				}
				svgs := s.findAll(func(n *node) bool { return n.tag == "svg" })
				if got, want := len(svgs), chartData(res); got != want {
					t.Errorf("%s: %d charts, want %d", res.ID, got, want)
				}
				for _, svg := range svgs {
					if svg.attr["viewBox"] == "" || svg.attr["role"] != "img" {
						t.Errorf("%s: chart without viewBox or role: %v", res.ID, svg.attr)
					}
					title := svg.find(func(n *node) bool { return n.tag == "title" })
					desc := svg.find(func(n *node) bool { return n.tag == "desc" })
					if title == nil || desc == nil || title.text() == "" || desc.text() == "" {
						t.Errorf("%s: chart without a title or a description", res.ID)
					}
				}
				if d := res.Drift; d != nil && d.Histogram != nil {
					overlay(t, res, svgs)
				}
			}
		})
	}
}

// overlay checks that a numeric drift result's section has the chart of
// both histograms: titled so, and its description giving the number of
// bins.
func overlay(t *testing.T, res Result, svgs []*node) {
	t.Helper()
	h := res.Drift.Histogram
	for _, svg := range svgs {
		title := svg.find(func(n *node) bool { return n.tag == "title" })
		if title == nil || !strings.HasPrefix(title.text(), "Histograms of "+res.Columns[0]+" now and in the "+res.Drift.Against) {
			continue
		}
		desc := svg.find(func(n *node) bool { return n.tag == "desc" })
		if want := fmt.Sprintf("in each of %d bins", len(h.Shares)); desc == nil || !strings.Contains(desc.text(), want) {
			t.Errorf("%s: overlay description lacks %q", res.ID, want)
		}
		return
	}
	t.Errorf("%s: no chart of the histograms overlaid", res.ID)
}

// chartData counts the kinds of plot data a result carries.
func chartData(res Result) int {
	var has []bool
	if f := res.Fit; f != nil {
		has = append(has, f.Histogram != nil, f.QQ != nil, len(f.Cells) > 0)
	}
	if e := res.Extremes; e != nil {
		has = append(has, e.Histogram != nil, e.Box != nil)
	}
	if j := res.Joint; j != nil {
		has = append(has, j.QQ != nil)
	}
	if pr := res.Pair; pr != nil {
		has = append(has, pr.Points != nil)
	}
	if d := res.Drift; d != nil {
		has = append(has, d.Histogram != nil)
	}
	n := 0
	for _, h := range has {
		if h {
			n++
		}
	}
	return n
}

// TestHTMLEscapes checks that markup in report texts, in table cells and
// in chart labels, reaches the page as text.
func TestHTMLEscapes(t *testing.T) {
	r := distributionReport()
	r.Policy.Name = `<script>alert("policy")</script>`
	res := &r.Results[0]
	col := `temp<b>&"c`
	res.Columns = []string{col}
	res.Message = `<img src=x onerror=alert(1)>`
	res.Offending.Rows[0].Values = map[string]any{col: "<i>hot</i>"}
	r.Units = map[string]string{col: "<u>"}
	out := string(renderHTML(t, r))
	for _, bad := range []string{"<script>", "<b>", "<img", "<i>", "<u>"} {
		if strings.Contains(out, bad) {
			t.Errorf("page contains unescaped %q", bad)
		}
	}
	for _, want := range []string{
		"&lt;script&gt;alert(&#34;policy&#34;)&lt;/script&gt;", // the heading
		"&lt;img src=x onerror=alert(1)&gt;",                   // the message
		"&lt;i&gt;hot&lt;/i&gt;",                               // a table cell
		"temp&lt;b&gt;&amp;&#34;c (&lt;u&gt;)",                 // a chart's axis label, as vgsvg escapes it
	} {
		if !strings.Contains(out, want) {
			t.Errorf("page lacks the escaped text %s", want)
		}
	}
	parseHTML(t, []byte(out))
}

// node is an element of a parsed page.
type node struct {
	tag      string
	attr     map[string]string
	children []*node
	parent   *node
	chars    string
}

// parseHTML parses a page with encoding/xml in its HTML mode (void
// elements closed, HTML entities known), failing on markup it cannot
// nest.
func parseHTML(t *testing.T, page []byte) *node {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(page))
	d.Strict = false
	d.AutoClose = xml.HTMLAutoClose
	d.Entity = xml.HTMLEntity
	root := &node{tag: "#document"}
	cur := root
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("page does not parse: %v", err)
		}
		switch tok := tok.(type) {
		case xml.StartElement:
			n := &node{tag: tok.Name.Local, attr: map[string]string{}, parent: cur}
			for _, a := range tok.Attr {
				n.attr[a.Name.Local] = a.Value
			}
			cur.children = append(cur.children, n)
			cur = n
		case xml.EndElement:
			if cur.tag != tok.Name.Local {
				t.Fatalf("</%s> closes <%s>", tok.Name.Local, cur.tag)
			}
			cur = cur.parent
		case xml.CharData:
			cur.chars += string(tok)
		}
	}
	if cur != root {
		t.Fatalf("<%s> is not closed", cur.tag)
	}
	return root
}

func (n *node) findAll(match func(*node) bool) []*node {
	var out []*node
	for _, c := range n.children {
		if match(c) {
			out = append(out, c)
		}
		out = append(out, c.findAll(match)...)
	}
	return out
}

func (n *node) find(match func(*node) bool) *node {
	if all := n.findAll(match); len(all) > 0 {
		return all[0]
	}
	return nil
}

func (n *node) hasClass(c string) bool {
	return strings.Contains(" "+n.attr["class"]+" ", " "+c+" ")
}

// text is the element's text, its descendants' included.
func (n *node) text() string {
	s := n.chars
	for _, c := range n.children {
		s += c.text()
	}
	return strings.TrimSpace(s)
}
