package checks

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestTake: a batch of selected rows keeps each row's number, line and
// invalid cells, and a slice of it too; nothing is left allocated.
func TestTake(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 11,
		col{"x", tFloat, []any{1.0, bad("x1"), nil, 4.0, 5.0}},
		col{"s", tString, []any{"a", "b", "c", nil, bad("e")}},
	)
	release(t, b)
	sub, err := take(mem, b, []int{4, 1, 3, 0})
	if err != nil {
		t.Fatal(err)
	}
	defer sub.Release()
	if got, want := sub.Rows, []int64{15, 12, 14, 11}; !reflect.DeepEqual(got, want) {
		t.Errorf("rows %v, want %v", got, want)
	}
	if got, want := sub.Lines, []int64{16, 13, 15, 12}; !reflect.DeepEqual(got, want) {
		t.Errorf("lines %v, want %v", got, want)
	}
	if sub.FirstRow != 15 || sub.Row(2) != 14 {
		t.Errorf("first row %d, row 2 %d; want 15, 14", sub.FirstRow, sub.Row(2))
	}
	wantInvalid := map[int][]source.InvalidCell{0: {{Row: 1, Text: "x1"}}, 1: {{Row: 0, Text: "e"}}}
	if !reflect.DeepEqual(sub.Invalid, wantInvalid) {
		t.Errorf("invalid %v, want %v", sub.Invalid, wantInvalid)
	}
	var xs []any
	for i := range 4 {
		xs = append(xs, Value(sub.Record.Column(0), i))
	}
	if want := []any{5.0, nil, 4.0, 1.0}; !reflect.DeepEqual(xs, want) {
		t.Errorf("x %v, want %v", xs, want)
	}
	part := slice(sub, 1, 3)
	defer part.Release()
	if part.Row(0) != 12 || part.Row(1) != 14 || part.Line(1) != 15 || part.Record.NumRows() != 2 {
		t.Errorf("slice rows %v lines %v", part.Rows, part.Lines)
	}
	if want := map[int][]source.InvalidCell{0: {{Row: 0, Text: "x1"}}}; !reflect.DeepEqual(part.Invalid, want) {
		t.Errorf("slice invalid %v, want %v", part.Invalid, want)
	}
	if got := RowAt(&Env{Schema: b.Record.Schema()}, part, 0, []int{0}); got.Row != 12 || got.Line != 13 || got.Values["x"] != "x1" {
		t.Errorf("listed row %+v, want row 12, line 13, x as read", got)
	}
}

// segBatch is rows of three groups of a site column, a value and a flag.
func segBatch(t *testing.T, mem memory.Allocator, first int64) *source.Batch {
	t.Helper()
	return newBatch(t, mem, first,
		col{"site", tString, []any{"a", "b", "a", "c", "b", "a", nil, "c", "b", "a"}},
		col{"v", tFloat, []any{1.0, 9.0, 2.0, 3.0, 12.0, nil, 7.0, 30.0, 1.0, 8.0}},
		col{"ok", tBool, []any{true, true, false, true, true, true, true, nil, true, true}},
	)
}

// segData is segBatch in checked memory, and an environment for it that
// lists maxRows rows.
func segData(t *testing.T, maxRows int) (memory.Allocator, *source.Batch, *Env) {
	t.Helper()
	mem := checkedMem(t)
	b := segBatch(t, mem, 1)
	release(t, b)
	env := envOf(b, maxRows)
	env.Mem = mem
	return mem, b, env
}

func segmented(r *rules.Rule, by []string, where string, whereCols ...string) *rules.Rule {
	r.Segment = &rules.Segment{By: by, Limit: rules.DefaultGroupLimit}
	if where != "" {
		r.Segment.Where = &rules.RowSpec{Name: "where", Expr: where}
		r.Segment.WhereColumns = whereCols
	}
	return r
}

