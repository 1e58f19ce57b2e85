package checks

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"sort"
	"strconv"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/checks/outlier"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// extSpec is an extremes rule with the defaults a policy gets.
func extSpec(m rules.ExtremesMethod) rules.ExtremesSpec {
	s := rules.ExtremesSpec{Method: m, Alpha: rules.DefaultExtremesAlpha}
	switch m {
	case rules.ExtremesTukey:
		s.K, s.Alpha = outlier.DefaultTukeyK, 0
	case rules.ExtremesZScore:
		s.K, s.Alpha = outlier.DefaultZCutoff, 0
	case rules.ExtremesRobustZ:
		s.K, s.Alpha = outlier.DefaultRobustZCutoff, 0
	case rules.ExtremesESD:
		s.MaxOutliers = rules.DefaultMaxOutliers
	case rules.ExtremesTail:
		s.Distribution = rules.DistributionSpec{Families: []string{"normal"}}
	}
	return s
}

// runExt evaluates an extremes rule on xs (NaN for a missing value) cut
// into batches of at most size rows, with one accumulator, and with one
// accumulator per batch merged; the two must agree.
func runExt(t *testing.T, s rules.ExtremesSpec, tol rules.Tolerance, xs []float64, size int) report.Result {
	t.Helper()
	mem := checkedMem(t)
	var bs []*source.Batch
	for lo := 0; lo < len(xs); lo += size {
		b := numBatch(t, mem, int64(lo+1), xs[lo:min(len(xs), lo+size)])
		release(t, b)
		bs = append(bs, b)
	}
	c := compile(t, newRule(s, tol, "x"), envOf(bs[0], 20))
	res := run(t, c, bs...)
	sameJSON(t, "merged", runMerged(t, c, bs...), res, 1e-12)
	return res
}

// sameJSON fails unless two results write the same JSON, numbers to
// within rel (streamed moments merged in another order differ in their
// last bits).
func sameJSON(t *testing.T, name string, got, want report.Result, rel float64) {
	t.Helper()
	decode := func(r report.Result) any {
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatal(err)
		}
		var v any
		if err := json.Unmarshal(b, &v); err != nil {
			t.Fatal(err)
		}
		return v
	}
	var walk func(path string, g, w any)
	walk = func(path string, g, w any) {
		switch w := w.(type) {
		case map[string]any:
			gm, ok := g.(map[string]any)
			if !ok || len(gm) != len(w) {
				t.Errorf("%s %s: got %v, want %v", name, path, g, w)
				return
			}
			for k, v := range w {
				walk(path+"."+k, gm[k], v)
			}
		case []any:
			gl, ok := g.([]any)
			if !ok || len(gl) != len(w) {
				t.Errorf("%s %s: got %v, want %v", name, path, g, w)
				return
			}
			for i := range w {
				walk(fmt.Sprintf("%s[%d]", path, i), gl[i], w[i])
			}
		case float64:
			gf, ok := g.(float64)
			if !ok || math.Abs(gf-w) > rel*math.Abs(w) {
				t.Errorf("%s %s: got %v, want %v", name, path, g, w)
			}
		default:
			if g != w {
				t.Errorf("%s %s: got %v, want %v", name, path, g, w)
			}
		}
	}
	walk("result", decode(got), decode(want))
}

// plantedNormal is n seeded normal(50, 5) draws truncated at 2.5 sd, with
// the planted values at the given rows (1-based).
func plantedNormal(n int, seed uint64, planted map[int]float64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 11))
	xs := make([]float64, n)
	for i := range xs {
		z := rng.NormFloat64()
		for math.Abs(z) > 2.5 {
			z = rng.NormFloat64()
		}
		xs[i] = 50 + 5*z
	}
	for row, v := range planted {
		xs[row-1] = v
	}
	return xs
}

