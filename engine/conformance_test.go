package engine_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// TestConformance runs every case under testdata/conformance: a folder with
// policy.yaml (naming its data with `data:`) and want.txt. Each line of
// want.txt is either "verdict V" for the run, or
//
//	RULE-ID VERDICT [COUNT [ROW,ROW,...]]
//
// for one result: its verdict (pass, warn, fail, error or skipped), the
// exact offending count, and the listed offending rows in order. Rules the
// file does not name are not checked, but every named rule must exist.
// Adding a case is adding a folder.
func TestConformance(t *testing.T) {
	dirs, err := filepath.Glob("../testdata/conformance/*")
	if err != nil {
		t.Fatal(err)
	}
	if len(dirs) == 0 {
		t.Fatal("no conformance cases found")
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			pol, err := rules.Load(filepath.Join(dir, "policy.yaml"))
			if err != nil {
				t.Fatal(err)
			}
			rep, err := engine.Run(context.Background(), pol, nil, engine.Options{})
			if err != nil {
				t.Fatal(err)
			}
			want, err := os.ReadFile(filepath.Join(dir, "want.txt"))
			if err != nil {
				t.Fatal(err)
			}
			for n, line := range strings.Split(strings.TrimSpace(string(want)), "\n") {
				f := strings.Fields(line)
				if len(f) == 0 || strings.HasPrefix(f[0], "#") {
					continue
				}
				if f[0] == "verdict" {
					if got := rep.Verdict.String(); got != f[1] {
						t.Errorf("want.txt:%d: run verdict %s, want %s", n+1, got, f[1])
					}
					continue
				}
				res := find(rep, f[0])
				if res == nil {
					t.Errorf("want.txt:%d: no result %s; results: %s", n+1, f[0], ids(rep))
					continue
				}
				if got := state(res); got != f[1] {
					t.Errorf("want.txt:%d: %s is %s, want %s (%s%s)", n+1, f[0], got, f[1], res.Message, res.Error)
				}
				if len(f) > 2 {
					count, rows := offending(res)
					if strconv.FormatInt(count, 10) != f[2] {
						t.Errorf("want.txt:%d: %s offending count %d, want %s", n+1, f[0], count, f[2])
					}
					if len(f) > 3 && rows != f[3] {
						t.Errorf("want.txt:%d: %s offending rows %s, want %s", n+1, f[0], rows, f[3])
					}
				}
			}
		})
	}
}

func find(rep *report.Report, id string) *report.Result {
	for i := range rep.Results {
		if rep.Results[i].ID == id {
			return &rep.Results[i]
		}
	}
	return nil
}

func ids(rep *report.Report) string {
	var out []string
	for _, r := range rep.Results {
		out = append(out, r.ID)
	}
	slices.Sort(out)
	return strings.Join(out, " ")
}

func state(r *report.Result) string {
	if r.Status != report.OK {
		return r.Status.String()
	}
	return r.Verdict.String()
}

func offending(r *report.Result) (int64, string) {
	if r.Offending == nil {
		return 0, ""
	}
	rows := make([]string, len(r.Offending.Rows))
	for i, row := range r.Offending.Rows {
		rows[i] = fmt.Sprint(row.Row)
	}
	return r.Offending.Count, strings.Join(rows, ",")
}