// TestSegmentWhere: a rule with where judges exactly the rows where the
// expression is true (false and unknown rows left out), with their own row
// numbers, as the rule does on those rows alone.
func TestSegmentWhere(t *testing.T) {
	mem, b, env := segData(t, 10)
	max5 := rules.BoundSpec{Bound: rules.KindMaximum, Value: 5}
	c := compile(t, segmented(newRule(max5, atMost(0), "v"), nil, "ok", "ok"), env)
	res := run(t, c, b)
	// ok is true on rows 1 2 4 5 6 7 9 10; row 8 (unknown) and 3 are left
	// out. v above 5 there: rows 2 (9), 5 (12), 7 (7), 10 (8); row 6 is
	// null.
	count, rows, _ := listed(res)
	if count != 4 || !reflect.DeepEqual(rows, []int64{5, 2, 10, 7}) {
		t.Errorf("offending %d %v, want 4 [5 2 10 7]", count, rows)
	}
	s := res.Segments
	if s == nil || s.Rows != 8 || s.RowsRead != 10 || s.Where != "ok" || s.Groups != nil {
		t.Fatalf("segments %+v, want 8 of 10 rows where ok, no groups", s)
	}
	if !strings.HasPrefix(res.Message, "judged on 8 of 10 rows (80%) where ok; ") {
		t.Errorf("message %q", res.Message)
	}
	// The same rule on the selected rows alone.
	sub, err := take(mem, b, []int{0, 1, 3, 4, 5, 6, 8, 9})
	if err != nil {
		t.Fatal(err)
	}
	defer sub.Release()
	plain := run(t, compile(t, newRule(max5, atMost(0), "v"), env), sub)
	if plain.Measure != res.Measure || !reflect.DeepEqual(plain.Offending, res.Offending) {
		t.Errorf("segmented %+v %+v, plain %+v %+v", res.Measure, res.Offending, plain.Measure, plain.Offending)
	}
}

// TestSegmentGroups: with by, each group is judged alone; the result is
// the worst group's, every group counted, the groups listed worst first up
// to the cap, and the offending rows the worst of all groups.
func TestSegmentGroups(t *testing.T) {
	_, b, env := segData(t, 3)
	tol := rules.Tolerance{Direction: rules.HigherIsWorse, Warn: rules.AtMost(0), Fail: rules.AtMost(0.5)}
	r := segmented(newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 5}, tol, "v"), []string{"site"}, "")
	res := run(t, compile(t, r, env), b)
	// a: 1 2 null 8 -> 1 of 3 values above 5 (33%, warn); b: 9 12 1 ->
	// 2 of 3 (67%, fail); c: 3 30 -> 1 of 2 (50%, warn); null site: 7 ->
	// 1 of 1 (100%, fail).
	s := res.Segments
	if s == nil || s.GroupCount != 4 || *s.Counts != (report.Counts{Fail: 2, Warn: 2}) || len(s.Groups) != 3 {
		t.Fatalf("segments %+v, want 4 groups (2 fail, 2 warn), 3 listed", s)
	}
	var keys []any
	for _, g := range s.Groups {
		keys = append(keys, g.Key["site"])
	}
	if want := []any{nil, "b", "c"}; !reflect.DeepEqual(keys, want) {
		t.Errorf("groups %v, want %v (fail 100%%, fail 67%%, warn 50%%)", keys, want)
	}
	if res.Verdict != report.Fail || res.Measure.Value != 1 {
		t.Errorf("result %s %v, want the worst group's: fail 1", res.Verdict, res.Measure.Value)
	}
	if g := s.Groups[1]; g.Rows != 3 || g.Offending != 2 || g.Verdict != report.Fail {
		t.Errorf("group b %+v, want 3 rows, 2 offending, fail", g)
	}
	count, rows, _ := listed(res)
	if count != 5 || !reflect.DeepEqual(rows, []int64{8, 5, 2}) {
		t.Errorf("offending %d %v, want 5 [8 5 2] (scores 25, 7, 4)", count, rows)
	}
	if v := res.Offending.Rows[0].Values; v["site"] != "c" || v["v"] != 30.0 {
		t.Errorf("listed row shows %v, want the group's site beside the value", v)
	}
	if !strings.HasPrefix(res.Message, "worst of 4 groups: site=(null); 2 fail, 2 warn, 0 pass") {
		t.Errorf("message %q", res.Message)
	}
}

