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

// deviceBatches is 1M rows in batches of 64k, shaped like bench/gen's
// device and site columns: dev holds "D-" and four digits (10,000
// distinct, one in 10,000 the planted "D-??", 1% missing), site one of six
// names, items an integer from 0 to 30.
func deviceBatches(b *testing.B) []*source.Batch {
	b.Helper()
	const rows, per = 1 << 20, 1 << 16
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(3, 4))
	sites := []string{"north", "south", "east", "west", "lab", "depot"}
	schema := arrow.NewSchema([]arrow.Field{{Name: "dev", Type: tString, Nullable: true}, {Name: "site", Type: tString}, {Name: "items", Type: tInt}}, nil)
	var out []*source.Batch
	for first := 0; first < rows; first += per {
		db, sb, ib := array.NewStringBuilder(mem), array.NewStringBuilder(mem), array.NewInt64Builder(mem)
		for range per {
			switch r := rng.IntN(10000); {
			case r < 100:
				db.AppendNull()
			case r == 100:
				db.Append("D-??")
			default:
				db.Append(fmt.Sprintf("D-%04d", rng.IntN(10000)))
			}
			sb.Append(sites[rng.IntN(len(sites))])
			ib.Append(rng.Int64N(31))
		}
		d, s, it := db.NewArray(), sb.NewArray(), ib.NewArray()
		out = append(out, &source.Batch{Record: array.NewRecordBatch(schema, []arrow.Array{d, s, it}, per), FirstRow: int64(first)})
		for _, x := range []interface{ Release() }{d, s, it, db, sb, ib} {
			x.Release()
		}
	}
	return out
}

// BenchmarkStringValues runs the rules on single strings of the bench
// policy over 1M rows with one accumulator, as a worker does.
func BenchmarkStringValues(b *testing.B) {
	batches := releaseAfter(b, deviceBatches(b))
	env := envOf(batches[0], 20)
	const pat = "^D-[0-9]{4}$"
	cases := []struct {
		name string
		rule *rules.Rule
	}{
		{"pattern", newRule(rules.PatternSpec{Pattern: pat, Regexp: regexp.MustCompile(pat)}, atMost(0), "dev")},
		{"maxLength", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 6}, atMost(0), "dev")},
		{"enum", newRule(rules.EnumSpec{Values: []string{"north", "south", "east", "west", "lab"}}, atMost(0), "site")},
	}
	rows := 0
	for _, bt := range batches {
		rows += int(bt.Record.NumRows())
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			perRow(b, rows, func() {
				a := c.NewAccumulator()
				for _, bt := range batches {
					if err := a.Observe(bt); err != nil {
						b.Fatal(err)
					}
				}
			})
		})
	}
}

// perRow runs op, which handles rows rows, b.N times, and reports wall
// and CPU time per row (CPU time is the steadier figure on a shared
// machine) and allocations per op.
func perRow(b *testing.B, rows int, op func()) {
	b.Helper()
	b.ReportAllocs()
	b.SetBytes(int64(rows)) // so MB/s reads as millions of rows a second
	cpu := processCPU()
	for b.Loop() {
		op()
	}
	cpu = processCPU() - cpu
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*rows), "ns/row")
	b.ReportMetric(float64(cpu.Nanoseconds())/float64(b.N*rows), "cpu-ns/row")
}
