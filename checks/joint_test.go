package checks

import (
	"compress/gzip"
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/checks/outlier"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// releaseAfter releases the batches bs when the test or benchmark ends,
// and returns them.
func releaseAfter(tb testing.TB, bs []*source.Batch) []*source.Batch {
	tb.Cleanup(func() {
		for _, x := range bs {
			x.Release()
		}
	})
	return bs
}

// colsBatch is one batch of float64 columns x1..xp whose first row is data
// row first; NaN stands for a missing value.
func colsBatch(t testing.TB, mem memory.Allocator, first int64, cols [][]float64) *source.Batch {
	t.Helper()
	n := len(cols[0])
	fields := make([]arrow.Field, len(cols))
	arrs := make([]arrow.Array, len(cols))
	for j, c := range cols {
		fields[j] = arrow.Field{Name: "x" + strconv.Itoa(j+1), Type: tFloat, Nullable: true}
		b := array.NewFloat64Builder(mem)
		for _, v := range c {
			if math.IsNaN(v) {
				b.AppendNull()
			} else {
				b.Append(v)
			}
		}
		arrs[j] = b.NewArray()
		b.Release()
	}
	rec := array.NewRecordBatch(arrow.NewSchema(fields, nil), arrs, int64(n))
	for _, a := range arrs {
		a.Release()
	}
	lines := make([]int64, n)
	for i := range lines {
		lines[i] = first + int64(i) + 1
	}
	return &source.Batch{Record: rec, FirstRow: first, Lines: lines}
}

// jointSpec is a joint rule with the defaults a policy gets.
func jointSpec(robust bool) rules.JointSpec {
	return rules.JointSpec{Method: rules.JointMahalanobis, Robust: robust, Quantile: outlier.DefaultJointQuantile,
		Sample: rules.DefaultJointSample, Seed: rules.DefaultSeed}
}

// runJoint evaluates a joint rule on columns cut into batches of at most
// size rows, with one accumulator, and with one accumulator per batch
// merged; the two must agree.
func runJoint(t *testing.T, s rules.JointSpec, tol rules.Tolerance, cols [][]float64, size int) report.Result {
	t.Helper()
	mem := checkedMem(t)
	var bs []*source.Batch
	for lo := 0; lo < len(cols[0]); lo += size {
		part := make([][]float64, len(cols))
		for j, c := range cols {
			part[j] = c[lo:min(len(c), lo+size)]
		}
		b := colsBatch(t, mem, int64(lo+1), part)
		release(t, b)
		bs = append(bs, b)
	}
	names := make([]string, len(cols))
	for j := range cols {
		names[j] = "x" + strconv.Itoa(j+1)
	}
	c := compile(t, newRule(s, tol, names...), envOf(bs[0], 200))
	res := run(t, c, bs...)
	sameJSON(t, "merged", runMerged(t, c, bs...), res, 1e-9)
	return res
}

// readGolden reads a csv of package outlier's golden values from R
// (checks/outlier/testdata/golden, written by its golden.R with R 4.2.2
// and robustbase 0.95.0), without comment lines and header.
func readGolden(t *testing.T, name string) [][]string {
	t.Helper()
	f, err := os.Open("outlier/testdata/golden/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	gz, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	r := csv.NewReader(gz)
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return recs[1:]
}

func atof(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestJointGolden: on the seeded data sets of package outlier's golden
// values, the classical rule flags exactly the rows whose
// mahalanobis(x, colMeans(x), cov(x)) exceeds qchisq(0.999, p) in R, with
// R's distances (1e-9 relative), and the robust rule exactly the rows
// robustbase's covMcd(x, use.correction = FALSE) flags at the same
// cutoff. corr2's eight planted rows lie inside each column's range.
func TestJointGolden(t *testing.T) {
	cols := map[string][][]float64{}
	for _, set := range []string{"corr2", "shift3", "wide2000", "small4", "stackloss"} {
		var c [][]float64
		for _, r := range readGolden(t, "data_"+set+".csv.gz") {
			if c == nil {
				c = make([][]float64, len(r))
			}
			for j, s := range r {
				c[j] = append(c[j], atof(t, s))
			}
		}
		cols[set] = c
	}
	classical := map[string]map[int64]float64{}
	for _, r := range readGolden(t, "classical.csv.gz") {
		if classical[r[0]] == nil {
			classical[r[0]] = map[int64]float64{}
		}
		row, _ := strconv.ParseInt(r[1], 10, 64)
		classical[r[0]][row] = atof(t, r[2])
	}
	flagged := map[string][]int64{} // set/key -> rows, ascending
	for _, r := range readGolden(t, "mcd.csv.gz") {
		if r[1] == "flagged" || r[1] == "classical_flagged" {
			row, _ := strconv.ParseInt(r[2], 10, 64)
			flagged[r[0]+"/"+r[1]] = append(flagged[r[0]+"/"+r[1]], row)
		}
	}
	for set, c := range cols {
		for _, robust := range []bool{false, true} {
			res := runJoint(t, jointSpec(robust), atMost(0.05), c, 256)
			key := set + "/classical_flagged"
			if robust {
				key = set + "/flagged"
			}
			count, rows, scores := listed(res)
			got := slices.Clone(rows)
			slices.Sort(got)
			if count != int64(len(flagged[key])) || !slices.Equal(got, flagged[key]) {
				t.Errorf("%s robust %v: flags %v, R %v", set, robust, got, flagged[key])
				continue
			}
			if robust {
				continue
			}
			for i, row := range rows {
				if want := classical[set][row]; math.Abs(scores[i]-want) > 1e-9*want {
					t.Errorf("%s row %d: d² %v, R %v", set, row, scores[i], want)
				}
			}
		}
	}
}

// correlated is n rows of two columns with correlation 0.9, and rows
// planted at the given rows (1-based) that break it while each value
// stays within two sd.
func correlated(n int, seed uint64, planted []int) [][]float64 {
	rng := rand.New(rand.NewPCG(seed, 13))
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		a, b := rng.NormFloat64(), rng.NormFloat64()
		x[i] = 10 + 2*a
		y[i] = 50 + 5*(0.9*a+math.Sqrt(1-0.81)*b)
	}
	for k, row := range planted {
		s := 1.5 + 0.1*float64(k)
		x[row-1], y[row-1] = 10+2*s, 50-5*s
	}
	return [][]float64{x, y}
}

// TestJointFlagsByDefinition: the classical rule flags the rows whose
// squared distance to the mean and sample covariance of all rows exceeds
// the cutoff (outlier.Classical and Scatter.Flag on the same rows), each
// with its contributions, which sum to its score; the robust rule those
// of FAST-MCD's estimate with the rule's seed.
func TestJointFlagsByDefinition(t *testing.T) {
	planted := []int{3, 250, 777, 1500}
	cols := correlated(2000, 8, planted)
	cutoff := outlier.Cutoff(2, 0.999)
	classical, err := outlier.Classical(cols)
	if err != nil {
		t.Fatal(err)
	}
	// The rule hands FastMCD its rows in the order of their sampling keys.
	sample, err := bottomk.New(rules.DefaultJointSample, 2, rules.DefaultSeed)
	if err != nil {
		t.Fatal(err)
	}
	for i := range cols[0] {
		sample.Offer(int64(i+1), []float64{cols[0][i], cols[1][i]})
	}
	mcd, err := outlier.FastMCD(keyOrderColumns(sample), outlier.MCDOptions{}, rand.New(rand.NewPCG(rules.DefaultSeed, 0x6d6364)))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		robust  bool
		scatter outlier.Scatter
	}{{false, classical}, {true, mcd.Final}} {
		want, err := tc.scatter.Flag(cols, cutoff)
		if err != nil {
			t.Fatal(err)
		}
		res := runJoint(t, jointSpec(tc.robust), atMost(0.05), cols, 500)
		count, rows, scores := listed(res)
		if count != int64(len(want)) || res.Measure.Value != report.Number(float64(len(want))/2000) {
			t.Fatalf("robust %v: count %d, want %d", tc.robust, count, len(want))
		}
		for _, row := range planted {
			if !slices.Contains(rows, int64(row)) {
				t.Errorf("robust %v: planted row %d not flagged: %v", tc.robust, row, rows)
			}
		}
		for i, w := range want[:min(len(want), 20)] {
			if rows[i] != int64(w.Index+1) || math.Abs(scores[i]-w.Dist2) > 1e-9*w.Dist2 {
				t.Errorf("robust %v row %d: %d d² %v, want %d d² %v", tc.robust, i, rows[i], scores[i], w.Index+1, w.Dist2)
			}
			var sum float64
			for _, c := range res.Offending.Rows[i].Contributions {
				sum += float64(c.Value)
			}
			cs := res.Offending.Rows[i].Contributions
			if len(cs) != 2 || math.Abs(sum-scores[i]) > 1e-9*scores[i] || cs[0].Value < cs[1].Value {
				t.Errorf("robust %v row %d: contributions %+v do not rank and sum to %v", tc.robust, rows[i], cs, scores[i])
			}
		}
		j := res.Joint
		if j == nil || j.N != 2000 || j.DF != 2 || float64(j.Cutoff) != cutoff || len(j.Covariance) != 2 || j.QQ == nil ||
			len(j.QQ.Sample) != maxQQ || (j.Estimator == "fast-mcd") != tc.robust {
			t.Errorf("robust %v: joint %+v", tc.robust, j)
		}
	}
}

// TestJointSkipsRows: rows with a missing, NaN or infinite value in any
// column are not judged; they are counted.
func TestJointSkipsRows(t *testing.T) {
	cols := correlated(300, 2, []int{10})
	cols[0][4], cols[1][5], cols[1][6] = math.NaN(), math.NaN(), math.Inf(1)
	res := runJoint(t, jointSpec(false), atMost(0.05), cols, 100)
	if j := res.Joint; j.N != 297 || j.Skipped != 3 || !strings.Contains(res.Message, "3 rows with a missing or non-finite value not judged") {
		t.Errorf("n %d skipped %d: %s", j.N, j.Skipped, res.Message)
	}
	if _, rows, _ := listed(res); !slices.Contains(rows, 10) || slices.ContainsFunc(rows, func(r int64) bool { return r >= 5 && r <= 7 }) {
		t.Errorf("rows %v", rows)
	}
}

// TestJointSample: beyond its sample size the robust rule estimates on a
// seeded uniform sample, says so, and still judges every row; the sample
// does not depend on how the rows were batched.
func TestJointSample(t *testing.T) {
	cols := correlated(3000, 5, []int{100, 2900})
	s := jointSpec(true)
	s.Sample = 500
	a := runJoint(t, s, atMost(0.05), cols, 700)
	b := runJoint(t, s, atMost(0.05), cols, 1024)
	j := a.Joint
	if !j.Sampled || j.SampleSize != 500 || j.N != 3000 || !strings.Contains(a.Message, "seeded sample of 500 of the 3,000 rows") {
		t.Errorf("joint %+v: %s", j, a.Message)
	}
	if _, rows, _ := listed(a); !slices.Contains(rows, 100) || !slices.Contains(rows, 2900) {
		t.Errorf("rows %v", rows)
	}
	sameJSON(t, "batched otherwise", b, a, 1e-9)
}

// TestJointFewRows: with too few rows to estimate a covariance the rule
// is skipped, saying why; with no row to judge it passes; a constant
// column makes the covariance singular, which the rule reports.
func TestJointFewRows(t *testing.T) {
	few := runJoint(t, jointSpec(true), atMost(0), [][]float64{{1, 2, 3}, {2, 1, 3}}, 2)
	if few.Status != report.Skipped || few.Message != "fast-mcd needs at least 4 rows with a value in every column, the data have 3" {
		t.Errorf("few: %s %q", few.Status, few.Message)
	}
	nan := math.NaN()
	none := runJoint(t, jointSpec(false), atMost(0), [][]float64{{1, nan}, {nan, 2}}, 2)
	if none.Status != report.OK || none.Verdict != report.Pass || none.Message != "no row has a value in every column; 2 rows with a missing or non-finite value not judged" {
		t.Errorf("none: %s %s %q", none.Status, none.Verdict, none.Message)
	}
	flat := runJoint(t, jointSpec(false), atMost(0), [][]float64{{1, 2, 3, 4}, {5, 5, 5, 5}}, 2)
	if flat.Status != report.Error || !strings.Contains(flat.Error, "not positive definite") {
		t.Errorf("constant column: %s %q", flat.Status, flat.Error)
	}
}

// TestKeyOrderColumns: the robust rule's sample, kept by lanes of
// interleaved rows and merged, is the sample of all the rows, handed over
// in the order of the rows' keys, with each row's values together.
func TestKeyOrderColumns(t *testing.T) {
	for _, n := range []int64{30, 1000} { // all rows kept; sampled
		mk := func() *bottomk.Sample {
			s, err := bottomk.New(50, 2, 9)
			if err != nil {
				t.Fatal(err)
			}
			return s
		}
		whole, a, b := mk(), mk(), mk()
		for row := range n {
			v := []float64{float64(row), -float64(row)}
			whole.Offer(row, v)
			if row%3 == 0 {
				a.Offer(row, v)
			} else {
				b.Offer(row, v)
			}
		}
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		got, want := keyOrderColumns(a), keyOrderColumns(whole)
		if !slices.Equal(got[0], want[0]) || !slices.Equal(got[1], want[1]) || len(got[0]) != int(min(n, 50)) {
			t.Fatalf("n %d: merged sample differs from the whole's, or is not of %d rows", n, min(n, 50))
		}
		for i, x := range got[0] {
			if got[1][i] != -x {
				t.Fatalf("n %d: row %v holds %v", n, x, got[1][i])
			}
			if i > 0 && bottomk.Key(9, int64(got[0][i-1])) > bottomk.Key(9, int64(x)) {
				t.Fatalf("n %d: rows not in key order at %d", n, i)
			}
		}
	}
}

// TestJointRowsRead: the judged rows of a batch are those with a value,
// finite, in every column, whether every row is (read in place), some
// are, or none; at any offset of the columns' validity bitmaps (a slice
// of a batch); and a sample offered the judged rows in runs holds what
// one offered them row by row holds.
func TestJointRowsRead(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	const n = 40
	clean := func(k int) []any {
		out := make([]any, n)
		for i := range out {
			out[i] = float64(i*(k+1)) + 0.5
		}
		return out
	}
	ints, every := make([]any, n), make([]int, n)
	for i := range ints {
		ints[i], every[i] = i-7, i
	}
	for _, tc := range []struct {
		name       string
		x, y, z    []any
		notJudged  []int
		integerCol bool
	}{
		{"all judged", clean(0), clean(1), clean(2), nil, false},
		{"nulls", withValues(clean(0), map[int]any{3: nil, 17: nil}), clean(1), withValues(clean(2), map[int]any{17: nil, 30: nil}), []int{3, 17, 30}, false},
		{"non-finite", withValues(clean(0), map[int]any{0: nan}), withValues(clean(1), map[int]any{9: inf, 39: -inf}), clean(2), []int{0, 9, 39}, false},
		{"integers", withValues(clean(0), map[int]any{8: nil}), clean(1), withValues(ints, map[int]any{5: nil}), []int{5, 8}, true},
		{"none judged", clean(0), slices.Repeat([]any{nil}, n), clean(2), every, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			mem := checkedMem(t)
			zt := tFloat
			if tc.integerCol {
				zt = tInt
			}
			whole := newBatch(t, mem, 1, col{"x", tFloat, tc.x}, col{"y", tFloat, tc.y}, col{"z", zt, tc.z})
			release(t, whole)
			env := envOf(whole, 20)
			c := compile(t, newRule(jointSpec(true), atMost(1), "x", "y", "z"), env).(*jointCheck)
			head, tail := split(t, whole, 13) // the tail's bitmaps start at bit 13
			release(t, head, tail)
			for _, part := range []struct {
				b      *source.Batch
				lo, hi int
			}{{whole, 0, n}, {head, 0, 13}, {tail, 13, n}} {
				var want []int
				for i := part.lo; i < part.hi; i++ {
					if !slices.Contains(tc.notJudged, i) {
						want = append(want, i-part.lo)
					}
				}
				var j jointRows
				if err := j.read(c, part.b); err != nil {
					t.Fatal(err)
				}
				var got []int
				for k := range j.Judged {
					got = append(got, j.row(k))
				}
				if !slices.Equal(got, want) || j.N != part.hi-part.lo || j.All != (len(want) == j.N) {
					t.Fatalf("rows %d-%d: judged %v (all %v of %d), want %v", part.lo, part.hi, got, j.All, j.N, want)
				}
				num := func(v any) float64 {
					if i, ok := v.(int); ok {
						return float64(i)
					}
					return v.(float64)
				}
				flat, cols := j.gather(), j.columns()
				for k, i := range want {
					for m, vals := range [][]any{tc.x, tc.y, tc.z} {
						w := num(vals[part.lo+i])
						if flat[3*k+m] != w || cols[m][k] != w {
							t.Errorf("judged row %d, column %d: %v and %v, want %v", k, m, flat[3*k+m], cols[m][k], w)
						}
					}
				}
				runs, byRow := bottomkSample(t, 7), bottomkSample(t, 7)
				offerRows(runs, part.b, &j, flat)
				for k := range j.Judged {
					byRow.Offer(part.b.Row(j.row(k)), flat[3*k:3*k+3])
				}
				for m := range 3 {
					if !slices.Equal(runs.Values(m), byRow.Values(m)) {
						t.Errorf("rows %d-%d: a sample offered runs holds other values of column %d", part.lo, part.hi, m)
					}
				}
			}
		})
	}
}

// bottomkSample is a sample of at most size rows of three values.
func bottomkSample(t *testing.T, size int) *bottomk.Sample {
	t.Helper()
	s, err := bottomk.New(size, 3, 11)
	if err != nil {
		t.Fatal(err)
	}
	return s
}
