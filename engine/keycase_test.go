package engine_test

import (
	"context"
	"fmt"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// TestKeyCaseUnivariate runs every univariate extremes method on every
// column of the conformance case joint-key-case, whose six planted rows
// break the columns' joint pattern while each of their values is
// ordinary: no method may flag any value (the case's own policy shows
// that the joint rules flag exactly those rows).
func TestKeyCaseUnivariate(t *testing.T) {
	dir := filepath.Join("..", "testdata", "conformance", "joint-key-case")
	methods := []string{"tukey", "zscore", "robust-z", "esd", "grubbs", "tail"}
	for _, m := range methods {
		t.Run(m, func(t *testing.T) {
			src := "policy: key-case-univariate\ndata: [data.csv]\ncolumns:\n"
			family := "" // the tail method fits the column's distribution
			if m == "tail" {
				family = "distribution: {family: normal, resolution: none, tolerance: 1}, "
			}
			for _, c := range []string{"air_temp_c", "humidity_pct", "co2_ppm"} {
				src += fmt.Sprintf("  %s: {type: number, %sextremes: %s}\n", c, family, m)
			}
			pol, err := rules.Parse(filepath.Join(dir, "univariate.yaml"), []byte(src))
			if err != nil {
				t.Fatal(err)
			}
			rep, err := engine.Run(context.Background(), pol, nil, engine.Options{})
			if err != nil {
				t.Fatal(err)
			}
			n := 0
			for _, res := range rep.Results {
				if res.Check != "extremes" {
					continue
				}
				n++
				if res.Status != report.OK || res.Verdict != report.Pass || res.Offending != nil || res.Extremes == nil ||
					res.Extremes.N != 600 || res.Extremes.Below+res.Extremes.Above != 0 {
					t.Errorf("%s: %s %s, %+v (%s%s)", res.ID, res.Status, res.Verdict, res.Offending, res.Message, res.Error)
				}
			}
			if n != 3 {
				t.Errorf("%d extremes results, want 3", n)
			}
		})
	}
}
