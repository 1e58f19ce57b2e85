package checks

import (
	"bufio"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

func summaryRule(stat rules.Stat, q float64, tol rules.Tolerance, column string) *rules.Rule {
	r := newRule(rules.SummarySpec{Stat: stat, Q: q}, tol, column)
	r.Measure.Name = string(stat)
	return r
}

// TestSummaryHand: the statistics of 2 4 4 4 5 5 7 9 (with two missing
// values), computed by hand: mean 40/8 = 5; squared deviations 9 1 1 1 0 0
// 4 16 sum to 32, so std = sqrt(32/7); median (4+5)/2; type-7 p25 at
// h = 1 + 7(0.25) = 2.75 between x2 = 4 and x3 = 4; p90 at h = 7.3,
// 0.7(7) + 0.3(9) = 7.6; 5 distinct values.
func TestSummaryHand(t *testing.T) {
	mem := checkedMem(t)
	vals := []any{9, nil, 4, 2, 4, 5, 7, nil, 4, 5}
	floats := make([]any, len(vals))
	for i, v := range vals {
		if v != nil {
			floats[i] = float64(v.(int))
		}
	}
	batches := []*source.Batch{
		newBatch(t, mem, 1, col{"x", tInt, vals}),
		newBatch(t, mem, 1, col{"x", tFloat, floats}),
		newBatch(t, mem, 1, col{"x", arrow.PrimitiveTypes.Int32, vals}),
		newBatch(t, mem, 1, col{"x", arrow.PrimitiveTypes.Float32, floats}),
	}
	release(t, batches...)
	tests := []struct {
		stat rules.Stat
		q    float64
		want float64
	}{
		{rules.StatCount, 0, 8},
		{rules.StatMean, 0, 5},
		{rules.StatStd, 0, math.Sqrt(32.0 / 7)},
		{rules.StatMin, 0, 2},
		{rules.StatMax, 0, 9},
		{rules.StatMedian, 0, 4.5},
		{rules.StatQuantile, 0.25, 4},
		{rules.StatQuantile, 0.9, 7.6},
		{rules.StatQuantile, 0, 2},
		{rules.StatQuantile, 1, 9},
		{rules.StatDistinct, 0, 5},
	}
	for _, b := range batches {
		b1, b2 := split(t, b, 5)
		release(t, b1, b2)
		for _, tc := range tests {
			name := fmt.Sprintf("%s %s %v", b.Record.Column(0).DataType(), tc.stat, tc.q)
			c := compile(t, summaryRule(tc.stat, tc.q, within(0, 100), "x"), envOf(b, 10))
			res := run(t, c, b)
			if got := float64(res.Measure.Value); math.Abs(got-tc.want) > 1e-14*tc.want {
				t.Errorf("%s: %v, want %v", name, got, tc.want)
			}
			if res.Verdict != report.Pass || res.Offending != nil {
				t.Errorf("%s: %v %+v, want pass with nothing listed", name, res.Verdict, res.Offending)
			}
			sameResult(t, name+" merged", runMerged(t, c, b1, b2), res, 1e-15)
		}
	}
}

// TestSummaryVerdicts: a statistic on a limit passes; past it fails.
func TestSummaryVerdicts(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"x", tFloat, []any{4.0, 6.0}}) // mean 5
	release(t, b)
	tests := []struct {
		tol  rules.Tolerance
		want report.Verdict
	}{
		{within(5, 6), report.Pass},
		{within(4, 5), report.Pass},
		{within(5.000001, 6), report.Fail},
		{within(math.Inf(-1), 4.99), report.Fail},
		{rules.Tolerance{Direction: rules.OutsideIsWorse, Warn: &rules.Limit{Lo: 0, Hi: 4}, Fail: &rules.Limit{Lo: 0, Hi: 10}}, report.Warn},
	}
	for _, tc := range tests {
		res := run(t, compile(t, summaryRule(rules.StatMean, 0, tc.tol, "x"), envOf(b, 10)), b)
		if res.Verdict != tc.want {
			t.Errorf("mean 5 with warn %v fail %v: %v, want %v", tc.tol.Warn, tc.tol.Fail, res.Verdict, tc.want)
		}
	}
	res := run(t, compile(t, summaryRule(rules.StatMean, 0, within(0, 10), "x"), envOf(b, 10)), b)
	if want := "mean is 5 over 2 values"; res.Message != want {
		t.Errorf("message %q, want %q", res.Message, want)
	}
	// Computed statistics are written to 7 significant digits, the
	// measure keeps them all.
	thirds := newBatch(t, mem, 1, col{"x", tFloat, []any{1.0, 2.0, 2.0}})
	release(t, thirds)
	env := envOf(thirds, 10)
	env.Policy = &rules.Policy{Columns: []rules.Column{{Name: "x", Unit: "kg"}}}
	res = run(t, compile(t, summaryRule(rules.StatMean, 0, within(0, 10), "x"), env), thirds)
	if want := "mean is 1.666667 kg over 3 values"; res.Message != want || res.Measure.Value != 5.0/3 {
		t.Errorf("message %q measure %v, want %q and 5/3", res.Message, res.Measure.Value, want)
	}
}

