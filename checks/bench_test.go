package checks

import (
	"fmt"
	"math/rand/v2"
	"regexp"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// benchBatch is one batch of n rows: x float64 (1% missing), n int64 (all
// distinct), s strings of 8 characters.
func benchBatch(b *testing.B, n int) *source.Batch {
	b.Helper()
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(1, 2))
	xb := array.NewFloat64Builder(mem)
	nb := array.NewInt64Builder(mem)
	sb := array.NewStringBuilder(mem)
	for i := range n {
		if rng.IntN(100) == 0 {
			xb.AppendNull()
		} else {
			xb.Append(rng.NormFloat64()*10 + 50)
		}
		nb.Append(int64(i))
		sb.Append(fmt.Sprintf("H-%05d", rng.IntN(100000)))
	}
	x, ni, s := xb.NewArray(), nb.NewArray(), sb.NewArray()
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: tFloat, Nullable: true}, {Name: "n", Type: tInt}, {Name: "s", Type: tString}}, nil)
	rec := array.NewRecordBatch(schema, []arrow.Array{x, ni, s}, int64(n))
	x.Release()
	ni.Release()
	s.Release()
	return &source.Batch{Record: rec, FirstRow: 1}
}

// BenchmarkObserve measures each kind's Observe on batches of 64k rows;
// allocations per op are per batch, not per value.
func BenchmarkObserve(b *testing.B) {
	const rows = 1 << 16
	batch := benchBatch(b, rows)
	defer batch.Release()
	env := envOf(batch, 20)
	cases := []struct {
		name string
		rule *rules.Rule
	}{
		{"nulls", newRule(rules.NullsSpec{}, atMost(0), "x")},
		{"maximum float", newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 80}, atMost(0), "x")},
		{"minimum int", newRule(rules.BoundSpec{Bound: rules.KindMinimum, Value: 10}, atMost(0), "n")},
		{"enum int", newRule(rules.EnumSpec{Values: []string{"1", "2"}, Numbers: []float64{1, 2}}, atMost(0), "n")},
		{"pattern", newRule(rules.PatternSpec{Pattern: "^H-[0-9]{5}$", Regexp: regexp.MustCompile("^H-[0-9]{5}$")}, atMost(0), "s")},
		{"maxLength", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 8}, atMost(0), "s")},
		{"mean", newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 100), "x")},
		{"median", newRule(rules.SummarySpec{Stat: rules.StatMedian, Q: 0.5}, within(0, 100), "x")},
		{"distinct strings", newRule(rules.SummarySpec{Stat: rules.StatDistinct}, within(0, 1e9), "s")},
		{"unique int first pass", newRule(rules.UniqueSpec{}, atMost(0), "n")},
		{"key first pass", newRule(rules.KeySpec{}, atMost(0), "s", "n")},
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				a := c.NewAccumulator()
				if err := a.Observe(batch); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*rows), "ns/row")
		})
	}
}
