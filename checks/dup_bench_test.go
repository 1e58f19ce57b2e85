package checks

import (
	"fmt"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// dupBenchRows is the size of the data the duplicate benchmarks read, in
// batches of the engine's 65,536 rows.
const dupBenchRows = 1 << 20

// dupBenchBatches returns dupBenchRows rows in engine-sized batches: id
// int64 counting from 1, every 1000th row repeating the previous id as
// bench/gen plants them, ts a timestamp of id seconds and s the id
// written as text.
func dupBenchBatches(b *testing.B) []*source.Batch {
	b.Helper()
	const size = 1 << 16
	mem := memory.NewGoAllocator()
	schema := arrow.NewSchema([]arrow.Field{{Name: "id", Type: tInt}, {Name: "ts", Type: tTime}, {Name: "s", Type: tString}}, nil)
	var out []*source.Batch
	for first := 0; first < dupBenchRows; first += size {
		ib := array.NewInt64Builder(mem)
		tb := array.NewTimestampBuilder(mem, tTime)
		sb := array.NewStringBuilder(mem)
		for i := first; i < first+size; i++ {
			id := int64(i + 1)
			if i%1000 == 999 {
				id--
			}
			ib.Append(id)
			tb.Append(arrow.Timestamp(id * 1_000_000))
			sb.Append(fmt.Sprintf("K-%08d", id))
		}
		ids, ts, ss := ib.NewArray(), tb.NewArray(), sb.NewArray()
		rec := array.NewRecordBatch(schema, []arrow.Array{ids, ts, ss}, size)
		ids.Release()
		ts.Release()
		ss.Release()
		out = append(out, &source.Batch{Record: rec, FirstRow: int64(first + 1)})
	}
	b.Cleanup(func() {
		for _, x := range out {
			x.Release()
		}
	})
	return out
}

// BenchmarkDuplicates measures both passes of key and unique over
// dupBenchRows rows: "first" observes every batch and calls Finish (the
// counting by hash); "second" starts from a finished first pass and
// observes every batch again, then lists the rows.
func BenchmarkDuplicates(b *testing.B) {
	bs := dupBenchBatches(b)
	env := envOf(bs[0], 20)
	cases := []struct {
		name string
		rule *rules.Rule
	}{
		{"key int64", newRule(rules.KeySpec{}, atMost(0), "id")},
		{"unique int64", newRule(rules.UniqueSpec{}, atMost(0), "id")},
		{"key timestamp", newRule(rules.KeySpec{}, atMost(0), "ts")},
		{"key string", newRule(rules.KeySpec{}, atMost(0), "s")},
		{"key int64 string", newRule(rules.KeySpec{}, atMost(0), "id", "s")},
	}
	firstPass := func(b *testing.B, c Check) Accumulator {
		a := c.NewAccumulator()
		for _, x := range bs {
			if err := a.Observe(x); err != nil {
				b.Fatal(err)
			}
		}
		return a
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		want := int64(2 * (dupBenchRows / 1000))
		b.Run(tc.name+"/first", func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(8 * dupBenchRows)
			for b.Loop() {
				res := firstPass(b, c).Finish()
				if res.Offending == nil || res.Offending.Count < want {
					b.Fatalf("first pass counts %+v, want at least %d rows", res.Offending, want)
				}
			}
			b.ReportMetric(float64(b.N)*dupBenchRows/b.Elapsed().Seconds(), "rows/s")
		})
		b.Run(tc.name+"/second", func(b *testing.B) {
			first := firstPass(b, c).(Rescanner)
			first.Finish()
			b.ReportAllocs()
			b.SetBytes(8 * dupBenchRows)
			for b.Loop() {
				a := first.SecondPass()
				for _, x := range bs {
					if err := a.Observe(x); err != nil {
						b.Fatal(err)
					}
				}
				if res := a.Finish(); res.Offending == nil || res.Offending.Count != want {
					b.Fatalf("second pass counts %+v, want %d rows", res.Offending, want)
				}
			}
			b.ReportMetric(float64(b.N)*dupBenchRows/b.Elapsed().Seconds(), "rows/s")
		})
	}
}