// TestSummaryUndefined: a statistic that cannot be computed is NaN, says
// why, and fails a bounded rule.
func TestSummaryUndefined(t *testing.T) {
	mem := checkedMem(t)
	withNaN := newBatch(t, mem, 1, col{"x", tFloat, []any{1.0, math.NaN(), 3.0, math.NaN(), math.NaN()}})
	one := newBatch(t, mem, 1, col{"x", tFloat, []any{1.0, nil}})
	none := newBatch(t, mem, 1, col{"x", tInt, []any{nil, nil}})
	release(t, withNaN, one, none)
	tests := []struct {
		b    *source.Batch
		stat rules.Stat
		want float64
		msg  string
	}{
		{withNaN, rules.StatMean, math.NaN(), "mean is undefined: 3 of 5 values are NaN"},
		{withNaN, rules.StatMedian, math.NaN(), "median is undefined: 3 of 5 values are NaN"},
		{withNaN, rules.StatCount, 5, "count is 5"},
		{withNaN, rules.StatDistinct, 3, "distinct is 3"},
		{one, rules.StatStd, math.NaN(), "std is undefined: the standard deviation needs two values, the column has one"},
		{one, rules.StatMean, 1, "mean is 1 over 1 values"},
		{none, rules.StatMin, math.NaN(), "min is undefined: the column has no values"},
		{none, rules.StatCount, 0, "count is 0"},
	}
	for _, tc := range tests {
		res := run(t, compile(t, summaryRule(tc.stat, 0.5, within(0, 10), "x"), envOf(tc.b, 10)), tc.b)
		got := float64(res.Measure.Value)
		if !(got == tc.want || math.IsNaN(got) && math.IsNaN(tc.want)) {
			t.Errorf("%s: %v, want %v", tc.msg, got, tc.want)
		}
		if math.IsNaN(tc.want) && res.Verdict != report.Fail {
			t.Errorf("%s: verdict %v, want fail", tc.msg, res.Verdict)
		}
		if res.Message != tc.msg {
			t.Errorf("message %q, want %q", res.Message, tc.msg)
		}
	}
}