// TestExtremesFlagsByDefinition: every method flags the values its
// definition in package outlier flags, fitted on the whole column, and
// lists their rows by score; the counts are exact however the data are
// batched, and the measure is their share.
func TestExtremesFlagsByDefinition(t *testing.T) {
	planted := map[int]float64{7: 90, 300: 12, 512: 75, 901: 20.5}
	xs := plantedNormal(1000, 3, planted)
	sorted := slices.Clone(xs)
	slices.Sort(sorted)
	fences, _ := outlier.TukeyFences(sorted, 1.5)
	zs, _ := outlier.NewZScore(xs, 3)
	rz, _ := outlier.NewRobustZ(sorted, 3.5)
	for _, tc := range []struct {
		method rules.ExtremesMethod
		rule   outlier.Rule
	}{
		{rules.ExtremesTukey, fences},
		{rules.ExtremesZScore, zs},
		{rules.ExtremesRobustZ, rz},
	} {
		t.Run(string(tc.method), func(t *testing.T) {
			res := runExt(t, extSpec(tc.method), atMost(0.05), xs, 300)
			want := outlier.Scan(xs, tc.rule)
			count, rows, scores := listed(res)
			if count != int64(len(want)) || res.Measure.Value != report.Number(float64(len(want))/1000) {
				t.Fatalf("count %d measure %v, want %d", count, res.Measure.Value, len(want))
			}
			for i, w := range want {
				if rows[i] != int64(w.Index+1) || math.Abs(scores[i]-w.Score) > 1e-9*w.Score {
					t.Errorf("row %d: %d score %v, want %d score %v", i, rows[i], scores[i], w.Index+1, w.Score)
				}
			}
			for row := range planted {
				if !slices.Contains(rows, int64(row)) {
					t.Errorf("planted row %d not listed: %v", row, rows)
				}
			}
			e := res.Extremes
			if e == nil || e.N != 1000 || e.Below+e.Above != count || e.Lower == nil || e.Upper == nil {
				t.Fatalf("extremes %+v", e)
			}
		})
	}
}

// TestExtremesEstimates: the thresholds, center and scale reported are
// those of the definitions.
func TestExtremesEstimates(t *testing.T) {
	xs := plantedNormal(400, 5, map[int]float64{10: 100})
	sorted := slices.Clone(xs)
	slices.Sort(sorted)
	f, _ := outlier.TukeyFences(sorted, 2)
	s := extSpec(rules.ExtremesTukey)
	s.K = 2
	res := runExt(t, s, atMost(0.05), xs, 128)
	e := res.Extremes
	if res.Estimates["q1"] != f.Q1 || res.Estimates["q3"] != f.Q3 || float64(*e.Lower) != f.Lower || float64(*e.Upper) != f.Upper ||
		float64(e.Scale) != f.IQR() || float64(e.Center) != outlier.Quantile7(sorted, 0.5) {
		t.Errorf("tukey: estimates %v extremes %+v, want %+v", res.Estimates, e, f)
	}
	if b := e.Box; b == nil || float64(b.Min) != sorted[0] || float64(b.Max) != 100 || float64(b.WhiskerHi) != sorted[398] ||
		float64(b.Q1) != f.Q1 {
		t.Errorf("box %+v", e.Box)
	}
	var n int64
	for _, c := range e.Histogram.Counts {
		n += c
	}
	if n != 400 || len(e.Histogram.Edges) != len(e.Histogram.Counts)+1 || e.Histogram.Edges[0] != e.Box.Min {
		t.Errorf("histogram %+v", e.Histogram)
	}
	z := runExt(t, extSpec(rules.ExtremesZScore), atMost(0.05), xs, 128)
	zs, _ := outlier.NewZScore(xs, 3)
	if math.Abs(z.Estimates["mean"]-zs.Mean) > 1e-12*zs.Mean || math.Abs(z.Estimates["sd"]-zs.SD) > 1e-12*zs.SD {
		t.Errorf("zscore: mean %v sd %v streamed, %v %v in two passes", z.Estimates["mean"], z.Estimates["sd"], zs.Mean, zs.SD)
	}
	if h := z.Extremes.Histogram; h == nil || z.Extremes.Box != nil {
		t.Errorf("zscore keeps no values: box %+v; its second pass counts the histogram: %+v", z.Extremes.Box, h)
	}
}

