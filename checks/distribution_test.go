package checks

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// numBatch is one batch of a float64 column "x" whose first row is data row
// first; NaN stands for a missing value.
func numBatch(t testing.TB, mem memory.Allocator, first int64, xs []float64) *source.Batch {
	t.Helper()
	b := array.NewFloat64Builder(mem)
	defer b.Release()
	for _, x := range xs {
		if math.IsNaN(x) {
			b.AppendNull()
		} else {
			b.Append(x)
		}
	}
	arr := b.NewArray()
	defer arr.Release()
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: tFloat, Nullable: true}}, nil)
	lines := make([]int64, len(xs))
	for i := range lines {
		lines[i] = first + int64(i) + 1
	}
	return &source.Batch{Record: array.NewRecordBatch(schema, []arrow.Array{arr}, int64(len(xs))), FirstRow: first, Lines: lines}
}

// distSpec is a distribution rule on one family with the defaults a
// policy gets, resolution none unless set.
func distSpec(families ...string) rules.DistributionSpec {
	s := rules.DistributionSpec{Families: families, Test: rules.TestKS, Measure: rules.MeasureDistance,
		Sample: rules.DefaultSample, Seed: rules.DefaultSeed}
	if f, _ := dist.Lookup(families[0]); f.Kind() != dist.Continuous {
		s.Test = rules.TestChiSquare
	}
	return s
}

// distanceTol is the default tolerance of a distribution rule on a
// distance; pvalueTol the one on a p-value.
var (
	distanceTol = rules.Tolerance{Direction: rules.HigherIsWorse, Warn: rules.AtMost(0.05), Fail: rules.AtMost(0.1)}
	pvalueTol   = rules.Tolerance{Direction: rules.LowerIsWorse, Warn: rules.AtLeast(0.05), Fail: rules.AtLeast(0.01)}
)

// runDist evaluates a distribution rule on xs in one batch, both passes.
func runDist(t *testing.T, spec rules.DistributionSpec, tol rules.Tolerance, xs []float64) report.Result {
	t.Helper()
	mem := checkedMem(t)
	b := numBatch(t, mem, 1, xs)
	release(t, b)
	return run(t, compile(t, newRule(spec, tol, "x"), envOf(b, 20)), b)
}

// draw returns n seeded draws from f.
func draw(n int, seed uint64, f func(*rand.Rand) float64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 7))
	out := make([]float64, n)
	for i := range out {
		out[i] = f(rng)
	}
	return out
}

func normalCDF(x, mu, sd float64) float64 { return 0.5 * math.Erfc(-(x-mu)/(sd*math.Sqrt2)) }

// ksDistance is sup |F_n − F| by its definition, for checking the check.
func ksDistance(xs []float64, cdf func(float64) float64) float64 {
	x := slices.Clone(xs)
	slices.Sort(x)
	n := float64(len(x))
	var d float64
	for i, v := range x {
		f := cdf(v)
		d = max(d, float64(i+1)/n-f, f-float64(i)/n)
	}
	return d
}

