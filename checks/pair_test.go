package checks

import (
	"bufio"
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestPairSampleStaysPaired: every sampled x stays with its own y,
// through adding in uneven batches and merging, and the merged shards hold
// the sample one shard fed every pair holds.
func TestPairSampleStaysPaired(t *testing.T) {
	shard := func(from, to int) *pairSample {
		s, err := newPairSample(100, 3)
		if err != nil {
			t.Fatal(err)
		}
		for lo := from; lo < to; {
			hi := min(to, lo+1+lo%37)
			var xs, ys []float64
			for i := lo; i < hi; i++ {
				xs, ys = append(xs, float64(i)), append(ys, 2*float64(i)+1)
			}
			s.add(int64(lo), nil, xs, ys)
			lo = hi
		}
		return s
	}
	a := shard(0, 5000)
	merged, err := mergeSample(a, shard(5000, 12000))
	if err != nil {
		t.Fatal(err)
	}
	merged, err = mergeSample(merged, shard(12000, 12050))
	if err != nil {
		t.Fatal(err)
	}
	xs, ys := merged.values()
	wx, wy := shard(0, 12050).values()
	if !slices.Equal(xs, wx) || !slices.Equal(ys, wy) {
		t.Errorf("merged shards hold other pairs than one sample of them all")
	}
	if len(xs) != 100 || !merged.sampled() {
		t.Fatalf("%d pairs, sampled %v; want 100 sampled", len(xs), merged.sampled())
	}
	seen := map[float64]bool{}
	late := 0
	for i, x := range xs {
		if ys[i] != 2*x+1 || seen[x] {
			t.Fatalf("pair %d is (%v, %v): not a pair of the input, or twice", i, x, ys[i])
		}
		seen[x] = true
		if x >= 5000 {
			late++
		}
	}
	// 7050 of 12050 pairs come from the later shards: about 58 of 100
	// (binomial sd 4.9); a merge that kept one side would be far off.
	if late < 40 || late > 76 {
		t.Errorf("%d of 100 sampled pairs from the later shards, want about 58", late)
	}
}

// readPairs reads two columns of a CSV file under checks/relate/testdata,
// skipping the comment line that names the source.
func readPairs(t *testing.T, file, xname, yname string) (xs, ys []float64) {
	t.Helper()
	f, err := os.Open("relate/testdata/" + file)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	var head []string
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") || line == "" {
			continue
		}
		cells := strings.Split(line, ",")
		if head == nil {
			head = cells
			continue
		}
		for k, h := range head {
			v, err := strconv.ParseFloat(cells[k], 64)
			if err != nil {
				t.Fatal(err)
			}
			switch h {
			case xname:
				xs = append(xs, v)
			case yname:
				ys = append(ys, v)
			}
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return xs, ys
}

// pairBatches cuts pairs into batches of at most size rows.
func pairBatches(t *testing.T, mem memory.Allocator, xs, ys []float64, size int) []*source.Batch {
	t.Helper()
	var out []*source.Batch
	for lo := 0; lo < len(xs); lo += size {
		hi := min(len(xs), lo+size)
		var cx, cy []any
		for i := lo; i < hi; i++ {
			cx, cy = append(cx, xs[i]), append(cy, ys[i])
		}
		b := newBatch(t, mem, int64(lo)+1, col{"x", tFloat, cx}, col{"y", tFloat, cy})
		release(t, b)
		out = append(out, b)
	}
	return out
}

func linearRule(m rules.PairMeasure, fit rules.Fit, tol rules.Tolerance) *rules.Rule {
	s := rules.PairSpec{Relation: rules.RelationLinear, Measure: m, Fit: fit, Sample: 1000, Seed: 1}
	switch m {
	case rules.PairResiduals:
		s.Residual = rules.ResidualStudentized
		if fit != rules.FitOLS {
			s.Residual = rules.ResidualStandardized
		}
	case rules.PairCorrelation, rules.PairPValue:
		s.Fit, s.Coefficient = "", rules.CoefPearson
	case rules.PairR2:
		s.Fit = ""
	}
	return newRule(s, tol, "x", "y")
}

// TestLinearAnscombe: the four data sets of Anscombe (1973, "Graphs in
// statistical analysis", The American Statistician 27(1):17-21) share the
// least-squares line y = 3.0 + 0.5 x (the NIST e-Handbook file's header),
// which the rules measure to half a unit of the last printed digit; and
// each rule's measure matches R 4.2.2 (coef(lm(y ~ x)), cor(x, y),
// summary(lm(y ~ x))$r.squared, printed with %.15g) to 1e-13.
func TestLinearAnscombe(t *testing.T) {
	mem := checkedMem(t)
	r := map[string][4]float64{ // slope, intercept, r, R²
		"1": {0.500090909090909, 3.00009090909091, 0.81642051634484, 0.666542459508775},
		"2": {0.5, 3.00090909090909, 0.816236506000243, 0.666242033727484},
		"3": {0.499727272727273, 3.00245454545454, 0.816286739489598, 0.666324041066559},
		"4": {0.499909090909091, 3.00172727272727, 0.816521436888503, 0.666707256898465},
	}
	for _, set := range []string{"1", "2", "3", "4"} {
		xs, ys := readPairs(t, "anscombe_1973_quartet.csv", "x"+set, "y"+set)
		bs := pairBatches(t, mem, xs, ys, 4)
		env := envOf(bs[0], 5)
		for k, m := range []rules.PairMeasure{rules.PairSlope, rules.PairIntercept, rules.PairCorrelation, rules.PairR2} {
			res := run(t, compile(t, linearRule(m, rules.FitOLS, within(-10, 10)), env), bs...)
			got := float64(res.Measure.Value)
			if want := r[set][k]; math.Abs(got-want) > 1e-13*math.Abs(want) {
				t.Errorf("set %s %s: %v, R gives %v", set, m, got, want)
			}
			if published := map[int]float64{0: 0.5, 1: 3.0}; k < 2 && math.Abs(got-published[k]) > 0.05 {
				t.Errorf("set %s %s: %v, published %v", set, m, got, published[k])
			}
			if res.Pair == nil || res.Pair.N != 11 || res.Pair.Line == nil || res.Pair.Points == nil || len(res.Pair.Points.X) != 11 {
				t.Errorf("set %s %s: pair %+v, want n 11, the line and the 11 points", set, m, res.Pair)
			}
		}
	}
}

// TestLinearMerged: shards of a linear rule merge to what one accumulator
// finds, for every measure and fit (the robust fits on a complete sample).
func TestLinearMerged(t *testing.T) {
	mem := checkedMem(t)
	var xs, ys []float64
	for i := range 300 {
		x := float64(i%37) + 0.25*float64(i%5)
		xs, ys = append(xs, x), append(ys, 4-0.75*x+math.Sin(float64(i)))
	}
	ys[123] += 40
	bs := pairBatches(t, mem, xs, ys, 64)
	env := envOf(bs[0], 5)
	for _, fit := range []rules.Fit{rules.FitOLS, rules.FitTheilSen, rules.FitHuber} {
		for _, m := range []rules.PairMeasure{rules.PairSlope, rules.PairIntercept, rules.PairResiduals, rules.PairCorrelation, rules.PairR2, rules.PairPValue} {
			r := linearRule(m, fit, atMost(0))
			if m != rules.PairResiduals {
				r.Tolerance = within(-100, 100)
			}
			c := compile(t, r, env)
			one, merged := run(t, c, bs...), runMerged(t, c, bs...)
			name := string(fit) + " " + string(m)
			sameResult(t, name, merged, one, 1e-12)
			if m == rules.PairResiduals {
				if count, rows, _ := listed(one); count != 1 || rows[0] != 124 || one.Offending.Rows[0].Fitted == nil {
					t.Errorf("%s: flagged %d %v, want row 124 alone with its fitted value", name, count, rows)
				}
			}
		}
	}
}

// TestLinearTooFew: a line needs three pairs; the rule then fails with an
// undefined measure and says why, rather than pass.
func TestLinearTooFew(t *testing.T) {
	mem := checkedMem(t)
	bs := pairBatches(t, mem, []float64{1, 2}, []float64{3, 5}, 10)
	env := envOf(bs[0], 5)
	for _, m := range []rules.PairMeasure{rules.PairSlope, rules.PairResiduals, rules.PairCorrelation} {
		res := run(t, compile(t, linearRule(m, rules.FitOLS, within(-10, 10)), env), bs...)
		if res.Verdict != report.Fail || !math.IsNaN(float64(res.Measure.Value)) || !strings.Contains(res.Message, "no ") {
			t.Errorf("%s: %s %v %q, want fail, undefined, and why", m, res.Verdict, res.Measure.Value, res.Message)
		}
	}
}

// TestOrderedExact: two integer columns compare as integers, so values
// beyond 2^53 that float64 would make equal stay apart; times compare in
// their unit; rows with a null are not judged.
func TestOrderedExact(t *testing.T) {
	mem := checkedMem(t)
	big := 1 << 53
	b := newBatch(t, mem, 1,
		col{"lo", tInt, []any{big + 1, 5, 7, nil, 3}},
		col{"hi", tInt, []any{big, 5, 9, 1, 1}},
		col{"start", tTime, []any{2_000_001, 10, 5, 0, nil}},
		col{"end", tTime, []any{2_000_000, 10, 6, 1, 2}},
	)
	release(t, b)
	env := envOf(b, 10)
	for _, c := range []struct {
		cols   []string
		strict bool
		rows   []int64
	}{
		{[]string{"lo", "hi"}, false, []int64{5, 1}},
		{[]string{"lo", "hi"}, true, []int64{5, 1, 2}},
		{[]string{"start", "end"}, false, []int64{1}},
		{[]string{"start", "end"}, true, []int64{1, 2}},
	} {
		r := newRule(rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered, Strict: c.strict, Seed: 1}, atMost(0), c.cols...)
		res := run(t, compile(t, r, env), b)
		count, rows, _ := listed(res)
		if count != int64(len(c.rows)) || !reflect.DeepEqual(rows, c.rows) || res.Pair.N != 4 {
			t.Errorf("%v strict %v: %d %v of %d rows, want %v of 4", c.cols, c.strict, count, rows, res.Pair.N, c.rows)
		}
	}
}

