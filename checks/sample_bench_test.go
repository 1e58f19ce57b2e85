package checks

import (
	"fmt"
	"testing"
)

// BenchmarkSampledObserve is the first pass of the rules that keep a
// seeded sample, as the engine runs it: batches of 1M rows (three
// columns, benchColumns) dealt round-robin to four accumulators (the
// engine's lanes), repeated under later row numbers to reach 10M rows,
// then the lanes merged. Three distribution rules (default sample 10⁶,
// as bench/policy.yaml has) and a robust joint rule (default sample
// 10⁵). cpu-ns/row is the process CPU per row (GC included).
func BenchmarkSampledObserve(b *testing.B) {
	bs := releaseAfter(b, benchColumns(b))
	env := envOf(bs[0], 20)
	var checks []Check
	for _, col := range []string{"x1", "x2", "x3"} {
		c, err := Compile(newRule(distSpec("normal"), distanceTol, col), env)
		if err != nil {
			b.Fatal(err)
		}
		checks = append(checks, c)
	}
	joint, err := Compile(newRule(jointSpec(true), atMost(0.05), "x1", "x2", "x3"), env)
	if err != nil {
		b.Fatal(err)
	}
	const lanes = 4
	for _, tc := range []struct {
		name   string
		checks []Check
	}{{"distribution x3", checks}, {"joint robust", []Check{joint}}} {
		for _, times := range []int{1, 10} {
			b.Run(fmt.Sprintf("%s/%dM rows", tc.name, times), func(b *testing.B) {
				perRow(b, times*benchRows, func() {
					for _, c := range tc.checks {
						accs := make([]Accumulator, lanes)
						if m, ok := c.(LaneMaker); ok {
							accs = m.NewAccumulators(lanes)
						} else {
							for i := range accs {
								accs[i] = c.NewAccumulator()
							}
						}
						k := 0
						for rep := range times {
							for _, bt := range bs {
								moved := *bt
								moved.FirstRow += int64(rep * benchRows)
								if err := accs[k%lanes].Observe(&moved); err != nil {
									b.Fatal(err)
								}
								k++
							}
						}
						for _, a := range accs[1:] {
							if err := accs[0].Merge(a); err != nil {
								b.Fatal(err)
							}
						}
					}
				})
			})
		}
	}
}
