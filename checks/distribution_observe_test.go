package checks

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/engine/source"
)

// distCell is one cell of a column a distribution rule observes: a value
// or a null.
type distCell struct {
	x    float64
	null bool
}

// distColumnBatch is one batch of column "x" (float64, or int64 when
// ints) holding cells, whose first row is data row first.
func distColumnBatch(t *testing.T, mem memory.Allocator, ints bool, first int64, cells []distCell) *source.Batch {
	t.Helper()
	typ := arrow.DataType(tFloat)
	if ints {
		typ = tInt
	}
	bld := array.NewBuilder(mem, typ)
	defer bld.Release()
	for _, c := range cells {
		switch {
		case c.null:
			bld.AppendNull()
		case ints:
			bld.(*array.Int64Builder).Append(int64(c.x))
		default:
			bld.(*array.Float64Builder).Append(c.x)
		}
	}
	arr := bld.NewArray()
	defer arr.Release()
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: typ, Nullable: true}}, nil)
	return &source.Batch{Record: array.NewRecordBatch(schema, []arrow.Array{arr}, int64(len(cells))), FirstRow: first}
}

// observedRef is what the first pass of a distribution rule must hold
// after the cells, computed one cell at a time with each family's own
// support test (dist.Family.InSupport) as the rule's definition reads.
type observedRef struct {
	n        int64
	min, max float64
	outside  []OutsideValues
	rows     []int64 // the finite values' rows, in order
	values   []float64
}

func referenceObserve(t *testing.T, families []string, cells []distCell) observedRef {
	t.Helper()
	r := observedRef{min: math.Inf(1), max: math.Inf(-1), outside: make([]OutsideValues, len(families))}
	var ins []func(float64) bool
	for _, name := range families {
		f, err := dist.Lookup(name)
		if err != nil {
			t.Fatal(err)
		}
		in, _ := f.InSupport()
		ins = append(ins, in)
	}
	for i, c := range cells {
		if c.null {
			continue
		}
		row := int64(i + 1)
		r.n++
		for k, in := range ins {
			if !in(c.x) {
				r.outside[k].add(c.x, row)
			}
		}
		if math.IsNaN(c.x) || math.IsInf(c.x, 0) {
			continue
		}
		r.min, r.max = min(r.min, c.x), max(r.max, c.x)
		r.rows, r.values = append(r.rows, row), append(r.values, c.x)
	}
	return r
}

// TestDistributionObserveInPlace: the first pass of a distribution rule
// counts, bounds, tests against each candidate's support and samples
// the values exactly as a test of each value by each family would,
// whether a batch is read in place (no null, every value inside every
// support) or not, and wherever the first value that stops the in-place
// reading lies: at the start, inside or at the end of a batch, or in a
// batch after one read in place.
func TestDistributionObserveInPlace(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	negZero := math.Copysign(0, -1)
	inside := func(n int, f func(i int) float64) []distCell {
		cs := make([]distCell, n)
		for i := range cs {
			cs[i] = distCell{x: f(i)}
		}
		return cs
	}
	with := func(cs []distCell, at int, c distCell) []distCell {
		cs = slices.Clone(cs)
		cs[at] = c
		return cs
	}
	pos := inside(40, func(i int) float64 { return 1 + float64(i%7)/4 })
	counts := inside(40, func(i int) float64 { return float64(i % 5) })
	cases := []struct {
		name     string
		families []string
		ints     bool
		cells    []distCell
	}{
		{"every value inside", []string{"lognormal", "gamma"}, false, pos},
		{"a null first", []string{"lognormal"}, false, with(pos, 0, distCell{null: true})},
		{"a null last", []string{"lognormal"}, false, with(pos, 39, distCell{null: true})},
		{"zero inside, outside lognormal", []string{"normal", "lognormal", "exponential"}, false, with(pos, 17, distCell{x: 0})},
		{"negative first", []string{"normal", "lognormal", "exponential"}, false, with(pos, 0, distCell{x: -2})},
		{"negative last", []string{"exponential", "normal"}, false, with(pos, 39, distCell{x: -2})},
		{"NaN", []string{"normal"}, false, with(pos, 9, distCell{x: nan})},
		{"+Inf", []string{"normal", "lognormal"}, false, with(pos, 25, distCell{x: inf})},
		{"-Inf last", []string{"exponential"}, false, with(pos, 39, distCell{x: -inf})},
		{"signed zeros", []string{"normal", "exponential"}, false,
			with(with(with(pos, 3, distCell{x: 0}), 11, distCell{x: negZero}), 30, distCell{x: 0})},
		{"signed zeros and a null", []string{"normal", "exponential"}, false,
			with(with(with(pos, 3, distCell{x: 0}), 11, distCell{x: negZero}), 5, distCell{null: true})},
		{"fraction, counts", []string{"poisson"}, false, with(counts, 21, distCell{x: 2.5})},
		{"counts inside", []string{"poisson", "geometric"}, false, counts},
		{"beta at 1", []string{"beta"}, false,
			with(inside(40, func(i int) float64 { return float64(i+1) / 42 }), 33, distCell{x: 1})},
		{"integers inside", []string{"poisson", "normal"}, true, counts},
		{"integers, a negative", []string{"poisson", "normal"}, true, with(counts, 12, distCell{x: -3})},
		{"integers, a null", []string{"lognormal"}, true, with(pos, 5, distCell{null: true})},
		{"many outside", []string{"lognormal", "normal"}, false,
			inside(40, func(i int) float64 { return float64(i%9) - 4 })},
	}
	for _, c := range cases {
		if c.ints {
			for i := range c.cells {
				c.cells[i].x = math.Trunc(c.cells[i].x)
			}
		}
		want := referenceObserve(t, c.families, c.cells)
		for _, per := range []int{40, 13, 5, 1} {
			t.Run(fmt.Sprintf("%s/%d per batch", c.name, per), func(t *testing.T) {
				mem := checkedMem(t)
				var bs []*source.Batch
				for lo := 0; lo < len(c.cells); lo += per {
					bs = append(bs, distColumnBatch(t, mem, c.ints, int64(lo+1), c.cells[lo:min(lo+per, len(c.cells))]))
				}
				release(t, bs...)
				chk := compile(t, newRule(distSpec(c.families...), distanceTol, "x"), envOf(bs[0], 20))
				a := chk.NewAccumulator().(*DistributionAccumulator)
				for _, b := range bs {
					if err := a.Observe(b); err != nil {
						t.Fatal(err)
					}
				}
				checkObserved(t, a, want)
			})
		}
	}
}