// readRosner reads the NIST/SEMATECH e-Handbook's generalized ESD example
// (section 1.3.5.17.3; Rosner 1983), a copy of which package outlier
// keeps.
func readRosner(t *testing.T) []float64 {
	t.Helper()
	f, err := os.Open("outlier/testdata/nist_ehb_rosner_gesd.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var xs []float64
	for _, r := range recs[1:] {
		v, err := strconv.ParseFloat(r[0], 64)
		if err != nil {
			t.Fatal(err)
		}
		xs = append(xs, v)
	}
	return xs
}

// TestExtremesRosner: the esd rule on the e-Handbook's example finds its
// 3 outliers (6.01, 5.42 and 5.34, rows 54, 53, 52) and reports its ten
// steps; R_i and λ_i as published there, which are truncated to three
// decimals (shared/reference/VALUES.md, section 6.3).
func TestExtremesRosner(t *testing.T) {
	xs := readRosner(t)
	res := runExt(t, extSpec(rules.ExtremesESD), atMost(0), xs, 20)
	count, rows, _ := listed(res)
	if count != 3 || !slices.Equal(rows, []int64{52, 54, 53}) || res.Verdict != report.Fail {
		t.Fatalf("count %d rows %v verdict %s, want 3 rows 52, 54, 53 (by R_i) and fail", count, rows, res.Verdict)
	}
	published := [][2]float64{{3.118, 3.158}, {2.942, 3.151}, {3.179, 3.143}, {2.810, 3.136}, {2.815, 3.128},
		{2.848, 3.120}, {2.279, 3.111}, {2.310, 3.103}, {2.101, 3.094}, {2.067, 3.085}}
	steps := res.Extremes.Steps
	if len(steps) != 10 {
		t.Fatalf("%d steps, want 10", len(steps))
	}
	for i, p := range published {
		r, l := float64(steps[i].R), float64(steps[i].Lambda)
		if math.Trunc(r*1000)/1000 != p[0] || math.Trunc(l*1000)/1000 != p[1] {
			t.Errorf("step %d: R %v lambda %v, published %v %v", i+1, r, l, p[0], p[1])
		}
	}
	if e := res.Extremes; e.Lower != nil || e.Upper == nil || *e.Upper != 5.34 || e.Above != 3 {
		t.Errorf("extremes: lower %v upper %v above %d, want none, 5.34, 3", e.Lower, e.Upper, e.Above)
	}
	// With fewer values than the outliers looked for allow, the test
	// looks for as many as it can and says so.
	few := runExt(t, extSpec(rules.ExtremesESD), atMost(0), xs[:8], 20)
	if few.Status != report.OK || len(few.Extremes.Steps) != 6 {
		t.Errorf("8 values: %s, %d steps (%s), want 6", few.Status, len(few.Extremes.Steps), few.Message)
	}
}

// TestExtremesGrubbs: Grubbs' rule flags the value its test rejects, with
// the test's G and p-value, and none when the test does not reject.
func TestExtremesGrubbs(t *testing.T) {
	xs := plantedNormal(200, 9, map[int]float64{150: 85})
	g, _ := outlier.Grubbs(xs, 0.05, outlier.TwoSided)
	res := runExt(t, extSpec(rules.ExtremesGrubbs), atMost(0), xs, 64)
	count, rows, scores := listed(res)
	if !g.Outlier || count != 1 || rows[0] != 150 || scores[0] != g.G || float64(res.Statistic.Value) != g.G || *res.PValue != g.P {
		t.Errorf("count %d rows %v scores %v statistic %+v p %v, want row 150 with G %v p %v", count, rows, scores, res.Statistic, res.PValue, g.G, g.P)
	}
	clean := runExt(t, extSpec(rules.ExtremesGrubbs), atMost(0), plantedNormal(200, 9, nil), 64)
	if clean.Verdict != report.Pass || clean.Offending != nil || *clean.PValue < 0.05 {
		t.Errorf("clean data: %s %+v p %v", clean.Verdict, clean.Offending, *clean.PValue)
	}
}

// TestExtremesTail: the tail rule fits the column's family, flags the
// values whose tail probability is below alpha/(2n) under it (values the
// family cannot produce among them) and fits without those.
func TestExtremesTail(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	xs := make([]float64, 2000)
	for i := range xs {
		xs[i] = math.Exp(1 + 0.5*rng.NormFloat64())
	}
	xs[99], xs[1499] = 80, -3 // far in the upper tail; outside lognormal's support
	s := extSpec(rules.ExtremesTail)
	s.Distribution = rules.DistributionSpec{Families: []string{"lognormal", "gamma"}}
	res := runExt(t, s, atMost(0), xs, 500)
	count, rows, scores := listed(res)
	if count != 2 || !slices.Equal(rows, []int64{1500, 100}) || !math.IsInf(scores[0], 1) {
		t.Fatalf("count %d rows %v scores %v (%s)", count, rows, scores, res.Message)
	}
	if res.Estimates["meanlog"] < 0.95 || res.Estimates["meanlog"] > 1.05 || res.Extremes.Histogram.Density == nil {
		t.Errorf("estimates %v, histogram density %v", res.Estimates, res.Extremes.Histogram.Density)
	}
	// Given parameters are used as they are.
	s.Distribution = rules.DistributionSpec{Families: []string{"normal"}, Parameters: map[string]float64{"mean": 0, "sd": 1}}
	given := runExt(t, s, atMost(0), []float64{0.1, -0.5, 2, 4.2, 1, -4.1}, 4)
	// alpha/(2n) = 0.05/12: beyond ±2.638.
	if _, rows, _ := listed(given); !slices.Equal(rows, []int64{4, 6}) || given.Estimates["sd"] != 1 {
		t.Errorf("given parameters: rows %v estimates %v", rows, given.Estimates)
	}
}

// TestExtremesSpecialValues: missing and NaN values are not judged; ±Inf
// are extreme whatever the method and stay out of the fit.
func TestExtremesSpecialValues(t *testing.T) {
	xs := plantedNormal(100, 2, nil)
	xs[3], xs[40] = math.NaN(), math.Inf(1) // NaN in numBatch is a missing value
	xs[70] = math.Inf(-1)
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ, rules.ExtremesESD,
		rules.ExtremesGrubbs, rules.ExtremesTail} {
		res := runExt(t, extSpec(m), atMost(0.05), xs, 30)
		count, rows, scores := listed(res)
		e := res.Extremes
		if count != 2 || !slices.Equal(rows, []int64{41, 71}) || !math.IsInf(scores[0], 1) || e.N != 99 || e.Below != 1 || e.Above != 1 {
			t.Errorf("%s: count %d rows %v scores %v extremes %+v (%s)", m, count, rows, scores, e, res.Message)
		}
	}
}

