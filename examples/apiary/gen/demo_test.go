package main

import (
	"context"
	"fmt"
	"maps"
	"path/filepath"
	"slices"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// outcome is what the demo expects of one rule: its verdict and, when not
// -1, its exact count of offending rows.
type outcome struct {
	verdict string
	count   int64
}

// TestDemoVerdicts runs the demo policies on the committed data through the
// engine, as `assay check` does, and checks the verdict of every rule: each
// planted problem trips its rule, and nothing else does.
func TestDemoVerdicts(t *testing.T) {
	pass := outcome{"pass", 0}
	cases := []struct {
		policy  string
		verdict string
		want    map[string]outcome
		// first holds the worst offending row a rule lists, as where
		// formats it.
		first map[string]string
	}{{
		policy:  "../policy.yaml",
		verdict: "fail",
		want: map[string]outcome{
			"table.rows":     {"pass", -1},
			"table.key":      {"fail", 2},
			"table.closed":   {"pass", -1},
			"table.required": {"pass", -1},

			"columns.reading_id.type":    pass,
			"columns.reading_id.unique":  pass,
			"columns.reading_id.minimum": pass,

			"columns.hive_id.type":    pass,
			"columns.hive_id.pattern": {"fail", 1},

			"columns.yard.type": pass,
			"columns.yard.enum": pass,

			"columns.hour.type":  pass,
			"columns.hour.nulls": pass,

			"columns.weight_kg.type":           pass,
			"columns.weight_kg.nulls":          {"pass", weightNulls},
			"columns.weight_kg.minimum":        pass,
			"columns.weight_kg.maximum":        {"fail", gramsTo - gramsFrom},
			"columns.weight_kg.summary.median": {"pass", -1},

			"columns.brood_temp_c.type":           {"fail", errTo - errFrom},
			"columns.brood_temp_c.summary.median": {"pass", -1},
			"columns.brood_temp_c.distribution":   {"warn", -1},

			"columns.ambient_temp_c.type":        pass,
			"columns.ambient_temp_c.minimum":     pass,
			"columns.ambient_temp_c.maximum":     pass,
			"columns.ambient_temp_c.summary.p95": {"pass", -1},

			"columns.humidity_pct.type":    pass,
			"columns.humidity_pct.nulls":   {"warn", humidityNulls},
			"columns.humidity_pct.minimum": pass,
			"columns.humidity_pct.maximum": pass,

			"columns.battery_v.type":         pass,
			"columns.battery_v.minimum":      {"warn", -1},
			"columns.battery_v.maximum":      pass,
			"columns.battery_v.summary.mean": {"warn", -1},

			"columns.firmware.type":      pass,
			"columns.firmware.pattern":   pass,
			"columns.firmware.maxLength": pass,

			"columns.status.type": pass,
			"columns.status.enum": {"warn", betaHours},

			"rows.brood-warmer-than-outside":            {"fail", swapTo - swapFrom},
			"rows.low-battery-status-means-low-voltage": pass,
		},
		first: map[string]string{
			// Rows run hour by hour, 40 hives an hour, below a header line.
			// resentHive, H-009, is the 9th hive: its row of hour 49 comes
			// first, its copy 40 rows later.
			"table.key": fmt.Sprintf("row %d line %d", 49*40+9, 49*40+10),
			// truncatedHive, H-021, is the 13th.
			"columns.hive_id.pattern": fmt.Sprintf("row %d line %d", truncatedHour*40+13, truncatedHour*40+14),
			// The most extreme brood reading is a swapped probe of
			// swapHive, H-008, the 8th hive: its first swapped hour reads
			// the air, not the nest.
			"columns.brood_temp_c.distribution": fmt.Sprintf("row %d line %d", swapFrom*40+8, swapFrom*40+9),
		},
	}, {
		policy:  "../inspections.yaml",
		verdict: "fail",
		want: map[string]outcome{
			"table.rows":   {"pass", -1},
			"table.key":    pass,
			"table.closed": {"pass", -1},

			"columns.hive_id.type":    pass,
			"columns.hive_id.pattern": pass,

			"columns.inspected_on.type":    {"fail", 1},
			"columns.inspected_on.minimum": pass,
			"columns.inspected_on.maximum": pass,

			"columns.inspector.type":      pass,
			"columns.inspector.minLength": pass,

			"columns.brood_frames.type":    pass,
			"columns.brood_frames.minimum": pass,
			"columns.brood_frames.maximum": pass,

			"columns.queen_seen.type": pass,

			"columns.varroa_per_100.type":    pass,
			"columns.varroa_per_100.maximum": {"warn", 2},

			"columns.temper.type": pass,
			"columns.temper.enum": pass,

			"rows.queen-or-brood": pass,
		},
		first: map[string]string{
			// after 12, 10 and 10 rows of the other yards, the 4th row of
			// south-orchard.csv, below its header
			"columns.inspected_on.type": "row 36 line 5 of south-orchard.csv",
		},
	}}
	for _, c := range cases {
		t.Run(c.policy, func(t *testing.T) {
			pol, err := rules.Load(c.policy)
			if err != nil {
				t.Fatal(err)
			}
			rep, err := engine.Run(context.Background(), pol, nil, engine.Options{})
			if err != nil {
				t.Fatal(err)
			}
			if got := rep.Verdict.String(); got != c.verdict {
				t.Errorf("verdict %s, want %s", got, c.verdict)
			}
			seen := map[string]bool{}
			for _, res := range rep.Results {
				seen[res.ID] = true
				want, ok := c.want[res.ID]
				if !ok {
					t.Errorf("unexpected rule %s (%s)", res.ID, state(res))
					continue
				}
				if got := state(res); got != want.verdict {
					t.Errorf("%s is %s, want %s (%s%s)", res.ID, got, want.verdict, res.Message, res.Error)
				}
				var count int64
				if res.Offending != nil {
					count = res.Offending.Count
				}
				if want.count >= 0 && count != want.count {
					t.Errorf("%s has %d offending rows, want %d", res.ID, count, want.count)
				}
				if w, ok := c.first[res.ID]; ok {
					if count == 0 || len(res.Offending.Rows) == 0 {
						t.Errorf("%s lists no offending row, want %s", res.ID, w)
					} else if got := where(res.Offending.Rows[0]); got != w {
						t.Errorf("%s lists first %s, want %s", res.ID, got, w)
					}
				}
			}
			for _, id := range slices.Sorted(maps.Keys(c.want)) {
				if !seen[id] {
					t.Errorf("no result for rule %s", id)
				}
			}
		})
	}
}

// where says where an offending row is: its row number across the
// inputs, its line, and its file when the report names one.
func where(r report.Row) string {
	s := fmt.Sprintf("row %d line %d", r.Row, r.Line)
	if r.Source != "" {
		s += " of " + filepath.Base(r.Source)
	}
	return s
}

// state is a result's verdict, or its status when it did not run.
func state(r report.Result) string {
	if r.Status != report.OK {
		return r.Status.String()
	}
	return r.Verdict.String()
}