// TestDistributionNormalFits: normal data pass a normal rule, and the
// measure is the KS distance to the normal fitted by maximum likelihood
// (sd with divisor n), computed here from its definition.
func TestDistributionNormalFits(t *testing.T) {
	xs := draw(2000, 1, func(r *rand.Rand) float64 { return 10 + 2*r.NormFloat64() })
	res := runDist(t, distSpec("normal"), distanceTol, xs)
	var mu, ss float64
	for _, x := range xs {
		mu += x
	}
	mu /= float64(len(xs))
	for _, x := range xs {
		ss += (x - mu) * (x - mu)
	}
	sd := math.Sqrt(ss / float64(len(xs)))
	want := ksDistance(xs, func(x float64) float64 { return normalCDF(x, mu, sd) })
	if res.Verdict != report.Pass || math.Abs(float64(res.Measure.Value)-want) > 1e-12 {
		t.Errorf("verdict %s measure %v, want pass and %v (%s)", res.Verdict, res.Measure.Value, want, res.Message)
	}
	if math.Abs(res.Estimates["mean"]-mu) > 1e-9 || math.Abs(res.Estimates["sd"]-sd) > 1e-9 {
		t.Errorf("estimates %v, want mean %v sd %v", res.Estimates, mu, sd)
	}
	f := res.Fit
	if f == nil || f.Family != "normal" || f.N != 2000 || f.Sampled || f.SampleSize != 2000 || f.Estimated != 2 ||
		res.Statistic == nil || res.Statistic.N != 2000 || res.PValue == nil || !(*res.PValue > 0.05) {
		t.Fatalf("fit %+v statistic %+v p %v", f, res.Statistic, res.PValue)
	}
	if len(f.Regions) != 0 || res.Offending != nil {
		t.Errorf("a passing fit lists regions %v or rows %v", f.Regions, res.Offending)
	}
	if len(f.QQ.Fitted) != maxQQ || len(f.QQ.Sample) != maxQQ || len(f.Histogram.Counts)+1 != len(f.Histogram.Edges) {
		t.Errorf("plot data: %d, %d quantiles; %d counts, %d edges", len(f.QQ.Fitted), len(f.QQ.Sample),
			len(f.Histogram.Counts), len(f.Histogram.Edges))
	}
	var total int64
	for _, c := range f.Histogram.Counts {
		total += c
	}
	if total != 2000 {
		t.Errorf("histogram counts %d values, want 2000", total)
	}
}

// TestDistributionWrongFamily: lognormal data declared normal fail; the
// first region holds the lognormal's mode exp(meanlog − sdlog²), where the
// data pile up against the symmetric fit, and the rows listed lie in the
// regions, worst first, each scored −log10 of its two-sided normal tail
// probability.
func TestDistributionWrongFamily(t *testing.T) {
	xs := draw(3000, 2, func(r *rand.Rand) float64 { return math.Exp(1 + 0.8*r.NormFloat64()) })
	res := runDist(t, distSpec("normal"), distanceTol, xs)
	if res.Verdict != report.Fail || res.Fit == nil || len(res.Fit.Regions) == 0 {
		t.Fatalf("verdict %s, fit %+v: %s", res.Verdict, res.Fit, res.Message)
	}
	mode := math.Exp(1 - 0.64)
	g := res.Fit.Regions[0]
	if g.Lo == nil || g.Hi == nil || !(float64(*g.Lo) < mode && mode <= float64(*g.Hi)) || !(g.Observed > g.Expected) {
		t.Errorf("first region %+v does not hold the mode %v", g, mode)
	}
	mu, sd := res.Estimates["mean"], res.Estimates["sd"]
	count, rows, scores := listed(res)
	if count == 0 || len(rows) != 20 {
		t.Fatalf("listed %d of %d rows", len(rows), count)
	}
	var inRegions int64
	for _, x := range xs {
		for _, g := range res.Fit.Regions {
			if (g.Lo == nil || x > float64(*g.Lo)) && (g.Hi == nil || x <= float64(*g.Hi)) {
				inRegions++
				break
			}
		}
	}
	if count != inRegions {
		t.Errorf("offending count %d, want the %d values in the regions", count, inRegions)
	}
	for i, row := range res.Offending.Rows {
		x := row.Values["x"].(float64)
		if x != xs[row.Row-1] {
			t.Errorf("row %d shows %v, the data hold %v", row.Row, x, xs[row.Row-1])
		}
		z := (x - mu) / (sd * math.Sqrt2)
		p := min(math.Erfc(-z), math.Erfc(z)) // twice the smaller tail, each without cancellation
		if want := -math.Log10(p); math.Abs(scores[i]-want) > 1e-9*max(1, want) {
			t.Errorf("row %d (x = %v): score %v, want %v", row.Row, x, scores[i], want)
		}
		if i > 0 && scores[i] > scores[i-1] {
			t.Errorf("rows not worst first: %v", scores)
		}
	}
}