// TestAssociationAndDependency: a contingency table's V and chi-square,
// and a dependency's violating groups with their rows.
func TestAssociationAndDependency(t *testing.T) {
	mem := checkedMem(t)
	// a determines b except for a=2, seen with x twice and y once.
	b := newBatch(t, mem, 1,
		col{"a", tInt, []any{1, 1, 2, 2, 2, 3, 3, nil, 1, 3}},
		col{"b", tString, []any{"x", "x", "x", "y", "x", "z", "z", "q", "x", nil}},
	)
	release(t, b)
	env := envOf(b, 10)
	r := newRule(rules.PairSpec{Relation: rules.RelationDetermines, Measure: rules.PairDetermines}, atMost(0), "a", "b")
	res := run(t, compile(t, r, env), b)
	count, rows, scores := listed(res)
	if count != 3 || !reflect.DeepEqual(rows, []int64{4, 3, 5}) || math.Abs(scores[0]-2.0/3) > 1e-15 {
		t.Errorf("listed %d %v %v, want 3 [4 3 5], the odd one out first", count, rows, scores)
	}
	want := []report.Violation{{A: "2", Rows: 3, Values: []report.ValueCount{{Value: "x", Rows: 2}, {Value: "y", Rows: 1}}}}
	if res.Pair.ViolationCount != 1 || !reflect.DeepEqual(res.Pair.Violations, want) || res.Measure.Value != 3.0/8 {
		t.Errorf("violations %+v, share %v; want %+v, 3/8", res.Pair.Violations, res.Measure.Value, want)
	}
	// The table of the 8 rows with both values: a 1 2 3 by b x y z. X² by
	// hand: expected counts E = (row)(column)/8; V = sqrt(X²/(8·2)).
	r = newRule(rules.PairSpec{Relation: rules.RelationAssociation, Measure: rules.PairCramersV}, within(0, 1), "a", "b")
	res = run(t, compile(t, r, env), b)
	obs := [3][3]float64{{3, 0, 0}, {2, 1, 0}, {0, 0, 2}}
	rowT, colT := [3]float64{3, 3, 2}, [3]float64{5, 1, 2}
	var x2 float64
	for i := range 3 {
		for j := range 3 {
			e := rowT[i] * colT[j] / 8
			x2 += (obs[i][j] - e) * (obs[i][j] - e) / e
		}
	}
	if got, want := float64(res.Measure.Value), math.Sqrt(x2/16); math.Abs(got-want) > 1e-12 {
		t.Errorf("V %v, want %v", got, want)
	}
	if res.Statistic == nil || math.Abs(float64(res.Statistic.Value)-x2) > 1e-12 || len(res.Pair.Cells) != 9 {
		t.Errorf("statistic %+v cells %d, want X² %v over 9 cells", res.Statistic, len(res.Pair.Cells), x2)
	}
	if c := res.Pair.Cells[0]; c.A != "3" || c.B != "z" || c.Observed != 2 {
		t.Errorf("first cell %+v, want a=3 b=z, the largest residual", c)
	}
}

