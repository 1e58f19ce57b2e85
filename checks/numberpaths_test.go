package checks

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// numberPathData are columns that take every way through the Observe of
// the summary and extremes rules and the extremes lister: values of 3
// decimals (on a tally's grid) and of no resolution (in its table), -0
// beside 0, NaN and ±Inf in a few batches only, and integers.
func numberPathData() map[string][]float64 {
	rng := rand.New(rand.NewPCG(21, 22))
	measured := func(n int) []float64 {
		xs := make([]float64, n)
		for i := range xs {
			xs[i] = math.Round((18+6*rng.NormFloat64())*1000) / 1000
		}
		return xs
	}
	data := map[string][]float64{}
	on := measured(3000)
	on[17], on[1234], on[2999] = 95, -40, 61.5
	data["on the grid"] = on
	off := make([]float64, 3000)
	for i := range off {
		off[i] = 50 + 10*rng.NormFloat64()
	}
	off[2500] = 400
	data["off the grid"] = off
	zeros := make([]float64, 1200)
	for i := range zeros {
		zeros[i] = float64(rng.IntN(40)) / 4
		switch i % 97 {
		case 3:
			zeros[i] = math.Copysign(0, -1)
		case 5:
			zeros[i] = 0
		}
	}
	zeros[700] = 80
	data["-0 and 0"] = zeros
	special := measured(3000)
	special[300], special[1900] = math.NaN(), math.Inf(1)
	special[1901], special[2777] = math.Inf(-1), 200
	data["NaN and infinities"] = special
	ints := make([]float64, 2000)
	for i := range ints {
		ints[i] = float64(rng.IntN(200) - 50)
	}
	ints[999] = 5000
	data["integers"] = ints
	return data
}

// pathBatches cuts xs into batches of 250 values, batch k starting at row
// 256k+1, as a column of integers when ints is set, else of numbers. With
// nulls, each batch ends with 6 missing values, so that the values keep
// their rows.
func pathBatches(t *testing.T, xs []float64, ints, nulls bool) []*source.Batch {
	t.Helper()
	mem := checkedMem(t)
	var bs []*source.Batch
	for k := 0; 250*k < len(xs); k++ {
		var vals []any
		for _, x := range xs[250*k : min(len(xs), 250*k+250)] {
			if ints {
				vals = append(vals, int(x))
			} else {
				vals = append(vals, x)
			}
		}
		if nulls {
			vals = append(vals, nil, nil, nil, nil, nil, nil)
		}
		typ := tFloat
		if ints {
			typ = tInt
		}
		b := newBatch(t, mem, int64(256*k+1), col{"x", typ, vals})
		release(t, b)
		bs = append(bs, b)
	}
	return bs
}

// TestNumberPathsAgree: the summary and extremes rules give the same
// result over batches with and without missing values (whose values are
// gathered first, or read in place; batches with NaN or infinities, and
// esd and grubbs, take the value-by-value loops), and over the
// interleaved batches of four workers merged: the same JSON, but for the
// streamed moments, sums and means merged in another order, which may
// differ in their last bits. TestAppendValid checks the gathering on
// bitmaps of every alignment.
func TestNumberPathsAgree(t *testing.T) {
	type rule struct {
		name  string
		rule  *rules.Rule
		ints  bool    // the rule applies to integer columns
		moved float64 // how far merging in another order may move numbers; 0: not at all
	}
	var rs []rule
	for _, m := range []rules.ExtremesMethod{rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ, rules.ExtremesESD,
		rules.ExtremesGrubbs, rules.ExtremesTail} {
		moved := 0.0 // tukey and robust-z fit order statistics
		switch m {
		case rules.ExtremesZScore, rules.ExtremesTail:
			moved = 1e-12
		case rules.ExtremesESD, rules.ExtremesGrubbs: // sums over the values in another order, then a p-value of 1e-173
			moved = 1e-9
		}
		rs = append(rs, rule{"extremes " + string(m), newRule(extSpec(m), atMost(0.05), "x"), true, moved})
	}
	for _, s := range []struct {
		stat  rules.Stat
		q     float64
		moved float64
	}{{rules.StatCount, 0, 0}, {rules.StatDistinct, 0, 0}, {rules.StatMean, 0, 1e-12}, {rules.StatStd, 0, 1e-12},
		{rules.StatMin, 0, 0}, {rules.StatMax, 0, 0}, {rules.StatMedian, 0, 0}, {rules.StatQuantile, 0.95, 0}} {
		rs = append(rs, rule{fmt.Sprintf("summary %s %v", s.stat, s.q), summaryRule(s.stat, s.q, within(-1e9, 1e9), "x"), false, s.moved})
	}
	for name, xs := range numberPathData() {
		ints := name == "integers"
		dense, sparse := pathBatches(t, xs, ints, false), pathBatches(t, xs, ints, true)
		for _, r := range rs {
			if ints && !r.ints {
				continue
			}
			t.Run(name+"/"+r.name, func(t *testing.T) {
				c := compile(t, r.rule, envOf(dense[0], 20))
				want := run(t, c, sparse...)
				if want.Status != report.OK {
					t.Fatalf("status %s: %s%s", want.Status, want.Message, want.Error)
				}
				sameBytes(t, "without nulls", run(t, c, dense...), want)
				for how, bs := range map[string][]*source.Batch{"without nulls": dense, "with nulls": sparse} {
					got := runInterleaved(t, c, 4, bs...)
					if r.moved > 0 {
						sameJSON(t, how+", four workers", got, want, r.moved)
					} else {
						sameBytes(t, how+", four workers", got, want)
					}
				}
			})
		}
	}
}