// TestDistributionMerged: shards observed apart and merged give the result
// of one pass over all the data, rows listed included.
func TestDistributionMerged(t *testing.T) {
	xs := draw(1500, 3, func(r *rand.Rand) float64 { return math.Exp(r.NormFloat64()) })
	mem := checkedMem(t)
	all := numBatch(t, mem, 1, xs)
	a, rest := split(t, all, 400)
	b, c := split(t, rest, 700)
	release(t, all, a, rest, b, c)
	for _, spec := range []rules.DistributionSpec{distSpec("normal"), distSpec("lognormal", "gamma")} {
		check := compile(t, newRule(spec, distanceTol, "x"), envOf(all, 10))
		one := run(t, check, all)
		merged := runMerged(t, check, a, b, c)
		sameResult(t, strings.Join(spec.Families, ","), merged, one, 0)
	}
}

// TestDistributionGivenNormal: five values against N(0, 1) with both
// parameters given; the KS and Cramér-von Mises statistics and p-values
// are SciPy's (checks/testdata/distribution_golden.py).
func TestDistributionGivenNormal(t *testing.T) {
	xs := []float64{-1.2, -0.4, 0.1, 0.3, 1.5}
	for _, c := range []struct {
		test       rules.DistTest
		stat, p    float64
		statName   string
		distanceAt float64
	}{
		{rules.TestKS, 0.1820885778, 0.9856865316, "D", 0.1820885778},
		{rules.TestCvM, 0.0283075359, 0.9907652350, "W2", 0.1820885778},
	} {
		spec := distSpec("normal")
		spec.Parameters = map[string]float64{"mean": 0, "sd": 1}
		spec.Test, spec.Measure = c.test, rules.MeasurePValue
		res := runDist(t, spec, pvalueTol, xs)
		if res.Statistic.Name != c.statName || math.Abs(float64(res.Statistic.Value)-c.stat) > 1e-9 ||
			math.Abs(*res.PValue-c.p) > 1e-3 || float64(res.Measure.Value) != *res.PValue {
			t.Errorf("%s: %s = %v, p %v, measure %v; want %s = %v, p %v", c.test, res.Statistic.Name,
				res.Statistic.Value, *res.PValue, res.Measure.Value, c.statName, c.stat, c.p)
		}
		if f := res.Fit; f.Estimated != 0 || math.Abs(float64(f.Distance)-c.distanceAt) > 1e-9 || res.Verdict != report.Pass ||
			len(f.Candidates) != 1 || math.Abs(float64(f.Candidates[0].AIC)+2*float64(f.Candidates[0].LogLik)) > 1e-9 {
			t.Errorf("%s: fit %+v", c.test, f)
		}
		if !strings.Contains(res.Message, "normal(mean=0, sd=1) (given)") {
			t.Errorf("%s: message %q", c.test, res.Message)
		}
	}
}

// TestDistributionOutsideSupport: values a family cannot produce are
// counted exactly, fail the rule with its measure undefined, and are listed
// by a second pass; with candidates the family is skipped and the others
// ranked.
func TestDistributionOutsideSupport(t *testing.T) {
	xs := draw(50, 4, func(r *rand.Rand) float64 { return math.Exp(r.NormFloat64()) })
	xs[2], xs[6], xs[9] = -1, 0, math.NaN() // row 10 missing: not counted
	res := runDist(t, distSpec("lognormal"), distanceTol, xs)
	want := "lognormal needs values above 0, but 2 of 49 values are not: -1, 0"
	if res.Verdict != report.Fail || !math.IsNaN(float64(res.Measure.Value)) || res.Message != want {
		t.Errorf("verdict %s measure %v message %q, want fail, NaN, %q", res.Verdict, res.Measure.Value, res.Message, want)
	}
	if count, rows, scores := listed(res); count != 2 || !slices.Equal(rows, []int64{3, 7}) || !slices.Equal(scores, []float64{1, 1}) {
		t.Errorf("listed %d rows %v scores %v, want 2 rows [3 7] scored 1", count, rows, scores)
	}

	res = runDist(t, distSpec("lognormal", "normal"), distanceTol, xs)
	f := res.Fit
	if f == nil || f.Family != "normal" || len(f.Candidates) != 2 || f.Candidates[1].Family != "lognormal" ||
		f.Candidates[1].Skipped != want || !math.IsNaN(float64(f.Candidates[1].AIC)) {
		t.Errorf("candidates: fit %+v", f)
	}
}