// TestPairCompileErrors: the columns must hold what the relation compares.
func TestPairCompileErrors(t *testing.T) {
	b := newBatch(t, memory.DefaultAllocator, 1,
		col{"x", tFloat, []any{1.0}}, col{"s", tString, []any{"a"}}, col{"d", tDate, []any{1}},
	)
	release(t, b)
	env := envOf(b, 5)
	for _, c := range []struct {
		spec rules.PairSpec
		cols []string
		want string
	}{
		{rules.PairSpec{Relation: rules.RelationLinear, Measure: rules.PairSlope, Fit: rules.FitOLS}, []string{"x", "s"},
			`column "s" holds strings (utf8); a linear pair applies to integers and numbers`},
		{rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered}, []string{"x", "d"},
			"an ordered pair compares two numbers or two times"},
		{rules.PairSpec{Relation: rules.RelationAssociation, Measure: rules.PairCramersV}, []string{"s", "x"},
			`column "x" holds numbers (float64); an association applies to strings, integers and booleans`},
		{rules.PairSpec{Relation: rules.RelationMonotonic, Measure: rules.PairCorrelation}, []string{"x"},
			"a pair rule reads two columns, the rule names 1"},
	} {
		_, err := Compile(newRule(c.spec, within(0, 1), c.cols...), env)
		if err == nil || !strings.HasSuffix(err.Error(), c.want) {
			t.Errorf("%s %v: %v, want %q", c.spec.Relation, c.cols, err, c.want)
		}
	}
}

