package checks

import (
	"regexp"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// BenchmarkStringCodes runs the rules on strings of the bench policy over
// 1M rows (deviceBatches) with one accumulator, as a worker does, on
// batches without codes and on the same batches with them (one dictionary
// for all 16 batches, as a Parquet row group of 1M rows gives it).
func BenchmarkStringCodes(b *testing.B) {
	plain := releaseAfter(b, deviceBatches(b))
	coded := releaseAfter(b, withCodes(b, memory.NewGoAllocator(), plain, len(plain), ""))
	env := envOf(plain[0], 20)
	const pat = "^D-[0-9]{4}$"
	cases := []struct {
		name string
		rule *rules.Rule
	}{
		{"pattern", newRule(rules.PatternSpec{Pattern: pat, Regexp: regexp.MustCompile(pat)}, atMost(0), "dev")},
		{"pattern regexp", newRule(rules.PatternSpec{Pattern: "^D-[0-9]+$", Regexp: regexp.MustCompile("^D-[0-9]+$")}, atMost(0), "dev")},
		{"maxLength", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 6}, atMost(0), "dev")},
		{"enum", newRule(rules.EnumSpec{Values: []string{"north", "south", "east", "west", "lab"}}, atMost(0), "site")},
		{"row site", newRule(rules.RowSpec{Expr: `site != "lab" || items <= 25`}, atMost(0), "site", "items")},
		{"row dev", newRule(rules.RowSpec{Expr: `dev startsWith "D-1" && len(dev) == 6`}, atMost(0), "dev")},
	}
	rows := 0
	for _, bt := range plain {
		rows += int(bt.Record.NumRows())
	}
	for _, tc := range cases {
		c, err := Compile(tc.rule, env)
		if err != nil {
			b.Fatal(err)
		}
		for _, data := range []struct {
			name string
			bs   []*source.Batch
		}{{"plain", plain}, {"codes", coded}} {
			b.Run(tc.name+"/"+data.name, func(b *testing.B) {
				perRow(b, rows, func() {
					a := c.NewAccumulator()
					for _, bt := range data.bs {
						if err := a.Observe(bt); err != nil {
							b.Fatal(err)
						}
					}
					a.Finish()
				})
			})
		}
	}
}