// TestDistributionCandidates: on gamma data the gamma family ranks first
// among lognormal, gamma and Weibull; the ranking is by AIC, and each
// candidate's BIC − AIC is k (ln n − 2).
func TestDistributionCandidates(t *testing.T) {
	xs := draw(3000, 5, func(r *rand.Rand) float64 {
		// Gamma(3, 2) as a sum of three exponentials of mean 2.
		return 2 * (r.ExpFloat64() + r.ExpFloat64() + r.ExpFloat64())
	})
	res := runDist(t, distSpec("lognormal", "gamma", "weibull"), distanceTol, xs)
	f := res.Fit
	if f.Family != "gamma" || len(f.Candidates) != 3 || f.Candidates[0].Family != "gamma" {
		t.Fatalf("judged %s, candidates %+v", f.Family, f.Candidates)
	}
	for i, c := range f.Candidates {
		if i > 0 && !(c.AIC > f.Candidates[i-1].AIC) {
			t.Errorf("candidate %d %s AIC %v not above %v", i, c.Family, c.AIC, f.Candidates[i-1].AIC)
		}
		if d := float64(c.BIC-c.AIC) - 2*(math.Log(3000)-2); math.Abs(d) > 1e-6 {
			t.Errorf("%s: BIC − AIC off by %v", c.Family, d)
		}
	}
	if math.Abs(res.Estimates["shape"]-3) > 0.2 || math.Abs(res.Estimates["scale"]-2) > 0.15 {
		t.Errorf("gamma estimates %v, want near shape 3, scale 2", res.Estimates)
	}
}

// TestDistributionPoisson: counts against Poisson(2) given, cells 0..5
// with the tails in the end cells; the TV distance is SciPy's.
func TestDistributionPoisson(t *testing.T) {
	spec := distSpec("poisson")
	spec.Parameters = map[string]float64{"lambda": 2}
	res := runDist(t, spec, distanceTol, []float64{0, 1, 1, 2, 2, 2, 3, 5})
	if math.Abs(float64(res.Measure.Value)-0.1766764162) > 1e-9 || res.Fit.Test != "chi-square" {
		t.Errorf("TV distance %v, want 0.1766764162 (%s)", res.Measure.Value, res.Message)
	}
	// Eight values pool into one cell, which leaves chi-square no degree of
	// freedom: the distance is judged, the test said not to have run.
	if res.Verdict != report.Fail || len(res.Fit.Regions) == 0 || res.Fit.Histogram == nil || res.PValue != nil ||
		res.Fit.Method.Kind != "none" || !strings.Contains(res.Message, "no p-value (chi-square could not run: ") {
		t.Errorf("verdict %s regions %+v p %v method %+v message %q", res.Verdict, res.Fit.Regions, res.PValue, res.Fit.Method, res.Message)
	}
	spec.Measure = rules.MeasurePValue
	if res := runDist(t, spec, pvalueTol, []float64{0, 1, 1, 2, 2, 2, 3, 5}); res.Status != report.Error {
		t.Errorf("p-value without a test: status %s, %s", res.Status, res.Message)
	}
	// Fractions are outside the support of every count family.
	res = runDist(t, distSpec("poisson"), distanceTol, []float64{0, 1.5, 2})
	if res.Message != "poisson needs whole numbers 0, 1, 2, ..., but 1 of 3 values are not: 1.5" {
		t.Errorf("message %q", res.Message)
	}
}

