package checks

import (
	"errors"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

func TestRow(t *testing.T) {
	mem := checkedMem(t)
	// Rows 1..6: true, false by 2, unknown (a missing), false by 9,
	// unknown (a did not parse), true.
	b := newBatch(t, mem, 1,
		col{"a", tInt, []any{1, 5, nil, 10, bad("x"), 4}},
		col{"b", tInt, []any{2, 3, 1, 1, 0, 4}},
		col{"s", tString, []any{"p", "q", "r", "s", "t", "u"}},
	)
	release(t, b)
	env := envOf(b, 10)
	tests := []struct {
		expr    string
		cols    []string
		rows    []int64
		scores  []float64
		message string
	}{
		{`a <= b`, []string{"a", "b"}, []int64{4, 2}, []float64{9, 2},
			"2 of 6 rows (33.33%) break the rule; 2 of 6 rows (33.33%) read a null and are not counted"},
		{`a <= b || s == "q"`, []string{"a", "b", "s"}, []int64{4}, []float64{1},
			"1 of 6 rows (16.67%) break the rule; 2 of 6 rows (33.33%) read a null and are not counted"},
		{`(a ?? 0) < 10 && b >= 0`, []string{"a", "b"}, []int64{4}, []float64{1},
			"1 of 6 rows (16.67%) break the rule"},
	}
	for _, tc := range tests {
		t.Run(tc.expr, func(t *testing.T) {
			r := newRule(rules.RowSpec{Name: "t", Expr: tc.expr}, atMost(0.2), tc.cols...)
			c := compile(t, r, env)
			res := run(t, c, b)
			count, rows, scores := listed(res)
			want := float64(len(tc.rows)) / 6
			if float64(res.Measure.Value) != want || count != int64(len(tc.rows)) ||
				!reflect.DeepEqual(rows, tc.rows) || !reflect.DeepEqual(scores, tc.scores) {
				t.Errorf("measure %v, offending %d rows %v scores %v; want %v, %d %v %v",
					res.Measure.Value, count, rows, scores, want, len(tc.rows), tc.rows, tc.scores)
			}
			if res.Message != tc.message {
				t.Errorf("message %q, want %q", res.Message, tc.message)
			}
			if wantV := map[bool]report.Verdict{true: report.Fail, false: report.Pass}[want > 0.2]; res.Verdict != wantV {
				t.Errorf("verdict %v, want %v", res.Verdict, wantV)
			}
			first, second := split(t, b, 3)
			release(t, first, second)
			sameResult(t, "merged halves", runMerged(t, c, first, second), res, 0)
		})
	}
	// The listed values are the cells as read, the unparsed text included.
	res := run(t, compile(t, newRule(rules.RowSpec{Expr: `a != 10`}, atMost(0), "a"), env), b)
	if got := res.Offending.Rows[0].Values; !reflect.DeepEqual(got, map[string]any{"a": int64(10)}) {
		t.Errorf("listed values %v, want a: 10", got)
	}
}

// TestRowState: the result comes from the exported counts alone, so they
// can be filled from elsewhere.
func TestRowState(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{{Name: "a", Type: tInt}}, nil)
	env := &Env{Schema: schema, DataColumns: []string{"a"}}
	c := compile(t, newRule(rules.RowSpec{Expr: `a > 0`}, atMost(0.01), "a"), env)
	a := c.NewAccumulator().(*RowAccumulator)
	a.RowState = RowState{Rows: 1000, Evaluated: 900, False: 20}
	res := a.Finish()
	if float64(res.Measure.Value) != 0.02 || res.Verdict != report.Fail || res.Offending.Count != 20 {
		t.Errorf("measure %v, verdict %v, offending %d; want 0.02, fail, 20", res.Measure.Value, res.Verdict, res.Offending.Count)
	}
	empty := c.NewAccumulator().Finish()
	if float64(empty.Measure.Value) != 0 || empty.Verdict != report.Pass || empty.Message != "no rows break the rule" {
		t.Errorf("no rows: measure %v, verdict %v, message %q", empty.Measure.Value, empty.Verdict, empty.Message)
	}
}

// TestRowExprError: an expression that does not type-check against the
// data is located inside the expression and in the policy file.
func TestRowExprError(t *testing.T) {
	policy := `policy: t
columns:
  name: {type: string}
  w: {type: number}
rows:
  - name: inline
    expr: w > 0 && name + 1 > 2
  - name: block
    expr: |
      w > 0 &&
        name * 2 > 1
  - name: not a condition
    expr: "w * 2"
`
	p, err := rules.Parse("t.yaml", []byte(policy))
	if err != nil {
		t.Fatal(err)
	}
	schema := arrow.NewSchema([]arrow.Field{{Name: "name", Type: tString}, {Name: "w", Type: tFloat}}, nil)
	env := &Env{Schema: schema, DataColumns: []string{"name", "w"}, Policy: p}
	tests := []struct {
		id        string
		line, col int
		pos       rules.Pos
		msg       string
	}{
		{"rows.inline", 1, 15, rules.Pos{File: "t.yaml", Line: 7, Col: 25},
			"t.yaml:6:5: rule rows.inline: expression, at t.yaml:7:25: invalid operation: + (mismatched types string and int)"},
		{"rows.block", 2, 8, rules.Pos{File: "t.yaml", Line: 11, Col: 14},
			"t.yaml:8:5: rule rows.block: expression, at t.yaml:11:14: invalid operation: * (mismatched types string and int)"},
		{"rows.not-a-condition", 0, 0, rules.Pos{File: "t.yaml", Line: 13, Col: 12},
			"t.yaml:12:5: rule rows.not-a-condition: expression: the expression must be true or false, but gives a number"},
	}
	for _, tc := range tests {
		var r *rules.Rule
		for _, x := range p.Rules {
			if x.ID == tc.id {
				r = x
			}
		}
		if r == nil {
			t.Fatalf("no rule %s in the policy", tc.id)
		}
		_, err := Compile(r, env)
		var e *ExprError
		if !errors.As(err, &e) {
			t.Errorf("%s: got %v, want an *ExprError", tc.id, err)
			continue
		}
		line, col := e.ExprLineCol()
		if line != tc.line || col != tc.col || e.Pos() != tc.pos || err.Error() != tc.msg {
			t.Errorf("%s:\n got %d:%d %v %q\nwant %d:%d %v %q", tc.id, line, col, e.Pos(), err, tc.line, tc.col, tc.pos, tc.msg)
		}
	}
	// A column the data does not have is the binding's error, as for other rules.
	_, err = Compile(newRule(rules.RowSpec{Expr: `zz > 1`}, atMost(0), "zz"), env)
	if err == nil || err.Error() != `: rule test.row: column "zz" is not in the data` {
		t.Errorf("absent column: %v", err)
	}
}
