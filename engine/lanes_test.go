package engine_test

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestWorkersAgree runs every conformance case in small batches on one
// worker and on three, whose accumulators each see every third batch and
// are merged: the results must agree, the measures to rounding.
func TestWorkersAgree(t *testing.T) {
	dirs, err := filepath.Glob("../testdata/conformance/*/policy.yaml")
	if err != nil || len(dirs) == 0 {
		t.Fatalf("no conformance cases found (%v)", err)
	}
	for _, path := range dirs {
		t.Run(filepath.Base(filepath.Dir(path)), func(t *testing.T) {
			pol, err := rules.Load(path)
			if err != nil {
				t.Fatal(err)
			}
			run := func(workers int) *report.Report {
				t.Helper()
				rep, err := engine.Run(context.Background(), pol, nil, engine.Options{
					Workers: workers,
					Source:  source.Options{BatchRows: 7},
				})
				if err != nil {
					t.Fatal(err)
				}
				return rep
			}
			one, three := run(1), run(3)
			if len(one.Results) != len(three.Results) {
				t.Fatalf("%d results on one worker, %d on three", len(one.Results), len(three.Results))
			}
			for i := range one.Results {
				if msg := differ(&one.Results[i], &three.Results[i]); msg != "" {
					t.Errorf("rule %s: %s", one.Results[i].ID, msg)
				}
			}
		})
	}
}

// differ describes how two results of one rule differ; "" when they agree.
func differ(a, b *report.Result) string {
	switch {
	case a.ID != b.ID:
		return fmt.Sprintf("rule %s against %s", a.ID, b.ID)
	case a.Status != b.Status || a.Verdict != b.Verdict:
		return fmt.Sprintf("%s/%s on one worker, %s/%s on three", a.Status, a.Verdict, b.Status, b.Verdict)
	case !near(float64(a.Measure.Value), float64(b.Measure.Value)):
		return fmt.Sprintf("measure %v on one worker, %v on three", a.Measure.Value, b.Measure.Value)
	}
	ac, ar := rowsOf(a)
	bc, br := rowsOf(b)
	if ac != bc || ar != br {
		return fmt.Sprintf("offending %d rows %s on one worker, %d rows %s on three", ac, ar, bc, br)
	}
	return ""
}

func rowsOf(r *report.Result) (int64, string) {
	if r.Offending == nil {
		return 0, ""
	}
	return r.Offending.Count, fmt.Sprint(rowNumbers(r.Offending.Rows))
}

func rowNumbers(rows []report.Row) []int64 {
	out := make([]int64, len(rows))
	for i, r := range rows {
		out[i] = r.Row
	}
	return out
}

// near reports whether x and y agree to 1e-9 relative to the larger.
func near(x, y float64) bool {
	if x == y || (math.IsNaN(x) && math.IsNaN(y)) {
		return true
	}
	return math.Abs(x-y) <= 1e-9*max(math.Abs(x), math.Abs(y))
}
