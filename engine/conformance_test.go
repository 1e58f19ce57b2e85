package engine_test

import (
	"context"
	"fmt"
	"math"
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
// Distribution rules also take
//
//	fit RULE-ID FAMILY     the family judged (the best candidate)
//	region RULE-ID VALUE   the first region where the data exceed the fit
//	                       holds VALUE (a number in its range, or its label)
//
// Any rule takes
//
//	value RULE-ID X      the measure is X to half a unit of X's last digit
//	message RULE-ID TEXT the message contains TEXT (the rest of the line)
//
// and rules with by take
//
//	group RULE-ID N KEY VERDICT   the N-th group listed, worst first, has
//	                              the key KEY (site=s1,line=2) and VERDICT
//
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
		if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
			continue // a generator of a case's data
		}
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
				if f[0] == "fit" || f[0] == "region" {
					if len(f) != 3 {
						t.Fatalf("want.txt:%d: want %s RULE-ID VALUE", n+1, f[0])
					}
					if msg := checkFit(find(rep, f[1]), f[0], f[2]); msg != "" {
						t.Errorf("want.txt:%d: %s", n+1, msg)
					}
					continue
				}
				if f[0] == "message" && len(f) > 2 {
					text := strings.TrimSpace(strings.SplitN(line, f[1], 2)[1])
					if res := find(rep, f[1]); res == nil || !strings.Contains(res.Message, text) {
						t.Errorf("want.txt:%d: %s message does not contain %q", n+1, f[1], text)
					}
					continue
				}
				if f[0] == "value" {
					if len(f) != 3 {
						t.Fatalf("want.txt:%d: want value RULE-ID X", n+1)
					}
					if msg := checkValue(find(rep, f[1]), f[2]); msg != "" {
						t.Errorf("want.txt:%d: %s", n+1, msg)
					}
					continue
				}
				if f[0] == "group" {
					if len(f) != 5 {
						t.Fatalf("want.txt:%d: want group RULE-ID N KEY VERDICT", n+1)
					}
					if msg := checkGroup(find(rep, f[1]), f[2], f[3], f[4]); msg != "" {
						t.Errorf("want.txt:%d: %s", n+1, msg)
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

// checkFit checks the family judged by a distribution result, or that its
// first region holds a value; it returns what is wrong, or "".
func checkFit(res *report.Result, what, want string) string {
	switch {
	case res == nil:
		return "no such result"
	case res.Fit == nil:
		return fmt.Sprintf("%s has no fit (%s%s)", res.ID, res.Message, res.Error)
	case what == "fit":
		if res.Fit.Family != want {
			return fmt.Sprintf("%s judged %s, want %s", res.ID, res.Fit.Family, want)
		}
		return ""
	case len(res.Fit.Regions) == 0:
		return fmt.Sprintf("%s has no region", res.ID)
	}
	g := res.Fit.Regions[0]
	if g.Label != "" {
		if g.Label != want {
			return fmt.Sprintf("%s: first region %q, want %q", res.ID, g.Label, want)
		}
		return ""
	}
	v, err := strconv.ParseFloat(want, 64)
	if err != nil {
		return fmt.Sprintf("region value %q is not a number", want)
	}
	if (g.Lo != nil && !(v >= float64(*g.Lo))) || (g.Hi != nil && !(v <= float64(*g.Hi))) {
		return fmt.Sprintf("%s: first region %v to %v does not hold %v", res.ID, bound(g.Lo), bound(g.Hi), v)
	}
	return ""
}

func bound(n *report.Number) string {
	if n == nil {
		return "open"
	}
	return fmt.Sprint(float64(*n))
}

// checkGroup checks the n-th group a segmented result lists; it returns
// what is wrong, or "".
func checkGroup(res *report.Result, n, key, verdict string) string {
	i, err := strconv.Atoi(n)
	switch {
	case err != nil || i < 1:
		return fmt.Sprintf("group position %q is not a number from 1", n)
	case res == nil:
		return "no such result"
	case res.Segments == nil || len(res.Segments.Groups) < i:
		return fmt.Sprintf("%s lists fewer than %d groups", res.ID, i)
	}
	g := res.Segments.Groups[i-1]
	var parts []string
	for _, c := range res.Segments.By {
		parts = append(parts, fmt.Sprintf("%s=%v", c, g.Key[c]))
	}
	got := g.Verdict.String()
	if g.Status != report.OK {
		got = g.Status.String()
	}
	if k := strings.Join(parts, ","); k != key || got != verdict {
		return fmt.Sprintf("%s group %d is %s %s, want %s %s", res.ID, i, k, got, key, verdict)
	}
	return ""
}

// checkValue checks a result's measure against want, a number written to
// the digits it is known to; it returns what is wrong, or "".
func checkValue(res *report.Result, want string) string {
	v, err := strconv.ParseFloat(want, 64)
	if err != nil {
		return fmt.Sprintf("value %q is not a number", want)
	}
	if res == nil {
		return "no such result"
	}
	digits := 0
	if i := strings.IndexByte(want, '.'); i >= 0 {
		digits = len(want) - i - 1
	}
	if got := float64(res.Measure.Value); !(math.Abs(got-v) <= 0.5*math.Pow(10, -float64(digits))) {
		return fmt.Sprintf("%s measure %v, want %s", res.ID, got, want)
	}
	return ""
}