// TestDistributionCategorical: counts 55, 25, 20 against shares 0.5, 0.3,
// 0.2: X² = 25/50 + 25/30 = 4/3 on 2 degrees of freedom, p = exp(−X²/2)
// (SciPy agrees, checks/testdata/distribution_golden.py), TV distance
// (0.05 + 0.05)/2. A value of no listed category fails the rule.
func TestDistributionCategorical(t *testing.T) {
	var vals []any
	for i := range 100 {
		switch {
		case i < 55:
			vals = append(vals, "A")
		case i < 80:
			vals = append(vals, "B")
		default:
			vals = append(vals, "C")
		}
	}
	vals[3] = nil
	vals = append(vals, "A")
	spec := distSpec("categorical")
	spec.Categories, spec.Weights = []string{"A", "B", "C"}, []float64{5, 3, 2}
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"s", tString, vals})
	release(t, b)
	res := run(t, compile(t, newRule(spec, atMost(0.1), "s"), envOf(b, 20)), b)
	if math.Abs(float64(res.Statistic.Value)-4.0/3) > 1e-12 || math.Abs(*res.PValue-math.Exp(-2.0/3)) > 1e-12 ||
		math.Abs(float64(res.Measure.Value)-0.05) > 1e-12 || res.Fit.DF != 2 || res.Verdict != report.Pass {
		t.Errorf("X2 %v p %v TV %v df %d verdict %s", res.Statistic.Value, *res.PValue, res.Measure.Value, res.Fit.DF, res.Verdict)
	}
	if len(res.Fit.Cells) != 3 || res.Fit.Cells[0].Count != 55 || res.Estimates["B"] != 0.3 {
		t.Errorf("cells %+v estimates %v", res.Fit.Cells, res.Estimates)
	}

	vals = append(vals, "D", "E", "D")
	b2 := newBatch(t, mem, 1, col{"s", tString, vals})
	release(t, b2)
	res = run(t, compile(t, newRule(spec, distanceTol, "s"), envOf(b2, 20)), b2)
	want := `categorical needs one of the listed categories, but 3 of 103 values are not, among them "D", "E"`
	if res.Verdict != report.Fail || res.Message != want {
		t.Errorf("verdict %s message %q, want fail %q", res.Verdict, res.Message, want)
	}
	if count, rows, _ := listed(res); count != 3 || !slices.Equal(rows, []int64{102, 103, 104}) {
		t.Errorf("listed %d rows %v, want 3: 102 103 104", count, rows)
	}

	// Integer and boolean columns name their categories as they read.
	spec.Categories, spec.Weights = []string{"1", "2"}, []float64{1, 1}
	bi := newBatch(t, mem, 1, col{"n", tInt, []any{1, 2, 1, 2}})
	release(t, bi)
	if res := run(t, compile(t, newRule(spec, distanceTol, "n"), envOf(bi, 20)), bi); float64(res.Measure.Value) != 0 {
		t.Errorf("integer categories: %v %s", res.Measure.Value, res.Message)
	}
	spec.Categories = []string{"true", "false"}
	bb := newBatch(t, mem, 1, col{"b", tBool, []any{true, true, true, false}})
	release(t, bb)
	if res := run(t, compile(t, newRule(spec, distanceTol, "b"), envOf(bb, 20)), bb); float64(res.Measure.Value) != 0.25 {
		t.Errorf("boolean categories: %v %s", res.Measure.Value, res.Message)
	}
}

