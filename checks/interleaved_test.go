package checks

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"testing"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// runInterleaved evaluates c as the engine does with w workers: batch i
// goes to worker i mod w, each with its own accumulator; worker 0 absorbs
// the others in order; the same for a second pass.
func runInterleaved(t *testing.T, c Check, w int, bs ...*source.Batch) report.Result {
	t.Helper()
	pass := func(fresh func() Accumulator) Accumulator {
		accs := make([]Accumulator, w)
		for k := range accs {
			accs[k] = fresh()
		}
		for i, b := range bs {
			observe(t, accs[i%w], b)
		}
		for _, a := range accs[1:] {
			if err := accs[0].Merge(a); err != nil {
				t.Fatalf("Merge: %v", err)
			}
		}
		return accs[0]
	}
	first := pass(c.NewAccumulator)
	if r, ok := first.(Rescanner); ok && r.SecondPass() != nil {
		return pass(r.SecondPass).Finish()
	}
	return first.Finish()
}

// interleavedBatches is 12 batches of 40 rows with problems planted for
// every rule of TestMergeInterleaved, spread so that the first few of them
// by row are not the first few any one worker sees: x (positive, some
// missing, some negative), y (about 2x, a few far off, some below x), s
// (codes, a few bad, too long or short, missing), cat (three categories
// and a few unlisted values), n (integers, a few cells that did not
// parse).
func interleavedBatches(t *testing.T) []*source.Batch {
	t.Helper()
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(11, 12))
	var bs []*source.Batch
	const per = 40
	for k := range 12 {
		var x, y, s, cat, n []any
		for i := range per {
			xv := math.Exp(rng.NormFloat64()/2) + 1
			yv := 2*xv + rng.NormFloat64()/10
			switch {
			case (k*7+i)%53 == 0:
				x = append(x, nil)
			case (k*5+i*3)%61 == 0: // negative: outside a lognormal's support, below y
				x = append(x, -xv)
			default:
				x = append(x, xv)
			}
			if (k+i)%37 == 5 {
				yv = -10 * yv // far off the line, and out of order
			}
			y = append(y, yv)
			switch (k*11 + i) % 29 {
			case 0:
				s = append(s, nil)
			case 3:
				s = append(s, "D-??")
			case 7:
				s = append(s, "D-12345")
			default:
				s = append(s, fmt.Sprintf("D-%04d", rng.IntN(30)))
			}
			c := []string{"a", "b", "c"}[rng.IntN(3)]
			if (k*13+i)%31 == 2 {
				c = fmt.Sprintf("u%d", (k*i)%9)
			}
			cat = append(cat, c)
			if (k+i*5)%43 == 1 {
				n = append(n, bad("4x"))
			} else {
				n = append(n, rng.IntN(50))
			}
		}
		b := newBatch(t, mem, int64(k*per)+1, col{"x", tFloat, x}, col{"y", tFloat, y}, col{"s", tString, s},
			col{"cat", tString, cat}, col{"n", tInt, n})
		release(t, b)
		bs = append(bs, b)
	}
	return bs
}