func TestSummaryOtherTypes(t *testing.T) {
	mem := checkedMem(t)
	const jan1 = 1704067200
	const us = 1_000_000
	ts := newBatch(t, mem, 1, col{"t", tTime, []any{jan1 * us, nil, (jan1 + 60) * us, (jan1 + 120) * us}})
	ds := newBatch(t, mem, 1, col{"d", tDate, []any{19723, 19725, 19724, 19724}})
	ss := newBatch(t, mem, 1, col{"s", tString, []any{"a", "b", nil, "a", ""}})
	bs := newBatch(t, mem, 1, col{"b", tBool, []any{true, true, nil, true}})
	release(t, ts, ds, ss, bs)
	tests := []struct {
		b    *source.Batch
		stat rules.Stat
		want float64
		msg  string
	}{
		{ts, rules.StatMean, jan1 + 60, "mean is 2024-01-01T00:01:00Z over 3 values"},
		{ts, rules.StatStd, 60, "std is 60 s over 3 values"},
		{ts, rules.StatMax, jan1 + 120, "max is 2024-01-01T00:02:00Z over 3 values"},
		{ts, rules.StatDistinct, 3, "distinct is 3"},
		{ds, rules.StatMin, jan1, "min is 2024-01-01 over 4 values"},
		{ds, rules.StatMedian, jan1 + 86400, "median is 2024-01-02 over 4 values"},
		{ds, rules.StatMean, jan1 + 86400, "mean is 2024-01-02 over 4 values"},
		{ss, rules.StatCount, 4, "count is 4"},
		{ss, rules.StatDistinct, 3, "distinct is 3"},
		{bs, rules.StatDistinct, 1, "distinct is 1"},
	}
	for _, tc := range tests {
		name := tc.b.Record.ColumnName(0)
		c := compile(t, summaryRule(tc.stat, 0.5, within(0, 2e9), name), envOf(tc.b, 10))
		res := run(t, c, tc.b)
		if got := float64(res.Measure.Value); got != tc.want {
			t.Errorf("%s %s: %v, want %v", name, tc.stat, got, tc.want)
		}
		if res.Message != tc.msg {
			t.Errorf("message %q, want %q", res.Message, tc.msg)
		}
		b1, b2 := split(t, tc.b, 2)
		sameResult(t, name+" merged", runMerged(t, c, b1, b2), res, 0)
		b1.Release()
		b2.Release()
	}
}

// TestInt128 checks the exact sum against math/big on sums that overflow
// int64 both ways.
func TestInt128(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	edges := []int64{math.MaxInt64, math.MinInt64, -1, 0, 1, math.MaxInt64 - 1, math.MinInt64 + 1}
	for trial := range 50 {
		var s Int128
		want := new(big.Int)
		for i := range 1000 {
			v := int64(rng.Uint64())
			if trial%2 == 0 {
				v = edges[(i+trial)%len(edges)]
			}
			s.Add(v)
			want.Add(want, big.NewInt(v))
		}
		if s.Big().Cmp(want) != 0 {
			t.Fatalf("trial %d: sum %v, want %v", trial, s.Big(), want)
		}
		var doubled Int128
		doubled.AddInt128(s)
		doubled.AddInt128(s)
		if doubled.Big().Cmp(new(big.Int).Lsh(want, 1)) != 0 {
			t.Fatalf("trial %d: 2 sum %v, want %v", trial, doubled.Big(), new(big.Int).Lsh(want, 1))
		}
	}
}

// TestSummaryIntMeanExact: the mean of an int64 column comes from the
// exact sum, which int64 arithmetic would overflow.
func TestSummaryIntMeanExact(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1, col{"n", tInt, []any{math.MaxInt64, math.MaxInt64, math.MaxInt64 - 2}})
	release(t, b)
	res := run(t, compile(t, summaryRule(rules.StatMean, 0, within(0, 1e19), "n"), envOf(b, 10)), b)
	// (3·(2^63-1) - 2)/3 = 2^63 - 5/3, which rounds to 2^63 in float64.
	if got := float64(res.Measure.Value); got != 0x1p63 {
		t.Errorf("mean %v, want 2^63", got)
	}
}

// readColumn reads the one-column CSV name under testdata/nist_strd,
// skipping its # source line.
func readColumn(t *testing.T, name string) []float64 {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "nist_strd", name+".csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var xs []float64
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		text := sc.Text()
		if strings.HasPrefix(text, "#") || text == "y" {
			continue
		}
		x, err := strconv.ParseFloat(text, 64)
		if err != nil {
			t.Fatalf("%s.csv:%d: %v", name, line, err)
		}
		xs = append(xs, x)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return xs
}

