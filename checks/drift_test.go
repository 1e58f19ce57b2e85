package checks

import (
	"context"
	"maps"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/assay-project/assay/checks/baseline"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// driftFiles writes a reference CSV and its baseline into a folder and
// returns a policy path in it, so that rules find both relative to it.
func driftFiles(t *testing.T, csv string) string {
	t.Helper()
	dir := t.TempDir()
	ref := filepath.Join(dir, "ref.csv")
	if err := os.WriteFile(ref, []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	set, err := source.Open([]string{ref}, source.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer set.Close()
	f, err := baseline.Build(context.Background(), set, nil, "test")
	if err != nil {
		t.Fatal(err)
	}
	b, err := f.Marshal()
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "ref.baseline.json"), b, 0o644); err != nil {
		t.Fatal(err)
	}
	return filepath.Join(dir, "policy.yaml")
}

func driftRule(m rules.DriftMeasure, against, column string) *rules.Rule {
	s := rules.DriftSpec{Measure: m, Reference: "ref.csv"}
	if against == "baseline" {
		s = rules.DriftSpec{Measure: m, Baseline: "ref.baseline.json"}
	}
	r := newRule(s, atMost(0.25), column)
	r.ID = "columns." + column + ".drift." + string(m)
	return r
}

// Small samples worked by hand. Reference x = 1..5 (mean 3, sd
// sqrt(2.5) = 1.58114), data x = 2..6 (mean 4, sd the same):
//
//	location = |4 - 3| / 1.58114 = 0.632456
//	scale    = |ln(1.58114 / 1.58114)| = 0
//	ks       = 0.2 (after each of 1..5 the reference CDF leads by 1/5)
//	wasserstein = W1 / sd = 1 / 1.58114 = 0.632456 (every value moves 1)
//
// Reference s = a b a b a, data s = a c b c a: c is new in rows 2 and 4,
// a share of 2/5 of the values.
func TestDriftHandComputed(t *testing.T) {
	pol := driftFiles(t, "x,s\n1,a\n2,b\n3,a\n4,b\n5,a\n")
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{2.0, 3.0, 4.0, 5.0, 6.0}}, col{"s", tString, []any{"a", "c", "b", "c", "a"}})
	defer release(t, b)
	env := envOf(b, 10)
	env.Policy = &rules.Policy{File: pol}
	env.Mem = mem
	cases := []struct {
		m       rules.DriftMeasure
		against string
		column  string
		want    float64
	}{
		{rules.DriftLocation, "reference", "x", 1 / math.Sqrt(2.5)},
		{rules.DriftLocation, "baseline", "x", 1 / math.Sqrt(2.5)},
		{rules.DriftScale, "reference", "x", 0},
		{rules.DriftKS, "reference", "x", 0.2},
		{rules.DriftKS, "baseline", "x", 0.2}, // five values: the sketch is exact
		{rules.DriftWasserstein, "reference", "x", 1 / math.Sqrt(2.5)},
		{rules.DriftNullShare, "baseline", "x", 0},
		{rules.DriftNewCategories, "baseline", "s", 0.4},
		{rules.DriftNewCategories, "reference", "s", 0.4},
	}
	for _, c := range cases {
		name := string(c.m) + " against " + c.against
		r := driftRule(c.m, c.against, c.column)
		chk := compile(t, r, env)
		res := run(t, chk, b)
		if got := float64(res.Measure.Value); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("%s: %v, want %v", name, got, c.want)
		}
		one, two := split(t, b, 2)
		sameResult(t, name+" merged", runMerged(t, chk, one, two), res, 1e-12)
		release(t, one, two)
		if c.m == rules.DriftNewCategories {
			n, rows, _ := listed(res)
			if n != 2 || len(rows) != 2 || rows[0] != 2 || rows[1] != 4 || res.Drift.NewCategories[0].Value != "c" {
				t.Errorf("%s: listed %d rows %v, new %v", name, n, rows, res.Drift.NewCategories)
			}
		}
	}
}

// A column multiplied by 1000 is reported as a likely change of units.
func TestDriftUnits(t *testing.T) {
	pol := driftFiles(t, "x\n1\n2\n3\n4\n5\n")
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{1000.0, 2000.0, 3000.0, 4000.0, 5000.0}})
	defer release(t, b)
	env := envOf(b, 10)
	env.Policy = &rules.Policy{File: pol}
	res := run(t, compile(t, driftRule(rules.DriftScale, "baseline", "x"), env), b)
	if res.Drift.Units != "x1000" || !strings.Contains(res.Message, "likely change of units") || res.Verdict.String() != "fail" {
		t.Errorf("units %q, verdict %s, message %q", res.Drift.Units, res.Verdict, res.Message)
	}
}

func TestDriftCompileErrors(t *testing.T) {
	pol := driftFiles(t, "x,s\n1,a\n2,b\n")
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{1.0}}, col{"s", tString, []any{"a"}}, col{"y", tFloat, []any{1.0}})
	defer release(t, b)
	env := envOf(b, 10)
	env.Policy = &rules.Policy{File: pol}
	cases := []struct {
		r    *rules.Rule
		want string
	}{
		{driftRule(rules.DriftPSI, "baseline", "s"), `psi applies to numeric columns; column "s" holds categories`},
		{driftRule(rules.DriftChiSquare, "reference", "x"), `chi-square applies to string and boolean columns; column "x" holds numbers`},
		{driftRule(rules.DriftKS, "baseline", "y"), `baseline ref.baseline.json has no column "y"`},
		{newRule(rules.DriftSpec{Measure: rules.DriftKS, Reference: "absent.csv"}, atMost(0.1), "x"), "reference:"},
		{newRule(rules.DriftSpec{Measure: rules.DriftKS, Baseline: "absent.json"}, atMost(0.1), "x"), "read baseline"},
	}
	for _, c := range cases {
		_, err := Compile(c.r, env)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want %q", c.r.ID, err, c.want)
		}
	}
}