// TestDistributionBenford: amounts 10^U follow Benford's law; whole numbers
// uniform on 100..999 do not, and the digit in most excess is the one
// whose observed share most exceeds log10(1 + 1/d).
func TestDistributionBenford(t *testing.T) {
	good := draw(5000, 6, func(r *rand.Rand) float64 { return math.Pow(10, 1+4*r.Float64()) })
	res := runDist(t, distSpec("benford"), distanceTol, good)
	if res.Verdict != report.Pass || len(res.Fit.Cells) != 9 || res.Fit.QQ != nil {
		t.Errorf("Benford data: verdict %s, %s", res.Verdict, res.Message)
	}
	bad := draw(5000, 7, func(r *rand.Rand) float64 { return float64(100 + r.IntN(900)) })
	res = runDist(t, distSpec("benford"), distanceTol, bad)
	counts := make([]float64, 10)
	for _, x := range bad {
		counts[int(x)/100]++
	}
	var tv float64
	best, most := 0, math.Inf(-1)
	for d := 1; d <= 9; d++ {
		e := counts[d]/5000 - math.Log10(1+1/float64(d))
		tv += math.Abs(e) / 2
		if e > most {
			best, most = d, e
		}
	}
	if res.Verdict != report.Fail || math.Abs(float64(res.Measure.Value)-tv) > 1e-12 ||
		len(res.Fit.Regions) == 0 || res.Fit.Regions[0].Label != string(rune('0'+best)) {
		t.Errorf("uniform digits: verdict %s TV %v (want %v), regions %+v (want %d first)", res.Verdict,
			res.Measure.Value, tv, res.Fit.Regions, best)
	}
	if count, rows, scores := listed(res); count < int64(counts[best]) || len(rows) == 0 ||
		math.Abs(scores[0]-most) > 1e-12 {
		t.Errorf("listed %d rows, scores %v; want the digit %d first, scored %v", count, scores, best, most)
	}
}

// TestDistributionSampled: beyond the sample size the fit runs on a seeded
// uniform sample; the result says so, repeats for the same seed and
// changes with another.
func TestDistributionSampled(t *testing.T) {
	xs := draw(5000, 8, func(r *rand.Rand) float64 { return 3 + r.NormFloat64() })
	spec := distSpec("normal")
	spec.Sample = 1000
	one := runDist(t, spec, distanceTol, xs)
	again := runDist(t, spec, distanceTol, xs)
	spec.Seed = 2
	other := runDist(t, spec, distanceTol, xs)
	f := one.Fit
	if !f.Sampled || f.SampleSize != 1000 || f.N != 5000 || one.Statistic.N != 1000 ||
		!strings.Contains(one.Message, "a sample of 1,000 of 5,000 values") {
		t.Errorf("fit %+v, message %q", f, one.Message)
	}
	if one.Estimates["mean"] != again.Estimates["mean"] || one.Estimates["mean"] == other.Estimates["mean"] {
		t.Errorf("means %v, %v (same seed), %v (seed 2)", one.Estimates["mean"], again.Estimates["mean"], other.Estimates["mean"])
	}
}

// TestDistributionShapiroWilk: above 5000 values Shapiro-Wilk runs on a
// seeded sample of 5000 and says so.
func TestDistributionShapiroWilk(t *testing.T) {
	xs := draw(6000, 9, func(r *rand.Rand) float64 { return r.NormFloat64() })
	spec := distSpec("normal")
	spec.Test = rules.TestSW
	res := runDist(t, spec, distanceTol, xs)
	if res.Statistic.Name != "W" || res.Statistic.N != 5000 || res.Fit.SampleSize != 6000 ||
		!strings.Contains(res.Fit.Method.Source, "seeded sample of 5,000") || !(*res.PValue > 0.01) {
		t.Errorf("statistic %+v p %v method %+v", res.Statistic, *res.PValue, res.Fit.Method)
	}
}