// checkObserved compares a first pass with the reference.
func checkObserved(t *testing.T, a *DistributionAccumulator, want observedRef) {
	t.Helper()
	if a.N != want.n || math.Float64bits(a.Min) != math.Float64bits(want.min) ||
		math.Float64bits(a.Max) != math.Float64bits(want.max) {
		t.Errorf("N, Min, Max = %d, %v, %v, want %d, %v, %v", a.N, a.Min, a.Max, want.n, want.min, want.max)
	}
	for k, o := range a.Outside {
		w := want.outside[k]
		if o.Count != w.Count || !slices.Equal(o.Rows, w.Rows) || !slices.EqualFunc(o.Values, w.Values, sameFloat) {
			t.Errorf("Outside[%d] = %+v, want %+v", k, o, w)
		}
	}
	var rows []int64
	var values []float64
	if a.Sample != nil {
		rows, values = a.Sample.Rows(), a.Sample.Values(0)
	}
	if !slices.Equal(rows, want.rows) || !slices.EqualFunc(values, want.values, sameFloat) {
		t.Errorf("sample rows %v values %v, want %v %v", rows, values, want.rows, want.values)
	}
}

// sameFloat reports whether x and y have the same bits.
func sameFloat(x, y float64) bool { return math.Float64bits(x) == math.Float64bits(y) }

// TestBoundsOf: the least and greatest value by four running minima and
// maxima are, to the bit (any NaN for a NaN), those of one running min and
// max, whatever the length and wherever a NaN, an infinity or a zero of
// either sign lies.
func TestBoundsOf(t *testing.T) {
	negZero := math.Copysign(0, -1)
	specials := []float64{math.NaN(), math.Inf(1), math.Inf(-1), negZero, 0, -3, 7}
	for n := 1; n <= 9; n++ {
		for at := range n {
			for _, sp := range specials {
				for _, fill := range []float64{1.5, 0, negZero} {
					xs := make([]float64, n)
					for i := range xs {
						xs[i] = fill + float64(i%3)*float64(min(1, int(fill*2)))
					}
					xs[at] = sp
					least, most := xs[0], xs[0]
					for _, x := range xs {
						least, most = min(least, x), max(most, x)
					}
					gotL, gotM := boundsOf(xs)
					same := func(x, y float64) bool { return sameFloat(x, y) || math.IsNaN(x) && math.IsNaN(y) }
					if !same(gotL, least) || !same(gotM, most) {
						t.Errorf("boundsOf(%v) = %v, %v, want %v, %v", xs, gotL, gotM, least, most)
					}
				}
			}
		}
	}
	ints := []int64{4, -9, 1 << 53, 3, -(1 << 60), 0, 12}
	if l, m := boundsOf(ints); l != -(1<<60) || m != 1<<53 {
		t.Errorf("boundsOf(%v) = %v, %v, want %v, %v", ints, l, m, float64(-(1 << 60)), float64(1<<53))
	}
}