// TestMergeInterleaved: for every rule whose accumulator these files
// define, workers that saw interleaved batches merge into the result of
// one accumulator over all of them: the same counts, the same rows listed,
// the same values quoted, the same samples (here complete) in the same
// order.
func TestMergeInterleaved(t *testing.T) {
	bs := interleavedBatches(t)
	env := envOf(bs[0], 4)
	pat := "^D-[0-9]{4}$"
	lognormal := distSpec("lognormal", "gamma")
	categorical := distSpec("categorical")
	categorical.Categories, categorical.Weights = []string{"a", "b", "c"}, []float64{1, 1, 1}
	ranked := rules.PairSpec{Relation: rules.RelationMonotonic, Measure: rules.PairCorrelation, Coefficient: rules.CoefSpearman, Sample: 1000, Seed: 1}
	tests := []struct {
		name string
		rule *rules.Rule
		// rel is how far the measure may move with the order of a
		// floating-point sum; 0 asks for the same bits.
		rel float64
	}{
		{"nulls", newRule(rules.NullsSpec{}, atMost(0), "x"), 0},
		{"type", newRule(rules.TypeSpec{Type: rules.TypeInteger}, atMost(0), "n"), 0},
		{"minimum", newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 0}, atMost(0), "x"), 0},
		{"maximum", newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 5}, atMost(0), "y"), 0},
		{"enum", newRule(rules.EnumSpec{Values: []string{"a", "b", "c"}}, atMost(0), "cat"), 0},
		{"pattern", newRule(rules.PatternSpec{Pattern: pat, Regexp: regexp.MustCompile(pat)}, atMost(0), "s"), 0},
		{"maxLength", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 6}, atMost(0), "s"), 0},
		{"row", newRule(rules.RowSpec{Expr: "x + 1 < y"}, atMost(0), "x", "y"), 0},
		{"ordered", newRule(rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered, Seed: 1}, atMost(0), "x", "y"), 0},
		{"monotonic", newRule(ranked, within(-1, 1), "x", "y"), 0},
		{"linear theil-sen", linearRule(rules.PairResiduals, rules.FitTheilSen, atMost(0)), 0},
		{"linear least squares", linearRule(rules.PairResiduals, rules.FitOLS, atMost(0)), 1e-12},
		{"association", newRule(rules.PairSpec{Relation: rules.RelationAssociation, Measure: rules.PairCramersV}, within(0, 1), "cat", "s"), 0},
		{"determines", newRule(rules.PairSpec{Relation: rules.RelationDetermines, Measure: rules.PairDetermines}, atMost(0), "s", "cat"), 0},
		{"joint robust", newRule(jointSpec(true), atMost(0), "x", "y"), 0},
		{"joint classical", newRule(jointSpec(false), atMost(0), "x", "y"), 1e-12},
		{"distribution outside the support", newRule(lognormal, distanceTol, "x"), 0},
		{"distribution categorical, unlisted values", newRule(categorical, distanceTol, "cat"), 0},
	}
	for _, tc := range tests {
		c := compile(t, tc.rule, env)
		want := run(t, c, bs...)
		for _, w := range []int{2, 3, 4, 5} { // 4: the engine's lanes
			t.Run(fmt.Sprintf("%s/%d workers", tc.name, w), func(t *testing.T) {
				got := runInterleaved(t, c, w, bs...)
				if tc.rel > 0 {
					closeResult(t, got, want, tc.rel)
					return
				}
				// As a report holds it: JSON has no NaN to compare unequal.
				g, err := json.Marshal(got)
				if err != nil {
					t.Fatal(err)
				}
				if w, _ := json.Marshal(want); string(g) != string(w) {
					t.Errorf("merged\n%s\nwant\n%s", g, w)
				}
			})
		}
	}
}

// closeResult fails unless two results have the same verdict, counts and
// listed rows, and measures and estimates within rel of each other: what
// merged floating-point moments (Chan, Golub & LeVeque's pairwise update
// against Welford's one value at a time) can promise.
func closeResult(t *testing.T, got, want report.Result, rel float64) {
	t.Helper()
	near := func(g, w float64) bool { return g == w || math.Abs(g-w) <= rel*math.Abs(w) }
	if got.Verdict != want.Verdict || !near(float64(got.Measure.Value), float64(want.Measure.Value)) {
		t.Errorf("verdict %s measure %v, want %s %v", got.Verdict, got.Measure.Value, want.Verdict, want.Measure.Value)
	}
	gc, grows, _ := listed(got)
	wc, wrows, _ := listed(want)
	if gc != wc || fmt.Sprint(grows) != fmt.Sprint(wrows) {
		t.Errorf("offending %d %v, want %d %v", gc, grows, wc, wrows)
	}
	if len(got.Estimates) != len(want.Estimates) {
		t.Errorf("estimates %v, want %v", got.Estimates, want.Estimates)
	}
	for k, w := range want.Estimates {
		if g, ok := got.Estimates[k]; !ok || !near(g, w) {
			t.Errorf("estimate %s = %v, want %v", k, g, w)
		}
	}
}