// The histograms of both sides at the base's edges, worked by hand.
// Reference x = 1..5: its 5% quantiles are 1 (the first four), 2, 3, 4
// and 5, so the edges are 1 (its smallest value), 1, 2, 3, 4, 5, the
// first bin [1, 1] holding the value 1, each bin a fifth of the values.
// The data 2..6 hold nothing in [1, 1], a fifth in each of (1, 2] to
// (4, 5], and 6 lies above the last edge.
func TestDriftHistogramHandComputed(t *testing.T) {
	pol := driftFiles(t, "x\n1\n2\n3\n4\n5\n")
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{2.0, 3.0, 4.0, 5.0, 6.0}})
	defer release(t, b)
	env := envOf(b, 10)
	env.Policy = &rules.Policy{File: pol}
	env.Mem = mem
	want := report.DriftHistogram{
		Edges:      []report.Number{1, 1, 2, 3, 4, 5},
		BaseShares: []report.Number{0.2, 0.2, 0.2, 0.2, 0.2},
		Shares:     []report.Number{0, 0.2, 0.2, 0.2, 0.2},
		Below:      0,
		Above:      0.2,
	}
	for _, against := range []string{"reference", "baseline"} {
		res := run(t, compile(t, driftRule(rules.DriftPSI, against, "x"), env), b)
		if res.Drift == nil || res.Drift.Histogram == nil {
			t.Fatalf("against the %s: no histogram in %+v", against, res.Drift)
		}
		if got := *res.Drift.Histogram; !sameHistogram(got, want) {
			t.Errorf("against the %s: histogram %+v, want %+v", against, got, want)
		}
	}
}

// A baseline with more bins than a report keeps has adjacent bins merged:
// 120 bins of 1/120 with upper edges 1..120 become 40 of 3/120, edges 0,
// 3, ..., 120; data -1, 0.5, 60 and 130 put a quarter under the range, in
// [0, 3], in (57, 60] and over the range.
func TestDriftHistogramMerged(t *testing.T) {
	b := &driftBase{lo: 0, hi: 120}
	for i := 1; i <= 120; i++ {
		b.bins = append(b.bins, baseline.Bin{Upper: float64(i), Share: 1.0 / 120})
	}
	h := driftHistogram(b, []float64{-1, 0.5, 60, 130})
	if len(h.Edges) != 41 || len(h.BaseShares) != 40 || len(h.Shares) != 40 {
		t.Fatalf("%d edges, %d base shares, %d shares; want 41, 40, 40", len(h.Edges), len(h.BaseShares), len(h.Shares))
	}
	for i, e := range h.Edges {
		if float64(e) != float64(3*i) {
			t.Errorf("edge %d is %v, want %d", i, e, 3*i)
		}
	}
	for i := range h.Shares {
		want := 0.0
		if i == 0 || i == 19 {
			want = 0.25
		}
		if math.Abs(float64(h.BaseShares[i])-0.025) > 1e-12 || float64(h.Shares[i]) != want {
			t.Errorf("bin %d: base share %v, share %v; want 0.025, %v", i, h.BaseShares[i], h.Shares[i], want)
		}
	}
	if h.Below != 0.25 || h.Above != 0.25 {
		t.Errorf("below %v, above %v; want 0.25 each", h.Below, h.Above)
	}
}

// sameHistogram compares two drift histograms to 1e-12.
func sameHistogram(a, b report.DriftHistogram) bool {
	same := func(x, y []report.Number) bool {
		if len(x) != len(y) {
			return false
		}
		for i := range x {
			if math.Abs(float64(x[i])-float64(y[i])) > 1e-12 {
				return false
			}
		}
		return true
	}
	return same(a.Edges, b.Edges) && same(a.BaseShares, b.BaseShares) && same(a.Shares, b.Shares) &&
		same([]report.Number{a.Below, a.Above}, []report.Number{b.Below, b.Above})
}

// TestDriftCategoriesKeepNoBatchText counts a string column, then
// overwrites the batch's text bytes, as a recycled buffer would be: the
// category counts, of one side and of two merged, must still name the
// values counted.
func TestDriftCategoriesKeepNoBatchText(t *testing.T) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	batch := func(vals ...string) *array.String {
		bld := array.NewStringBuilder(mem)
		defer bld.Release()
		bld.AppendValues(vals, nil)
		return bld.NewStringArray()
	}
	a, b := batch("hive", "yard", "hive"), batch("yard", "shed")
	defer a.Release()
	defer b.Release()
	c := &driftCheck{}
	x := &DriftAccumulator{DriftSide: newDriftSide(false), check: c}
	y := &DriftAccumulator{DriftSide: newDriftSide(false), check: c}
	x.observe(&source.Batch{FirstRow: 1}, a)
	y.observe(&source.Batch{FirstRow: 4}, b)
	x.observe(&source.Batch{FirstRow: 4}, b)
	if err := x.Merge(y); err != nil {
		t.Fatal(err)
	}
	for _, arr := range []*array.String{a, b} {
		data := arr.ValueBytes()
		for i := range data {
			data[i] = '#'
		}
	}
	want := map[string]int64{"hive": 2, "yard": 3, "shed": 2}
	if !maps.Equal(x.Cats, want) {
		t.Fatalf("categories after the batches changed: %v, want %v", x.Cats, want)
	}
}