// TestExtremesFewValues: an empty column passes, like other value rules;
// a method that needs more values than the column has is skipped, saying
// why; a constant column has no extreme value.
func TestExtremesFewValues(t *testing.T) {
	nan := math.NaN()
	empty := runExt(t, extSpec(rules.ExtremesTukey), atMost(0), []float64{nan, nan}, 2)
	if empty.Status != report.OK || empty.Verdict != report.Pass || empty.Measure.Value != 0 || empty.Message != "the column has no values" {
		t.Errorf("empty: %s %s %v %q", empty.Status, empty.Verdict, empty.Measure.Value, empty.Message)
	}
	two := runExt(t, extSpec(rules.ExtremesGrubbs), atMost(0), []float64{1, 2}, 2)
	if two.Status != report.Skipped || two.Message != "grubbs needs at least 3 finite values, the column has 2" {
		t.Errorf("two values: %s %q", two.Status, two.Message)
	}
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ, rules.ExtremesESD} {
		res := runExt(t, extSpec(m), atMost(0), []float64{0.1, 0.1, 0.1, 0.1, 0.1}, 2)
		if res.Status != report.OK || res.Verdict != report.Pass || res.Offending != nil {
			t.Errorf("%s on a constant: %s %s %+v (%s%s)", m, res.Status, res.Verdict, res.Offending, res.Message, res.Error)
		}
	}
}