// certified reads testdata/nist_strd/certified.csv: dataset -> quantity ->
// value.
func certified(t *testing.T) map[string]map[string]float64 {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("testdata", "nist_strd", "certified.csv"))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]map[string]float64{}
	for i, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		f := strings.Split(line, ",")
		if strings.HasPrefix(line, "#") || i <= 1 {
			continue
		}
		v, err := strconv.ParseFloat(f[2], 64)
		if err != nil || len(f) != 3 {
			t.Fatalf("certified.csv:%d: %q", i+1, line)
		}
		if out[f[0]] == nil {
			out[f[0]] = map[string]float64{}
		}
		out[f[0]][f[1]] = v
	}
	return out
}

// floatBatches cuts xs into batches of at most size rows.
func floatBatches(t *testing.T, mem memory.Allocator, xs []float64, size int) []*source.Batch {
	t.Helper()
	var bs []*source.Batch
	for lo := 0; lo < len(xs); lo += size {
		hi := min(lo+size, len(xs))
		vals := make([]any, hi-lo)
		for i := range vals {
			vals[i] = xs[lo+i]
		}
		bs = append(bs, newBatch(t, mem, int64(lo+1), col{"y", tFloat, vals}))
	}
	release(t, bs...)
	return bs
}

// lre is the log relative error of x against the certified c: the number
// of correct significant digits (McCullough 1998, "Assessing the
// reliability of statistical software: Part I", The American Statistician
// 52(4):358-366), capped at 15.
func lre(x, c float64) float64 {
	switch {
	case x == c:
		return 15
	case math.IsNaN(x):
		return 0
	}
	return min(15, -math.Log10(math.Abs(x-c)/math.Abs(c)))
}

// TestSummaryNIST compares mean and standard deviation with the certified
// values of the NIST StRD univariate datasets, observed in one batch and in
// seven merged accumulators. The digits asked for are what float64 allows
// for each set, less a little: the NumAcc sets are 1001 values such as
// 1000000.2 (NumAcc3) or 10000000.2 (NumAcc4) whose decimal fractions
// float64 does not hold exactly; rounded to float64, NumAcc4's values have
// sd 0.1000000006 rather than 0.1 (shared/reference/VALUES.md section 9.4
// gives R's two-pass sd at 8.3 digits), so no float64 method gets more than
// about 8 digits of it. Measured here: 15 digits of every mean; of sd, 15
// on Lew, Lottery, NumAcc1, NumAcc2 and PiDigits, 12.1 on Mavro and 12.4 on
// Michelso (a two-pass sd gets 13.1 and 13.8), 9.5 on NumAcc3, 8.3 on
// NumAcc4. The textbook one-pass formula gets 0 digits of NumAcc4's sd.
func TestSummaryNIST(t *testing.T) {
	mem := checkedMem(t)
	cert := certified(t)
	tests := []struct {
		name, file      string
		meanLRE, sdLRE  float64
		naiveFailsSdLRE bool // the textbook one-pass formula loses the digits asked for
	}{
		{"Lew", "lew", 14, 14, false},
		{"Lottery", "lottery", 14, 14, false},
		{"Mavro", "mavro", 14, 12, true},
		{"Michelso", "michelso", 14, 12, true},
		{"NumAcc1", "numacc1", 15, 15, false},
		{"NumAcc2", "numacc2", 14, 14, true},
		{"NumAcc3", "numacc3", 14, 9, true},
		{"NumAcc4", "numacc4", 14, 8, true},
		{"PiDigits", "pidigits", 14, 14, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			xs := readColumn(t, tc.file)
			if n := cert[tc.name]["n"]; float64(len(xs)) != n {
				t.Fatalf("%d values, NIST says %v", len(xs), n)
			}
			one := floatBatches(t, mem, xs, len(xs))
			seven := floatBatches(t, mem, xs, (len(xs)+6)/7)
			for _, q := range []struct {
				stat rules.Stat
				cert float64
				want float64
			}{
				{rules.StatMean, cert[tc.name]["mean"], tc.meanLRE},
				{rules.StatStd, cert[tc.name]["sd_n_minus_1"], tc.sdLRE},
			} {
				c := compile(t, summaryRule(q.stat, 0, within(math.Inf(-1), math.Inf(1)), "y"), envOf(one[0], 0))
				for how, res := range map[string]report.Result{"one batch": run(t, c, one...), "merged": runMerged(t, c, seven...)} {
					got := float64(res.Measure.Value)
					if l := lre(got, q.cert); l < q.want {
						t.Errorf("%s %s: %.15g has %.1f correct digits of the certified %.15g, want %v", how, q.stat, got, l, q.cert, q.want)
					}
				}
			}
			// The same test on the textbook formula sqrt((Σy² - n ȳ²)/(n-1))
			// shows what it catches.
			var s, s2 float64
			for _, x := range xs {
				s += x
				s2 += x * x
			}
			n := float64(len(xs))
			naive := math.Sqrt((s2 - s*s/n) / (n - 1))
			if fails := lre(naive, cert[tc.name]["sd_n_minus_1"]) < tc.sdLRE; fails != tc.naiveFailsSdLRE {
				t.Errorf("naive sd %.15g: fails the test %v, expected %v", naive, fails, tc.naiveFailsSdLRE)
			}
		})
	}
}