// TestPairRowsRead: the pairs of a batch are the rows where both columns
// hold a finite value, with their places in the batch, whether the batch
// is read in place (no nulls, all finite) or copied; a batch read after
// another holds only its own pairs.
func TestPairRowsRead(t *testing.T) {
	inf := math.Inf(1)
	for _, tc := range []struct {
		name      string
		xt        arrow.DataType
		xs, ys    []any
		wantRows  []int
		nonFinite int64
	}{
		{"all finite", tFloat, []any{1.5, -2.0, 0.0}, []any{3.0, 4.0, -0.0}, []int{0, 1, 2}, 0},
		{"nulls", tFloat, []any{1.5, nil, 0.0, 7.0}, []any{3.0, 4.0, nil, 8.0}, []int{0, 3}, 0},
		{"non-finite", tFloat, []any{math.NaN(), 2.0, inf, 5.0}, []any{1.0, -inf, 3.0, 6.0}, []int{3}, 3},
		{"nulls and non-finite", tFloat, []any{nil, 2.0, math.NaN(), 5.0}, []any{1.0, nil, 3.0, 6.0}, []int{3}, 1},
		{"integers", tInt, []any{1, 2, nil, 4}, []any{0.5, 0.25, 1.0, 2.0}, []int{0, 1, 3}, 0},
		{"float32", arrow.PrimitiveTypes.Float32, []any{1.5, 2.5}, []any{1.0, 2.0}, []int{0, 1}, 0},
		{"none", tFloat, []any{nil, math.NaN()}, []any{1.0, 2.0}, nil, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			mem := checkedMem(t)
			b := newBatch(t, mem, 1, col{"x", tc.xt, tc.xs}, col{"y", tFloat, tc.ys})
			other := newBatch(t, mem, 1, col{"x", tc.xt, tc.xs[:1]}, col{"y", tFloat, []any{nil}})
			release(t, b, other)
			env := envOf(b, 20)
			x, err := bindColumn(env, "x")
			if err != nil {
				t.Fatal(err)
			}
			y, err := bindColumn(env, "y")
			if err != nil {
				t.Fatal(err)
			}
			var p pairRows
			// A batch with no pair first, so that buffers from it must not
			// show through.
			for _, bt := range []*source.Batch{other, b} {
				if err := p.read(x, y, bt); err != nil {
					t.Fatal(err)
				}
			}
			var rows []int
			for k := range p.X {
				rows = append(rows, p.row(k))
			}
			if !slices.Equal(rows, tc.wantRows) || p.NonFinite != tc.nonFinite || len(p.Y) != len(p.X) {
				t.Fatalf("rows %v, %d non-finite, %d x and %d y; want rows %v, %d non-finite",
					rows, p.NonFinite, len(p.X), len(p.Y), tc.wantRows, tc.nonFinite)
			}
			num := func(v any) float64 {
				if i, ok := v.(int); ok {
					return float64(i)
				}
				return v.(float64)
			}
			for k, i := range rows {
				if wx, wy := num(tc.xs[i]), num(tc.ys[i]); math.Float64bits(p.X[k]) != math.Float64bits(wx) ||
					math.Float64bits(p.Y[k]) != math.Float64bits(wy) {
					t.Errorf("pair %d is (%v, %v), want (%v, %v)", k, p.X[k], p.Y[k], wx, wy)
				}
			}
		})
	}
}