// TestDistributionEmpty: a column without values cannot be judged: the
// measure is undefined and the rule fails.
func TestDistributionEmpty(t *testing.T) {
	res := runDist(t, distSpec("normal"), distanceTol, []float64{math.NaN(), math.NaN()})
	if res.Verdict != report.Fail || res.Message != "the column has no values" || res.Status != report.OK {
		t.Errorf("verdict %s status %s message %q", res.Verdict, res.Status, res.Message)
	}
}

// TestDistributionCompileErrors: a rule that cannot read its column says
// which and why.
func TestDistributionCompileErrors(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: tFloat}, {Name: "s", Type: tString}}, nil)
	env := &Env{Schema: schema, DataColumns: []string{"x", "s"}}
	cat := distSpec("categorical")
	cat.Categories, cat.Weights = []string{"a"}, []float64{1}
	for _, c := range []struct {
		rule *rules.Rule
		want string
	}{
		{newRule(distSpec("normal"), distanceTol, "s"), `column "s" holds strings (utf8); distribution normal applies to integers and numbers`},
		{newRule(cat, distanceTol, "x"), `column "x" holds numbers (float64); distribution categorical applies to strings, integers and booleans`},
	} {
		if _, err := Compile(c.rule, env); err == nil || !strings.HasSuffix(err.Error(), c.want) {
			t.Errorf("Compile: %v, want ...%s", err, c.want)
		}
	}
}

// TestDistributionGivenResolution: a step given in the policy is used as
// written, and values off its grid stop the rule with an error that says
// so, rather than a verdict on the wrong comparison.
func TestDistributionGivenResolution(t *testing.T) {
	xs := draw(500, 10, func(r *rand.Rand) float64 { return math.Round((5+r.NormFloat64())*100) / 100 })
	spec := distSpec("normal")
	spec.Resolution = 0.01
	res := runDist(t, spec, distanceTol, xs)
	if res.Status != report.OK || res.Fit.Resolution == nil || float64(*res.Fit.Resolution) != 0.01 ||
		!strings.Contains(res.Fit.Method.Source, "cell boundaries of step 0.01") {
		t.Errorf("step 0.01: status %s fit %+v (%s%s)", res.Status, res.Fit, res.Message, res.Error)
	}
	spec.Resolution = 0.1
	res = runDist(t, spec, distanceTol, xs)
	if res.Status != report.Error || !strings.Contains(res.Error, "is not on the grid") {
		t.Errorf("step 0.1 on data recorded to 0.01: status %s error %q", res.Status, res.Error)
	}
}

// TestScoreMemo: a scoreMemo gives f(x) for every x, bit for bit, calls f
// once per distinct value (-0 and +0 apart) while it has room, and stops
// growing at maxScoreMemo values, scoring the others each time.
func TestScoreMemo(t *testing.T) {
	negZero := math.Copysign(0, -1)
	tests := []struct {
		name  string
		x     []float64
		calls int
	}{
		{"repeats", []float64{1.5, 2, 1.5, 1.5, 2, 3}, 3},
		{"signed zeros", []float64{0, negZero, 0, negZero}, 2},
		{"past the bound", func() []float64 {
			var x []float64
			for i := range maxScoreMemo + 10 {
				x = append(x, float64(i))
			}
			return append(x, float64(maxScoreMemo+5), 0)
		}(), maxScoreMemo + 11},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var m scoreMemo
			calls := 0
			f := func(x float64) float64 {
				calls++
				return 1 / (x + 0.25*math.Copysign(1, x)) // tells -0 from +0
			}
			for _, x := range tc.x {
				if got, want := m.at(x, f), 1/(x+0.25*math.Copysign(1, x)); math.Float64bits(got) != math.Float64bits(want) {
					t.Fatalf("at(%v) = %v, want %v", x, got, want)
				}
			}
			if calls != tc.calls || len(m) > maxScoreMemo {
				t.Errorf("%d calls, %d kept; want %d calls, at most %d kept", calls, len(m), tc.calls, maxScoreMemo)
			}
		})
	}
}