// TestQuantile7R compares quantile7 with R's quantile(type = 7) on the
// values in testdata/quantile7.golden, written by testdata/quantile7.R.
// Computed the same way, they agree to the last bit.
func TestQuantile7R(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "quantile7.golden"))
	if err != nil {
		t.Fatal(err)
	}
	sets := map[string][]float64{
		"michelso": readColumn(t, "michelso"),
		"lew":      readColumn(t, "lew"),
		"pidigits": readColumn(t, "pidigits"),
		"mavro":    readColumn(t, "mavro"),
		"one":      {5},
		"two":      {1, 2},
		"small":    {9, 4, 2, 4, 5, 7, 4, 5},
		"negative": {-1e300, -3.5, 0, 2.25, 1e300},
	}
	for _, xs := range sets {
		slices.Sort(xs)
	}
	checked := 0
	for i, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		if strings.HasPrefix(line, "#") || strings.HasPrefix(line, "dataset,") {
			continue
		}
		f := strings.Split(line, ",")
		p, err1 := strconv.ParseFloat(f[1], 64)
		want, err2 := strconv.ParseFloat(f[2], 64)
		xs, ok := sets[f[0]]
		if len(f) != 3 || err1 != nil || err2 != nil || !ok {
			t.Fatalf("quantile7.golden:%d: %q", i+1, line)
		}
		if got := order.Quantile7(xs, p); got != want {
			t.Errorf("%s p=%v: %.17g, R says %.17g", f[0], p, got, want)
		}
		if f[0] == "lew" { // Lew's values are integers: the int64 path too
			ints := make([]int64, len(xs))
			for k, x := range xs {
				ints[k] = int64(x)
			}
			if got := order.Quantile7(ints, p); got != want {
				t.Errorf("lew as int64 p=%v: %.17g, R says %.17g", p, got, want)
			}
		}
		checked++
	}
	if checked != 8*13 {
		t.Errorf("checked %d golden values, want 104", checked)
	}
}