// TestPairSampleOffers: a pair sample holds the same pairs whether a
// batch's rows are offered as a run, at their places, or one by one by
// data-row number (a batch that lists its rows).
func TestPairSampleOffers(t *testing.T) {
	const n = 5000
	xs, ys, at, rows := make([]float64, n), make([]float64, n), make([]int, 0, n), make([]int64, n)
	for i := range n {
		xs[i], ys[i], rows[i] = float64(i), float64(3*i), int64(i)+11
	}
	for i := 0; i < n; i += 1 + i%3 {
		at = append(at, i)
	}
	pick := func(v []float64) []float64 {
		var out []float64
		for _, i := range at {
			out = append(out, v[i])
		}
		return out
	}
	for _, size := range []int{100, n} {
		var run, some, byRow, one *pairSample
		b := &source.Batch{FirstRow: 11}
		listed := &source.Batch{Rows: rows}
		for _, err := range []error{
			offer(&run, size, 5, b, nil, xs, ys),
			offer(&some, size, 5, b, at, pick(xs), pick(ys)),
			offer(&byRow, size, 5, listed, at, pick(xs), pick(ys)),
		} {
			if err != nil {
				t.Fatal(err)
			}
		}
		var err error
		if one, err = newPairSample(size, 5); err != nil {
			t.Fatal(err)
		}
		for i := range n {
			one.s.Offer(int64(i)+11, []float64{xs[i], ys[i]})
		}
		wx, wy := one.values()
		if gx, gy := run.values(); !slices.Equal(gx, wx) || !slices.Equal(gy, wy) {
			t.Errorf("size %d: a run of rows sampled other pairs than rows offered one by one", size)
		}
		sx, sy := some.values()
		if bx, by := byRow.values(); !slices.Equal(sx, bx) || !slices.Equal(sy, by) || len(sx) == 0 {
			t.Errorf("size %d: rows offered at their places and by their numbers sampled other pairs (%d, %d)", size, len(sx), len(bx))
		}
		for k, x := range sx {
			if sy[k] != 3*x || !slices.Contains(at, int(x)) {
				t.Fatalf("size %d: pair (%v, %v) was not offered", size, x, sy[k])
			}
		}
	}
}