// TestExtremesSecondPass: a rule asks for a second pass only when some
// value is extreme; zscore counts its values there.
func TestExtremesSecondPass(t *testing.T) {
	mem := checkedMem(t)
	clean := numBatch(t, mem, 1, plantedNormal(50, 1, nil))
	dirty := numBatch(t, mem, 1, plantedNormal(50, 1, map[int]float64{5: 500}))
	release(t, clean, dirty)
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore} {
		c := compile(t, newRule(extSpec(m), atMost(0), "x"), envOf(clean, 5))
		for _, tc := range []struct {
			name string
			b    *source.Batch
			want bool
		}{{"clean", clean, false}, {"dirty", dirty, true}} {
			a := c.NewAccumulator()
			observe(t, a, tc.b)
			next := a.(Rescanner).SecondPass()
			if (next != nil) != tc.want {
				t.Errorf("%s %s: second pass %v, want %v", m, tc.name, next != nil, tc.want)
			}
			if m == rules.ExtremesZScore && tc.want && !math.IsNaN(float64(a.Finish().Measure.Value)) {
				t.Errorf("zscore counts in the second pass; the first pass's measure is %v", a.Finish().Measure.Value)
			}
		}
	}
}

// TestExtremesCompileErrors: the rule applies to numbers and integers,
// with settings a policy could not have written rejected.
func TestExtremesCompileErrors(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{1.0}}, col{"s", tString, []any{"a"}})
	release(t, b)
	env := envOf(b, 5)
	for _, tc := range []struct {
		rule *rules.Rule
		want string
	}{
		{newRule(extSpec(rules.ExtremesTukey), atMost(0), "s"), `column "s" holds strings (utf8); extremes applies to integers and numbers`},
		{newRule(rules.ExtremesSpec{Method: rules.ExtremesZScore}, atMost(0), "x"), "zscore: k is 0, want a finite number above 0"},
		{newRule(rules.ExtremesSpec{Method: rules.ExtremesESD, Alpha: 0.05}, atMost(0), "x"), "esd: max_outliers is 0, want at least 1"},
		{newRule(rules.ExtremesSpec{Method: rules.ExtremesTail, Alpha: 0.05}, atMost(0), "x"), "tail: the column declares no distribution"},
		{newRule(rules.ExtremesSpec{Method: rules.ExtremesTail, Alpha: 0.05, Distribution: rules.DistributionSpec{Families: []string{"benford"}}},
			atMost(0), "x"), "tail: benford is not a family of values"},
		{newRule(rules.ExtremesSpec{Method: "iqr"}, atMost(0), "x"), `unknown extremes method "iqr"`},
	} {
		_, err := Compile(tc.rule, env)
		if err == nil || err.Error() != ": rule test.extremes: "+tc.want {
			t.Errorf("got %v, want %q", err, tc.want)
		}
	}
}

