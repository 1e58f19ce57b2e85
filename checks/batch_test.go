package checks

import (
	"math"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Helpers shared by the tests of this package: batches built from Go
// values, rules, and runs of a check over batches.

// col is one column of a test batch: nil is a missing value, a bad is a
// cell that did not parse (null in the record, listed in Batch.Invalid).
type col struct {
	name string
	typ  arrow.DataType
	vals []any
}

type bad string

var (
	tInt    = arrow.PrimitiveTypes.Int64
	tFloat  = arrow.PrimitiveTypes.Float64
	tString = arrow.BinaryTypes.String
	tBool   = arrow.FixedWidthTypes.Boolean
	tDate   = arrow.FixedWidthTypes.Date32
	tTime   = &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
)

// newBatch builds a batch whose first row is data row first, read from
// file lines first+1 on (after a header line).
func newBatch(t *testing.T, mem memory.Allocator, first int64, cols ...col) *source.Batch {
	t.Helper()
	fields := make([]arrow.Field, len(cols))
	arrs := make([]arrow.Array, len(cols))
	b := &source.Batch{FirstRow: first}
	n := len(cols[0].vals)
	for k, c := range cols {
		if len(c.vals) != n {
			t.Fatalf("column %s has %d values, want %d", c.name, len(c.vals), n)
		}
		fields[k] = arrow.Field{Name: c.name, Type: c.typ, Nullable: true}
		bld := array.NewBuilder(mem, c.typ)
		for i, v := range c.vals {
			if text, ok := v.(bad); ok {
				if b.Invalid == nil {
					b.Invalid = map[int][]source.InvalidCell{}
				}
				b.Invalid[k] = append(b.Invalid[k], source.InvalidCell{Row: i, Text: string(text)})
				v = nil
			}
			appendValue(t, bld, v)
		}
		arrs[k] = bld.NewArray()
		bld.Release()
	}
	for i := range n {
		b.Lines = append(b.Lines, first+int64(i)+1)
	}
	b.Record = array.NewRecordBatch(arrow.NewSchema(fields, nil), arrs, int64(n))
	for _, a := range arrs {
		a.Release()
	}
	return b
}

func appendValue(t *testing.T, bld array.Builder, v any) {
	t.Helper()
	if v == nil {
		bld.AppendNull()
		return
	}
	switch b := bld.(type) {
	case *array.Int64Builder:
		b.Append(int64(v.(int)))
	case *array.Int32Builder:
		b.Append(int32(v.(int)))
	case *array.Float64Builder:
		b.Append(v.(float64))
	case *array.Float32Builder:
		b.Append(float32(v.(float64)))
	case interface{ Append(string) }: // utf8, large utf8, utf8 view
		b.Append(v.(string))
	case *array.BooleanBuilder:
		b.Append(v.(bool))
	case *array.Date32Builder:
		b.Append(arrow.Date32(v.(int)))
	case *array.TimestampBuilder:
		b.Append(arrow.Timestamp(v.(int)))
	default:
		t.Fatalf("no test builder for %T", bld)
	}
}

// release releases batches at the end of a test.
func release(t *testing.T, bs ...*source.Batch) {
	t.Helper()
	t.Cleanup(func() {
		for _, b := range bs {
			b.Release()
		}
	})
}

// checkedMem is an allocator that fails the test if anything is left
// allocated when the test (and its cleanups) end.
func checkedMem(t *testing.T) *memory.CheckedAllocator {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	t.Cleanup(func() { mem.AssertSize(t, 0) })
	return mem
}

// split cuts b after row at into two batches with the right row numbers,
// lines and invalid cells.
func split(t *testing.T, b *source.Batch, at int) (*source.Batch, *source.Batch) {
	t.Helper()
	n := int(b.Record.NumRows())
	part := func(lo, hi int) *source.Batch {
		p := &source.Batch{
			Record:   b.Record.NewSlice(int64(lo), int64(hi)),
			Source:   b.Source,
			FirstRow: b.FirstRow + int64(lo),
			Lines:    b.Lines[lo:hi],
		}
		for c, cells := range b.Invalid {
			for _, cell := range cells {
				if cell.Row >= lo && cell.Row < hi {
					if p.Invalid == nil {
						p.Invalid = map[int][]source.InvalidCell{}
					}
					p.Invalid[c] = append(p.Invalid[c], source.InvalidCell{Row: cell.Row - lo, Text: cell.Text})
				}
			}
		}
		return p
	}
	return part(0, at), part(at, n)
}

// envOf is an environment for batches shaped like b.
func envOf(b *source.Batch, maxRows int) *Env {
	s := b.Record.Schema()
	names := make([]string, s.NumFields())
	for i, f := range s.Fields() {
		names[i] = f.Name
	}
	return &Env{Schema: s, DataColumns: names, MaxRowsListed: maxRows}
}

// atMost is a tolerance that fails a share above fail.
func atMost(fail float64) rules.Tolerance {
	return rules.Tolerance{Direction: rules.HigherIsWorse, Fail: rules.AtMost(fail)}
}

// within is a tolerance that fails a value outside [lo, hi].
func within(lo, hi float64) rules.Tolerance {
	return rules.Tolerance{Direction: rules.OutsideIsWorse, Fail: &rules.Limit{Lo: lo, Hi: hi}}
}

func newRule(spec rules.Spec, tol rules.Tolerance, cols ...string) *rules.Rule {
	return &rules.Rule{ID: "test." + string(spec.Kind()), Kind: spec.Kind(), Columns: cols, Spec: spec, Tolerance: tol}
}

func compile(t *testing.T, r *rules.Rule, env *Env) Check {
	t.Helper()
	c, err := Compile(r, env)
	if err != nil {
		t.Fatalf("Compile(%s): %v", r.ID, err)
	}
	return c
}

// run evaluates c over the batches with one accumulator, and a second pass
// when the check asks for one.
func run(t *testing.T, c Check, bs ...*source.Batch) report.Result {
	t.Helper()
	a := c.NewAccumulator()
	observe(t, a, bs...)
	if r, ok := a.(Rescanner); ok {
		if next := r.SecondPass(); next != nil {
			a = next
			observe(t, a, bs...)
		}
	}
	return a.Finish()
}

// runMerged evaluates c with one accumulator per batch, merged in order,
// in both passes.
func runMerged(t *testing.T, c Check, bs ...*source.Batch) report.Result {
	t.Helper()
	merge := func(make func() Accumulator) Accumulator {
		var all Accumulator
		for _, b := range bs {
			a := make()
			observe(t, a, b)
			if all == nil {
				all = a
				continue
			}
			if err := all.Merge(a); err != nil {
				t.Fatalf("Merge: %v", err)
			}
		}
		return all
	}
	first := merge(c.NewAccumulator)
	if r, ok := first.(Rescanner); ok && r.SecondPass() != nil {
		return merge(r.SecondPass).Finish()
	}
	return first.Finish()
}

func observe(t *testing.T, a Accumulator, bs ...*source.Batch) {
	t.Helper()
	for _, b := range bs {
		if err := a.Observe(b); err != nil {
			t.Fatalf("Observe rows %d-: %v", b.FirstRow, err)
		}
	}
}

// sameResult fails unless two results agree, measures to within rel.
func sameResult(t *testing.T, name string, got, want report.Result, rel float64) {
	t.Helper()
	g, w := float64(got.Measure.Value), float64(want.Measure.Value)
	if !(g == w || math.IsNaN(g) && math.IsNaN(w) || math.Abs(g-w) <= rel*math.Abs(w)) {
		t.Errorf("%s: measure %v, want %v", name, g, w)
	}
	got.Measure.Value, want.Measure.Value = 0, 0
	if !reflect.DeepEqual(got, want) {
		t.Errorf("%s: result\n%+v\nwant\n%+v", name, got, want)
	}
}

// listed returns the row numbers and scores of a result's offending rows.
func listed(res report.Result) (count int64, rows []int64, scores []float64) {
	if res.Offending == nil {
		return 0, nil, nil
	}
	for _, r := range res.Offending.Rows {
		rows = append(rows, r.Row)
		scores = append(scores, float64(r.Score))
	}
	return res.Offending.Count, rows, scores
}