// TestLinearCalmRows: a least-squares residuals rule that does not score
// the rows of its calm region (calmRegion) flags and lists exactly the
// rows that scoring every one by relate's Diagnose flags, over data with
// planted outliers and rows placed a few ulps either side of the region's
// edges, where some are flagged and some are not.
func TestLinearCalmRows(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(5, 6))
	var xs, ys []float64
	for i := range 3000 {
		x := 40 + 8*rng.NormFloat64()
		y := 3 + 2*x + 5*rng.NormFloat64()
		if i%500 == 7 {
			y += 30
		}
		xs, ys = append(xs, x), append(ys, y)
	}
	bs := pairBatches(t, mem, xs, ys, 700)
	env := envOf(bs[0], 1000)
	for _, res := range []rules.ResidualRule{rules.ResidualStudentized, rules.ResidualCooks} {
		t.Run(string(res), func(t *testing.T) {
			r := linearRule(rules.PairResiduals, rules.FitOLS, atMost(1))
			s := r.Spec.(rules.PairSpec)
			s.Residual = res
			if res == rules.ResidualCooks {
				s.Cutoff = 0.004 // CooksCutoff flags no row of 3,000
			}
			r.Spec = s
			first := compile(t, r, env).NewAccumulator()
			observe(t, first, bs...)
			l := first.(Rescanner).SecondPass().(*linearLister)
			line := l.fit.ols
			if !(l.calmE > 0 && l.calmDX > 0) {
				t.Fatalf("calm region |dx| <= %v, |e| <= %v: empty", l.calmDX, l.calmE)
			}
			// Probes: x at the region's edge along x and within, y a few
			// ulps around the edge along e, either side of the line.
			var px, py []float64
			for _, dx := range []float64{l.calmDX, -l.calmDX, math.Nextafter(l.calmDX, 0), 1.001 * l.calmDX, l.calmDX / 2, 0} {
				x := line.MeanX + dx
				dx, _ := line.Residual(x, 0)
				for _, sign := range []float64{1, -1} {
					y := line.MeanY + line.Slope*dx + sign*l.calmE
					for range 4 {
						y = math.Nextafter(y, math.Inf(-1))
					}
					for range 9 {
						px, py = append(px, x), append(py, y)
						y = math.Nextafter(y, math.Inf(1))
					}
				}
			}
			probes := pairBatches(t, mem, px, py, len(px))[0]
			probes.FirstRow = int64(len(xs)) + 1
			all := append(slices.Clone(bs), probes)
			observe(t, l, all...)
			got := l.Finish()

			var wantRows []int64
			var wantScores []float64
			inside, flaggedProbes := 0, 0
			for k, x := range append(slices.Clone(xs), px...) {
				y := append(slices.Clone(ys), py...)[k]
				p := line.Diagnose(x, y)
				score := math.Abs(p.Studentized)
				if res == rules.ResidualCooks {
					score = p.Cooks
				}
				dx, e := line.Residual(x, y)
				calm := math.Abs(dx) <= l.calmDX && math.Abs(e) <= l.calmE
				if k >= len(xs) && calm {
					inside++
				}
				if score > l.cutoff {
					if calm {
						t.Errorf("row %d (dx %v, e %v) is in the calm region but scores %v", k+1, dx, e, score)
					}
					if k >= len(xs) {
						flaggedProbes++
					}
					wantRows, wantScores = append(wantRows, int64(k)+1), append(wantScores, score)
				}
			}
			if inside == 0 || flaggedProbes == 0 {
				t.Fatalf("%d probes inside the calm region, %d flagged: the probes do not straddle its edge", inside, flaggedProbes)
			}
			count, rows, scores := listed(got)
			byRow := map[int64]float64{}
			for i, row := range rows {
				byRow[row] = scores[i]
			}
			if count != int64(len(wantRows)) || len(rows) != len(wantRows) {
				t.Fatalf("%d rows flagged, %d listed; scoring every row flags %d", count, len(rows), len(wantRows))
			}
			for i, row := range wantRows {
				if s, ok := byRow[row]; !ok || s != wantScores[i] {
					t.Errorf("row %d: listed %v (%v), scoring every row gives %v", row, s, ok, wantScores[i])
				}
			}
		})
	}
}