// TestSummaryQuantileKept: the quantile of a float, an integer and a time
// column, kept in parts per batch and found by selection, is Quantile7
// of the sorted values to the last bit, with one accumulator and with
// two fed interleaved batches and merged; nulls are not values.
func TestSummaryQuantileKept(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(9, 10))
	shapes := map[string]func() float64{
		"random": func() float64 { return math.Round(rng.NormFloat64()*1e6) / 64 },
		"ties":   func() float64 { return float64(rng.IntN(3)) },
		"equal":  func() float64 { return -7 },
		"narrow": func() float64 { return 1e6 + math.Round(rng.NormFloat64()*1e3)/1024 },
	}
	for name, draw := range shapes {
		// 150,000 values are enough for the selection to count digits
		// rather than gather every value.
		for _, n := range []int{1, 2, 3, 4, 10, 1000, 150_000} {
			vals := make([]any, n+n/5) // a fifth of the rows missing
			var floats []float64
			for i := range vals {
				if i%5 == 4 {
					continue
				}
				x := draw()
				floats = append(floats, x)
				vals[i] = x
			}
			ints := make([]any, len(vals))
			var asInts []int64
			for i, v := range vals {
				if v != nil {
					ints[i] = int(v.(float64) * 64)
					asInts = append(asInts, int64(ints[i].(int)))
				}
			}
			slices.Sort(floats)
			slices.Sort(asInts)
			columns := []struct {
				col  col
				want func(q float64) float64
			}{
				{col{"x", tFloat, vals}, func(q float64) float64 { return order.Quantile7(floats, q) }},
				{col{"x", tInt, ints}, func(q float64) float64 { return order.Quantile7(asInts, q) }},
				{col{"x", tTime, ints}, func(q float64) float64 { return order.Quantile7(asInts, q) / 1e6 }},
			}
			for _, cc := range columns {
				var bs []*source.Batch
				size := 7
				if n > 1000 {
					size = 4096
				}
				for lo := 0; lo < len(vals); lo += size {
					part := col{"x", cc.col.typ, cc.col.vals[lo:min(lo+size, len(vals))]}
					b := newBatch(t, mem, int64(lo+1), part)
					release(t, b)
					bs = append(bs, b)
				}
				for _, q := range []float64{0, 0.01, 0.25, 0.5, 0.95, 1} {
					c := compile(t, summaryRule(rules.StatQuantile, q, within(-1e12, 1e12), "x"), envOf(bs[0], 10))
					want := cc.want(q)
					for how, res := range map[string]report.Result{"one": run(t, c, bs...), "two workers": runInterleaved(t, c, 2, bs...)} {
						if got := float64(res.Measure.Value); math.Float64bits(got) != math.Float64bits(want) {
							t.Errorf("%s n=%d %s q=%v %s: %v, want %v", name, n, cc.col.typ, q, how, got, want)
						}
					}
				}
			}
		}
	}
}

// TestSummaryQuantileR: R's type-7 quantiles of the golden data sets,
// from the values shuffled, in batches, through the summary rule.
func TestSummaryQuantileR(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "quantile7.golden"))
	if err != nil {
		t.Fatal(err)
	}
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(11, 12))
	batches := map[string][]*source.Batch{}
	for _, name := range []string{"michelso", "lew", "pidigits", "mavro"} {
		xs := readColumn(t, name)
		rng.Shuffle(len(xs), func(i, j int) { xs[i], xs[j] = xs[j], xs[i] })
		for lo := 0; lo < len(xs); lo += 100 {
			b := numBatch(t, mem, int64(lo+1), xs[lo:min(lo+100, len(xs))])
			release(t, b)
			batches[name] = append(batches[name], b)
		}
	}
	checked := 0
	for _, line := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		f := strings.Split(line, ",")
		bs, ok := batches[f[0]]
		if !ok || len(f) != 3 {
			continue
		}
		p, err1 := strconv.ParseFloat(f[1], 64)
		want, err2 := strconv.ParseFloat(f[2], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("quantile7.golden: %q", line)
		}
		c := compile(t, summaryRule(rules.StatQuantile, p, within(-1e12, 1e12), "x"), envOf(bs[0], 10))
		if got := float64(runInterleaved(t, c, 2, bs...).Measure.Value); got != want {
			t.Errorf("%s p=%v: %.17g, R says %.17g", f[0], p, got, want)
		}
		checked++
	}
	if checked != 4*13 {
		t.Errorf("checked %d golden values, want 52", checked)
	}
}