// TestExtremesBySelection: tukey and robust-z, fitted without sorting,
// give what sorting the values gives, to the last bit: the quartiles,
// median and MAD (type 7), the values beyond the thresholds on each side,
// the box plot (its whiskers the least and greatest value not flagged),
// a histogram of every value; with one accumulator and with two fed
// interleaved batches and merged. Missing values are not judged.
func TestExtremesBySelection(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(13, 14))
	shapes := map[string]func() float64{
		"random":  func() float64 { return 50 + 10*rng.NormFloat64() },
		"planted": func() float64 { return rng.NormFloat64() + float64(rng.IntN(40)/39)*25*(rng.Float64()-0.5) },
		"ties":    func() float64 { return float64(rng.IntN(4)) },
		"equal":   func() float64 { return 2.5 },
		"narrow":  func() float64 { return 1000 + math.Round(20*rng.NormFloat64())/1024 },
	}
	for name, draw := range shapes {
		// 150,000 values are enough for the selection to count digits
		// rather than gather every value.
		for _, n := range []int{1, 2, 3, 4, 11, 500, 150_000} {
			xs := make([]float64, n+n/4)
			var finite []float64
			for i := range xs {
				if i%4 == 3 {
					xs[i] = math.NaN() // missing
					continue
				}
				xs[i] = draw()
				finite = append(finite, xs[i])
			}
			sorted := slices.Clone(finite)
			slices.Sort(sorted)
			med := order.Quantile7(sorted, 0.5)
			dev := make([]float64, len(sorted))
			for i, x := range sorted {
				dev[i] = math.Abs(x - med)
			}
			slices.Sort(dev)
			mad := order.Quantile7(dev, 0.5)
			size := 9
			if n > 1000 {
				size = 4096
			}
			bs := batchesOf(t, mem, xs, size)
			for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesRobustZ} {
				for _, k := range []float64{0.5, 1.5, 3.5} {
					s := extSpec(m)
					s.K = k
					c := compile(t, newRule(s, atMost(0.05), "x"), envOf(bs[0], 5))
					res := run(t, c, bs...)
					sameJSON(t, "two workers", runInterleaved(t, c, 2, bs...), res, 0)
					what := fmt.Sprintf("%s n=%d %s k=%v", name, n, m, k)
					q1, q3 := order.Quantile7(sorted, 0.25), order.Quantile7(sorted, 0.75)
					lower, upper := q1-k*(q3-q1), q3+k*(q3-q1)
					est := map[string]float64{"q1": q1, "q3": q3}
					if m == rules.ExtremesRobustZ {
						lower, upper = med-k*mad/0.6745, med+k*mad/0.6745
						est = map[string]float64{"median": med, "mad": mad}
					}
					for key, want := range est {
						if got := res.Estimates[key]; math.Float64bits(got) != math.Float64bits(want) {
							t.Errorf("%s: %s %v, want %v", what, key, got, want)
						}
					}
					ext := res.Extremes
					below := int64(sort.SearchFloat64s(sorted, lower)) // values < lower
					above := int64(len(sorted) - sort.Search(len(sorted), func(i int) bool { return sorted[i] > upper }))
					if ext.Below != below || ext.Above != above {
						t.Errorf("%s: %d below and %d above, want %d and %d", what, ext.Below, ext.Above, below, above)
					}
					nf := int64(len(sorted))
					want := report.Box{Min: report.Number(sorted[0]), Q1: report.Number(q1), Median: report.Number(med),
						Q3: report.Number(q3), Max: report.Number(sorted[nf-1]),
						WhiskerLo: report.Number(math.NaN()), WhiskerHi: report.Number(math.NaN())}
					if below+above < nf {
						want.WhiskerLo, want.WhiskerHi = report.Number(sorted[below]), report.Number(sorted[nf-1-above])
					}
					if got := *ext.Box; fmt.Sprint(got) != fmt.Sprint(want) {
						t.Errorf("%s: box %+v, want %+v", what, got, want)
					}
					var counted int64
					for _, c := range ext.Histogram.Counts {
						counted += c
					}
					if h := ext.Histogram; counted != nf || h.Edges[0] != report.Number(sorted[0]) || h.Edges[len(h.Edges)-1] != report.Number(sorted[nf-1]) {
						t.Errorf("%s: histogram of %d values over [%v, %v], want %d over [%v, %v]", what, counted, h.Edges[0],
							h.Edges[len(h.Edges)-1], nf, sorted[0], sorted[nf-1])
					}
				}
			}
		}
	}
}