// TestSegmentMerged: shards merge group by group, in both passes, to the
// result of one accumulator; unique needs a second pass.
func TestSegmentMerged(t *testing.T) {
	_, b, env := segData(t, 10)
	for _, r := range []*rules.Rule{
		segmented(newRule(rules.UniqueSpec{}, atMost(0), "v"), []string{"ok"}, "site != 'c'", "site"),
		segmented(newRule(rules.SummarySpec{Stat: rules.StatMedian, Q: 0.5}, within(0, 5), "v"), []string{"site"}, ""),
		segmented(newRule(rules.NullsSpec{}, atMost(0), "v"), nil, "v > 1", "v"),
	} {
		one := run(t, compile(t, r, env), b)
		x, y := split(t, b, 4)
		release(t, x, y)
		merged := runMerged(t, compile(t, r, env), x, y)
		if !reflect.DeepEqual(one.Segments, merged.Segments) || !reflect.DeepEqual(one.Offending, merged.Offending) ||
			one.Measure != merged.Measure || one.Verdict != merged.Verdict {
			t.Errorf("%s: one accumulator\n%+v\n%+v\n%+v\nmerged\n%+v\n%+v\n%+v", r.Kind, one, *one.Segments, *one.Offending,
				merged, *merged.Segments, *merged.Offending)
		}
	}
}

// TestSegmentLimit: more groups than the limit stop the rule.
func TestSegmentLimit(t *testing.T) {
	_, b, env := segData(t, 10)
	r := segmented(newRule(rules.NullsSpec{}, atMost(0), "v"), []string{"site"}, "")
	r.Segment.Limit = 3
	a := compile(t, r, env).NewAccumulator()
	err := a.Observe(b)
	if err == nil || !strings.Contains(err.Error(), "more than 3 groups of site") {
		t.Errorf("Observe: %v, want more than 3 groups", err)
	}
}

// TestSegmentNoRows: a filter that keeps no row leaves a rule with groups
// nothing to group; the rule's own verdict on no rows stands.
func TestSegmentNoRows(t *testing.T) {
	_, b, env := segData(t, 10)
	r := segmented(newRule(rules.NullsSpec{}, atMost(0), "v"), []string{"site"}, "v > 100", "v")
	res := run(t, compile(t, r, env), b)
	if res.Verdict != report.Pass || res.Segments.Rows != 0 || res.Segments.GroupCount != 0 || !strings.HasPrefix(res.Message, "no rows to group") {
		t.Errorf("result %s %+v %q", res.Verdict, res.Segments, res.Message)
	}
}

// TestSegmentCompileErrors: a where that does not type-check points into
// the policy; by columns must exist.
func TestSegmentCompileErrors(t *testing.T) {
	mem := checkedMem(t)
	b := segBatch(t, mem, 1)
	release(t, b)
	env := envOf(b, 10)
	r := segmented(newRule(rules.NullsSpec{}, atMost(0), "v"), nil, "site > 3", "site")
	r.Segment.Where.ExprPos = rules.Pos{File: "p.yaml", Line: 7, Col: 12}
	_, err := Compile(r, env)
	var e *ExprError
	if !errors.As(err, &e) || e.Pos().Line != 7 || !strings.Contains(err.Error(), "where: expression") {
		t.Errorf("Compile: %v, want a where expression error at line 7", err)
	}
	r = segmented(newRule(rules.NullsSpec{}, atMost(0), "v"), []string{"plant"}, "")
	if _, err := Compile(r, env); err == nil || !strings.Contains(err.Error(), `by: column "plant" is not in the data`) {
		t.Errorf("Compile: %v, want the absent by column", err)
	}
}

