package checks

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// climateBatches is 1M rows in batches of 64k shaped like bench/gen's
// temp_c, humidity_pct and pressure_hpa (1% of pressures missing).
func climateBatches(b *testing.B) []*source.Batch {
	b.Helper()
	const rows, per = 1 << 20, 1 << 16
	mem := memory.NewGoAllocator()
	rng := rand.New(rand.NewPCG(7, 8))
	schema := arrow.NewSchema([]arrow.Field{{Name: "t", Type: tFloat}, {Name: "h", Type: tFloat}, {Name: "p", Type: tFloat, Nullable: true}}, nil)
	var out []*source.Batch
	for first := 0; first < rows; first += per {
		tb, hb, pb := array.NewFloat64Builder(mem), array.NewFloat64Builder(mem), array.NewFloat64Builder(mem)
		for range per {
			t := 18 + 3*rng.NormFloat64()
			tb.Append(t)
			hb.Append(math.Max(0, 80-1.2*t+5*rng.NormFloat64()))
			if rng.IntN(100) == 0 {
				pb.AppendNull()
			} else {
				pb.Append(1013 + 8*rng.NormFloat64())
			}
		}
		cols := []arrow.Array{tb.NewArray(), hb.NewArray(), pb.NewArray()}
		out = append(out, &source.Batch{Record: array.NewRecordBatch(schema, cols, per), FirstRow: int64(first)})
		for _, x := range []interface{ Release() }{cols[0], cols[1], cols[2], tb, hb, pb} {
			x.Release()
		}
	}
	return out
}

// BenchmarkPairObserve is the first pass of the pair, joint and row rules
// of the bench policy over 1M rows, one accumulator: reading the columns
// as float64 and the rows where all hold a value, and what each keeps.
func BenchmarkPairObserve(b *testing.B) {
	batches := releaseAfter(b, climateBatches(b))
	env := envOf(batches[0], 20)
	linear := rules.PairSpec{Relation: rules.RelationLinear, Measure: rules.PairSlope, Fit: rules.FitOLS, Sample: rules.DefaultPairSample, Seed: 1}
	cases := []struct {
		name string
		rule *rules.Rule
	}{
		{"linear", newRule(linear, within(-2, 0), "t", "h")},
		{"ordered", newRule(rules.PairSpec{Relation: rules.RelationOrdered, Measure: rules.PairOrdered, Seed: 1}, atMost(0), "t", "h")},
		{"joint classical", newRule(jointSpec(false), atMost(0.01), "t", "h", "p")},
		{"joint robust", newRule(jointSpec(true), atMost(0.01), "t", "h", "p")},
		{"row", newRule(rules.RowSpec{Expr: "h + t < 150"}, atMost(0), "h", "t")},
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name, func(b *testing.B) {
			perRow(b, len(batches)<<16, func() { firstPass(b, c, batches) })
		})
	}
}

// BenchmarkJointSecondPass is the joint rule's second pass over 1M rows,
// one accumulator, classical and robust: every judged row's distance, the
// listing and the sample of distances for the plot.
func BenchmarkJointSecondPass(b *testing.B) {
	batches := releaseAfter(b, climateBatches(b))
	for _, robust := range []bool{false, true} {
		c, err := Compile(newRule(jointSpec(robust), atMost(0.01), "t", "h", "p"), envOf(batches[0], 20))
		if err != nil {
			b.Fatal(err)
		}
		first := firstPass(b, c, batches)
		first.(Rescanner).SecondPass() // the estimate, made once
		name := "classical"
		if robust {
			name = "robust"
		}
		b.Run(name, func(b *testing.B) {
			benchSecondPass(b, first, batches)
		})
	}
}

// BenchmarkLinearSecondPass is the second pass of a linear residuals rule
// over 1M rows, one accumulator: every row scored against the least-squares
// line by its studentized residual or Cook's distance, and the listing.
func BenchmarkLinearSecondPass(b *testing.B) {
	batches := releaseAfter(b, climateBatches(b))
	for _, res := range []rules.ResidualRule{rules.ResidualStudentized, rules.ResidualCooks} {
		s := rules.PairSpec{Relation: rules.RelationLinear, Measure: rules.PairResiduals, Fit: rules.FitOLS,
			Residual: res, Sample: rules.DefaultPairSample, Seed: 1}
		c, err := Compile(newRule(s, atMost(0.01), "t", "h"), envOf(batches[0], 20))
		if err != nil {
			b.Fatal(err)
		}
		first := firstPass(b, c, batches)
		b.Run(string(res), func(b *testing.B) {
			benchSecondPass(b, first, batches)
		})
	}
}

// firstPass runs check c's first pass over batches, one accumulator.
func firstPass(b *testing.B, c Check, batches []*source.Batch) Accumulator {
	b.Helper()
	a := c.NewAccumulator()
	for _, bt := range batches {
		if err := a.Observe(bt); err != nil {
			b.Fatal(err)
		}
	}
	return a
}

// benchSecondPass measures the second pass of first over batches, per
// row of batches of 2¹⁶ rows.
func benchSecondPass(b *testing.B, first Accumulator, batches []*source.Batch) {
	b.Helper()
	perRow(b, len(batches)<<16, func() {
		a := first.(Rescanner).SecondPass()
		for _, bt := range batches {
			if err := a.Observe(bt); err != nil {
				b.Fatal(err)
			}
		}
	})
}