// TestExtremesTestsTwoWorkers: esd and grubbs name the rows of the values
// they remove; with the values kept in parts and merged from two
// accumulators fed interleaved batches, each value keeps its row, and the
// same rows are flagged as with one accumulator.
func TestExtremesTestsTwoWorkers(t *testing.T) {
	mem := checkedMem(t)
	xs := plantedNormal(400, 5, map[int]float64{17: 95, 150: 3, 151: 90, 399: 99})
	for i := 5; i < len(xs); i += 31 {
		xs[i] = math.NaN()
	}
	bs := batchesOf(t, mem, xs, 13)
	for _, m := range []rules.ExtremesMethod{rules.ExtremesESD, rules.ExtremesGrubbs} {
		c := compile(t, newRule(extSpec(m), atMost(0.05), "x"), envOf(bs[0], 20))
		res := run(t, c, bs...)
		// Grubbs sums the values in the order kept, which the interleaving
		// changes: G may differ in its last bits.
		sameJSON(t, string(m)+" two workers", runInterleaved(t, c, 2, bs...), res, 1e-12)
		count, rows, _ := listed(res)
		for _, r := range rows {
			if x := xs[r-1]; x > 30 && x < 70 {
				t.Errorf("%s: row %d (%v) listed, want only planted rows", m, r, x)
			}
		}
		if count == 0 {
			t.Errorf("%s: nothing flagged, want the planted values", m)
		}
	}
}

// batchesOf cuts xs (NaN for a missing value) into batches of at most
// size rows, released at the end of the test.
func batchesOf(t *testing.T, mem memory.Allocator, xs []float64, size int) []*source.Batch {
	t.Helper()
	var bs []*source.Batch
	for lo := 0; lo < len(xs); lo += size {
		b := numBatch(t, mem, int64(lo+1), xs[lo:min(len(xs), lo+size)])
		release(t, b)
		bs = append(bs, b)
	}
	return bs
}

// TestExtremesCalm: no value between a finding's calmLo and calmHi, which
// the second pass does not ask match about, is one match flags; probed at
// the data, the thresholds and the calm bounds and their float64
// neighbours. The interval is not empty for the threshold methods, so the
// second pass does take the short way.
func TestExtremesCalm(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(8, 9))
	measured := make([]float64, 5000)
	for i := range measured {
		measured[i] = math.Round((18+6*rng.NormFloat64())*1000) / 1000
	}
	data := map[string][]float64{
		"planted normal": plantedNormal(1000, 3, map[int]float64{7: 90, 300: 12, 512: 75}),
		"measured":       measured,
		"all equal":      slices.Repeat([]float64{2.5}, 50),
		"two values":     {1, 1, 1, 1, 1, 1, 1, 1, 9},
	}
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ} {
		for name, xs := range data {
			t.Run(string(m)+"/"+name, func(t *testing.T) {
				bs := batchesOf(t, mem, xs, 300)
				a := compile(t, newRule(extSpec(m), atMost(0.05), "x"), envOf(bs[0], 20)).NewAccumulator().(*ExtremesAccumulator)
				for _, b := range bs {
					observe(t, a, b)
				}
				f := a.finding()
				if !(f.calmLo <= f.calmHi) {
					t.Fatalf("calm interval [%v, %v] is empty", f.calmLo, f.calmHi)
				}
				probes := slices.Clone(xs)
				for _, p := range []float64{f.estimates["lower"], f.estimates["upper"], f.calmLo, f.calmHi} {
					probes = append(probes, p, math.Nextafter(p, math.Inf(-1)), math.Nextafter(p, math.Inf(1)))
				}
				for _, x := range probes {
					if hit, _ := f.match(x, 0); hit && x >= f.calmLo && x <= f.calmHi {
						t.Errorf("%v is flagged but within the calm interval [%v, %v]", x, f.calmLo, f.calmHi)
					}
				}
			})
		}
	}
}