// TestSegmentReject: a segmented row-level rule rejects, for a gate,
// exactly the rows its result counts: those its groups count, never a row
// the filter leaves out; a rule that does not judge rows one by one is no
// judge.
func TestSegmentReject(t *testing.T) {
	_, b, env := segData(t, 20)
	for _, c := range []struct {
		rule *rules.Rule
		want []int // rows rejected, 1-based
	}{
		// v above 5 where ok: rows 2, 5, 7, 10 (row 8's ok is null).
		{segmented(newRule(rules.BoundSpec{Bound: rules.KindMaximum, Value: 5}, atMost(0), "v"), []string{"site"}, "ok", "ok"), []int{2, 5, 7, 10}},
		// duplicated v within a group of ok: 1.0 on rows 1 and 9.
		{segmented(newRule(rules.UniqueSpec{}, atMost(0), "v"), []string{"ok"}, ""), []int{1, 9}},
	} {
		a := compile(t, c.rule, env).NewAccumulator()
		observe(t, a, b)
		if r, ok := a.(Rescanner); ok {
			if next := r.SecondPass(); next != nil {
				a = next
				observe(t, a, b)
			}
		}
		j, ok := a.(RowJudge)
		if !ok {
			t.Fatalf("%s: the last pass's accumulator %T is no RowJudge", c.rule.Kind, a)
		}
		bad := make([]bool, b.Record.NumRows())
		if err := j.Reject(b, bad); err != nil {
			t.Fatal(err)
		}
		var got []int
		for i, x := range bad {
			if x {
				got = append(got, i+1)
			}
		}
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s: rejected %v, want %v", c.rule.Kind, got, c.want)
		}
		if count, _, _ := listed(a.Finish()); count != int64(len(c.want)) {
			t.Errorf("%s: result counts %d rows, rejected %d", c.rule.Kind, count, len(c.want))
		}
	}
	mean := segmented(newRule(rules.SummarySpec{Stat: rules.StatMean}, within(0, 5), "v"), []string{"site"}, "")
	if _, ok := compile(t, mean, env).NewAccumulator().(RowJudge); ok {
		t.Error("a segmented mean judges rows")
	}
}

// TestSegmentRowNumbers: rules that keep row numbers themselves (extremes,
// joint) run on a filtered segment and list its rows by their own numbers
// and lines.
func TestSegmentRowNumbers(t *testing.T) {
	mem := checkedMem(t)
	var xs, ys, keep []any
	for i := range 60 {
		x := float64(i%13) + 0.1*float64(i%7)
		xs, ys = append(xs, x), append(ys, 2*x+0.05*float64(i%5))
		keep = append(keep, i%3 != 0) // every third row is left out
	}
	xs[40], ys[40] = 6.0, 40.0 // row 41: ordinary x, y far off the line and the range
	b := newBatch(t, mem, 1, col{"x", tFloat, xs}, col{"y", tFloat, ys}, col{"keep", tBool, keep})
	release(t, b)
	env := envOf(b, 5)
	env.Mem = mem
	for _, r := range []*rules.Rule{
		newRule(extSpec(rules.ExtremesTukey), atMost(0), "y"),
		newRule(extSpec(rules.ExtremesZScore), atMost(0), "y"),
		newRule(jointSpec(false), atMost(0), "x", "y"),
		newRule(jointSpec(true), atMost(0), "x", "y"),
	} {
		res := run(t, compile(t, segmented(r, nil, "keep", "keep"), env), b)
		if count, rows, _ := listed(res); count < 1 || rows[0] != 41 || res.Offending.Rows[0].Line != 42 {
			t.Errorf("%s: listed %d %v, want row 41 (line 42) first", r.Kind, count, rows)
		}
	}
}
