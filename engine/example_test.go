package engine_test

import (
	"context"
	"fmt"
	"log"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/rules"
)

// A Go program embeds the engine as the command does: load a policy once,
// run it on data, read the report.
func Example() {
	pol, err := rules.Load("../testdata/conformance/value-bounds/policy.yaml")
	if err != nil {
		log.Fatal(err)
	}
	rep, err := engine.Run(context.Background(), pol, nil, engine.Options{MaxRowsListed: 3})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%s: %d rows, verdict %s\n", rep.Policy.Name, rep.Rows, rep.Verdict)
	for _, res := range rep.Results {
		if res.Offending != nil {
			fmt.Printf("%-30s %s  %s\n", res.ID, res.Verdict, res.Message)
		}
	}
	// Output:
	// value-bounds: 6 rows, verdict fail
	// columns.depth_m.minimum        fail  1 of 5 values (20%) are below 0
	// columns.depth_m.maximum        fail  2 of 5 values (40%) are above 50
	// columns.depth_m.nulls          warn  1 of 6 rows (16.67%) are missing a value
	// columns.crew.exclusiveMinimum  fail  1 of 6 values (16.67%) are at or below 0
	// columns.crew.maximum           warn  1 of 6 values (16.67%) are above 8
}