// sameBytes fails unless two results write the same JSON, byte for byte.
func sameBytes(t *testing.T, name string, got, want report.Result) {
	t.Helper()
	g, err := json.Marshal(got)
	if err != nil {
		t.Fatal(err)
	}
	if w, _ := json.Marshal(want); string(g) != string(w) {
		t.Errorf("%s:\n%s\nwant\n%s", name, g, w)
	}
}

// TestFiniteExtent: the least and greatest value as min and max give
// them, -0 below 0 in any order; false for NaN or an infinity anywhere.
func TestFiniteExtent(t *testing.T) {
	negZero := math.Copysign(0, -1)
	for _, tc := range []struct {
		name   string
		xs     []float64
		lo, hi float64
		ok     bool
	}{
		{"none", nil, math.Inf(1), math.Inf(-1), true},
		{"one", []float64{2.5}, 2.5, 2.5, true},
		{"repeated extremes", []float64{3, 1, 3, 1, 2, 1, 3}, 1, 3, true},
		{"descending", []float64{5, 4, 3, 2, 1}, 1, 5, true},
		{"0 then -0", []float64{1, 0, negZero, 0.5}, negZero, 1, true},
		{"-0 then 0", []float64{negZero, 0}, negZero, 0, true},
		{"-0 then 0 below", []float64{-1, negZero, 0}, -1, 0, true},
		{"largest and smallest", []float64{math.MaxFloat64, -math.MaxFloat64, math.SmallestNonzeroFloat64}, -math.MaxFloat64,
			math.MaxFloat64, true},
		{"NaN", []float64{1, math.NaN(), 2}, 0, 0, false},
		{"+Inf last", []float64{1, 2, math.Inf(1)}, 0, 0, false},
		{"-Inf first", []float64{math.Inf(-1), 1}, 0, 0, false},
	} {
		lo, hi, ok := finiteExtent(tc.xs)
		if ok != tc.ok || math.Float64bits(lo) != math.Float64bits(tc.lo) || math.Float64bits(hi) != math.Float64bits(tc.hi) {
			t.Errorf("%s: finiteExtent(%v) = %v, %v, %v; want %v, %v, %v", tc.name, tc.xs, lo, hi, ok, tc.lo, tc.hi, tc.ok)
		}
	}
}

// TestAppendValid: the valid values of arrays of many lengths, sliced at
// many offsets (so that bitmap bytes straddle the slice's start), with
// no nulls, only nulls, and nulls here and there, in order after what
// dst holds.
func TestAppendValid(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(23, 24))
	patterns := map[string]func(i int) bool{
		"none missing":    func(int) bool { return true },
		"all missing":     func(int) bool { return false },
		"every third":     func(i int) bool { return i%3 != 0 },
		"runs of 9":       func(i int) bool { return (i/9)%2 == 0 },
		"one in 20 drawn": func(int) bool { return rng.IntN(20) != 0 },
	}
	for name, valid := range patterns {
		bld := array.NewFloat64Builder(mem)
		for i := range 90 {
			if valid(i) {
				bld.Append(float64(i) + 0.5)
			} else {
				bld.AppendNull()
			}
		}
		whole := bld.NewFloat64Array()
		bld.Release()
		for off := range 10 {
			for n := 0; off+n <= whole.Len(); n += 1 + n/8 {
				arr := array.NewSlice(whole, int64(off), int64(off+n)).(*array.Float64)
				want := []float64{-1}
				for i := range arr.Len() {
					if arr.IsValid(i) {
						want = append(want, arr.Value(i))
					}
				}
				if got := appendValid([]float64{-1}, arr.Float64Values(), validOf(arr)); !slices.Equal(got, want) {
					t.Errorf("%s, rows %d-%d: %v, want %v", name, off, off+n, got, want)
				}
				arr.Release()
			}
		}
		whole.Release()
	}
}
