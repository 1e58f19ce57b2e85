package checks

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/checks/rowexpr"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// segmentCheck runs any rule on a segment of the rows: those where its
// where expression is true (false and unknown rows are left out, as a SQL
// WHERE does), and with by, once per group of rows with equal values of
// the by columns (a missing value is a value of its own). It wraps the
// rule's own check: each group gets a fresh accumulator of it, fed the
// group's rows as a batch of their own (see take), so every kind of rule
// runs per group unchanged, second pass included. Memory is what the
// inner check keeps, once per group; the groups are capped by the
// segment's Limit (rules.DefaultGroupLimit unless the policy raises it),
// beyond which the rule stops with an error.
//
// The result of a rule with groups is the worst group's (verdict first,
// then how far its measure lies on the bad side of its thresholds), with
// every group counted and the worst listed in report.Segments; its
// offending count adds up all groups, and its offending rows are the worst
// rows of any group, the by columns shown beside them.
type segmentCheck struct {
	rule  *rules.Rule
	env   *Env
	inner Check
	by    []column
	where *rowexpr.Program
	mem   memory.Allocator
}

// compileSegmented compiles rule r, which has a segment: its own check
// against env with the by columns shown beside listed rows, the grouping
// columns and the where expression.
func compileSegmented(r *rules.Rule, env *Env) (Check, error) {
	seg := r.Segment
	c := &segmentCheck{rule: r, env: env, mem: env.Mem}
	if c.mem == nil {
		c.mem = memory.DefaultAllocator
	}
	fail := func(err error) (Check, error) { return nil, fmt.Errorf("%s: rule %s: %w", r.Pos, r.ID, err) }
	inner := *env
	inner.Context = slices.Clone(env.Context)
	for _, name := range seg.By {
		col, err := bindColumn(env, name)
		if err != nil {
			return fail(fmt.Errorf("by: %w", err))
		}
		if col.class == classOther {
			return fail(fmt.Errorf("by: column %q holds %s, which cannot form groups", name, typeWords(col.typ)))
		}
		c.by = append(c.by, col)
		if !slices.Contains(inner.Context, col.index) {
			inner.Context = append(inner.Context, col.index)
		}
	}
	if w := seg.Where; w != nil {
		types := make(map[string]arrow.DataType, len(seg.WhereColumns))
		for _, name := range seg.WhereColumns {
			col, err := bindColumn(env, name)
			if err != nil {
				return fail(fmt.Errorf("where: %w", err))
			}
			types[name] = col.typ
		}
		prog, err := rowexpr.Compile(w.Expr, types)
		if err != nil {
			var e *rowexpr.Error
			if errors.As(err, &e) {
				err = &ExprError{Spec: *w, Err: e}
			}
			return fail(fmt.Errorf("where: %w", err))
		}
		c.where = prog
	}
	own := *r
	own.Segment = nil
	in, err := Compile(&own, &inner)
	if err != nil {
		return nil, err
	}
	c.inner = in
	return c, nil
}

func (c *segmentCheck) Rule() *rules.Rule { return c.rule }

func (c *segmentCheck) NewAccumulator() Accumulator {
	a := &SegmentAccumulator{check: c, index: map[string]int{}}
	if len(c.by) == 0 {
		a.groups = []*segGroup{c.newGroup("", nil)}
		return judging(a, a.groups[0].final)
	}
	return judging(a, c.inner.NewAccumulator())
}

// judging returns a, as a SegmentJudge when the rule's own accumulators
// at this pass judge rows one by one (inner is one of them).
func judging(a *SegmentAccumulator, inner Accumulator) Accumulator {
	if _, ok := inner.(RowJudge); ok {
		return SegmentJudge{a}
	}
	return a
}

// segmentOf returns the SegmentAccumulator of a, or nil.
func segmentOf(a Accumulator) *SegmentAccumulator {
	switch s := a.(type) {
	case *SegmentAccumulator:
		return s
	case SegmentJudge:
		return s.SegmentAccumulator
	}
	return nil
}

func (c *segmentCheck) newGroup(id string, key map[string]any) *segGroup {
	acc := c.inner.NewAccumulator()
	return &segGroup{id: id, key: key, acc: acc, final: acc}
}

// SegmentAccumulator is one run of a segmented rule: rows read and kept,
// and one inner accumulator per group.
type SegmentAccumulator struct {
	// RowsRead counts the rows seen, Rows those where the expression held.
	RowsRead, Rows int64

	check  *segmentCheck
	groups []*segGroup
	index  map[string]int // group id -> index in groups
	second bool           // a second pass: rows go only to groups that asked for them

	eval  *rowexpr.Evaluator
	truth []rowexpr.Truth
	gap   []float64
	sel   []int // rows kept
	gid   []int // group of each kept row
	keys  []keyColumn
	key   []byte
	marks []bool // a group's rejected rows
	count []int
	perm  []int
}

// segGroup is one group: its key, its rows, the accumulator its rows go
// to (nil once it needs none) and the one whose Finish gives its result.
type segGroup struct {
	id    string
	key   map[string]any
	rows  int64
	acc   Accumulator
	final Accumulator
}

// Observe filters the batch, routes each kept row to its group's
// accumulator and feeds each group its rows as a batch.
func (a *SegmentAccumulator) Observe(b *source.Batch) error {
	return a.route(b, !a.second, func(g *segGroup, part *source.Batch, _ []int) error {
		if !a.second {
			g.rows += part.Record.NumRows()
		}
		if g.acc == nil {
			return nil
		}
		return g.acc.Observe(part)
	})
}

// route hands each group the rows of b it holds, as a batch of their own
// (b itself when one group holds every row), with their indices in b. On
// the first pass it counts the rows read and kept and forms new groups.
func (a *SegmentAccumulator) route(b *source.Batch, first bool, f func(g *segGroup, part *source.Batch, rows []int) error) error {
	n := int(b.Record.NumRows())
	if err := a.filter(b); err != nil {
		return err
	}
	if first {
		a.RowsRead += int64(n)
		a.Rows += int64(len(a.sel))
	}
	if len(a.sel) == 0 {
		return nil
	}
	g := 0
	if len(a.check.by) > 0 {
		if err := a.group(b, first); err != nil {
			return err
		}
		g = a.gid[0]
		for _, h := range a.gid {
			if h != g {
				return a.routeGroups(b, f)
			}
		}
	}
	grp := a.groups[g]
	if len(a.sel) == n {
		return a.groupError(grp, f(grp, b, a.sel))
	}
	part, err := take(a.check.mem, b, a.sel)
	if err != nil {
		return err
	}
	defer part.Release()
	return a.groupError(grp, f(grp, part, a.sel))
}

// routeGroups hands the kept rows of b to several groups: one take puts
// them in group order, and each group reads a slice of it.
func (a *SegmentAccumulator) routeGroups(b *source.Batch, f func(g *segGroup, part *source.Batch, rows []int) error) error {
	a.count = slices.Grow(a.count[:0], len(a.groups)+1)[:len(a.groups)+1]
	clear(a.count)
	for _, g := range a.gid {
		a.count[g+1]++
	}
	for g := range a.groups {
		a.count[g+1] += a.count[g]
	}
	a.perm = slices.Grow(a.perm[:0], len(a.sel))[:len(a.sel)]
	next := slices.Clone(a.count)
	for k, g := range a.gid {
		a.perm[next[g]] = a.sel[k]
		next[g]++
	}
	sorted, err := take(a.check.mem, b, a.perm)
	if err != nil {
		return err
	}
	defer sorted.Release()
	for g, grp := range a.groups {
		lo, hi := a.count[g], a.count[g+1]
		if lo == hi {
			continue
		}
		part := slice(sorted, lo, hi)
		err := f(grp, part, a.perm[lo:hi])
		part.Release()
		if err != nil {
			return a.groupError(grp, err)
		}
	}
	return nil
}

// groupError names the group an inner accumulator failed on.
func (a *SegmentAccumulator) groupError(g *segGroup, err error) error {
	if err == nil || g.key == nil {
		return err
	}
	return fmt.Errorf("group %s: %w", keyText(a.check.by, g.key), err)
}

// filter sets a.sel to the rows of b where the expression is true, or to
// every row.
func (a *SegmentAccumulator) filter(b *source.Batch) error {
	n := int(b.Record.NumRows())
	a.sel = a.sel[:0]
	if a.check.where == nil {
		for i := range n {
			a.sel = append(a.sel, i)
		}
		return nil
	}
	if a.eval == nil {
		a.eval = a.check.where.NewEvaluator()
	}
	if cap(a.truth) < n {
		a.truth, a.gap = make([]rowexpr.Truth, n), make([]float64, n)
	}
	truth := a.truth[:n]
	if err := a.eval.Eval(b.Record, truth, a.gap[:n]); err != nil {
		return fmt.Errorf("where: %w", err)
	}
	for i, t := range truth {
		if t == rowexpr.True {
			a.sel = append(a.sel, i)
		}
	}
	return nil
}

// group sets a.gid to the group of each kept row, making new groups when
// grow is set.
func (a *SegmentAccumulator) group(b *source.Batch, grow bool) error {
	if len(a.keys) != len(a.check.by) {
		a.keys = make([]keyColumn, len(a.check.by))
	}
	for k, col := range a.check.by {
		if err := a.keys[k].read(col, b); err != nil {
			return err
		}
	}
	seg := a.check.rule.Segment
	a.gid = a.gid[:0]
	for _, i := range a.sel {
		a.key = a.key[:0]
		for k := range a.keys {
			a.key = a.keys[k].append(a.key, i)
		}
		g, ok := a.index[string(a.key)]
		if !ok {
			if !grow {
				return fmt.Errorf("a later pass met a group the first did not: the data changed between passes")
			}
			if len(a.groups) >= seg.Limit {
				return fmt.Errorf("more than %d groups of %s: raise by.limit, or group by fewer or coarser columns",
					seg.Limit, strings.Join(seg.By, ", "))
			}
			key := make(map[string]any, len(a.keys))
			for _, kc := range a.keys {
				key[kc.col.name] = Value(kc.arr, i)
			}
			g = len(a.groups)
			id := string(a.key)
			a.index[id] = g
			a.groups = append(a.groups, a.check.newGroup(id, key))
		}
		a.gid = append(a.gid, g)
	}
	return nil
}

// keyColumn reads one by column of a batch for the group keys.
type keyColumn struct {
	col    column
	arr    arrow.Array
	valid  valid
	ints   []int64
	floats []float64
	bools  *array.Boolean
	texts  interface{ Value(int) string }
	buf    scratch
}

// read prepares the column's values in batch b.
func (k *keyColumn) read(c column, b *source.Batch) error {
	arr, err := c.in(b)
	if err != nil {
		return err
	}
	k.col, k.arr, k.valid = c, arr, validOf(arr)
	switch c.class {
	case classNumber:
		k.floats = float64s(arr, &k.buf.floats)
	case classBoolean:
		k.bools = arr.(*array.Boolean)
	case classString:
		k.texts = arr.(interface{ Value(int) string })
	default:
		k.ints = int64s(arr, &k.buf.ints)
	}
	return nil
}

// append appends the bytes that identify row i's value: a tag for missing
// or present, then the value's bytes (a string with its length first, so
// that the keys of several columns cannot run into each other).
func (k *keyColumn) append(key []byte, i int) []byte {
	if !k.valid.at(i) {
		return append(key, 0)
	}
	key = append(key, 1)
	switch k.col.class {
	case classNumber:
		v := k.floats[i]
		if v == 0 {
			v = 0 // -0 and 0 are one group
		}
		return binary.LittleEndian.AppendUint64(key, math.Float64bits(v))
	case classBoolean:
		if k.bools.Value(i) {
			return append(key, 1)
		}
		return append(key, 0)
	case classString:
		s := k.texts.Value(i)
		key = binary.AppendUvarint(key, uint64(len(s)))
		return append(key, s...)
	}
	return binary.LittleEndian.AppendUint64(key, uint64(k.ints[i]))
}

// Merge folds other's groups into a's: the accumulators of groups with the
// same key merge, the others are adopted. Second passes carry the counts of
// the first, which they do not add up again.
func (a *SegmentAccumulator) Merge(other Accumulator) error {
	o := segmentOf(other)
	if o == nil || o.check != a.check || o.second != a.second {
		return errMerge(a.check.rule, a, other)
	}
	if !a.second {
		a.RowsRead += o.RowsRead
		a.Rows += o.Rows
	}
	for _, g := range o.groups {
		i, ok := a.index[g.id]
		if !ok && len(a.check.by) > 0 {
			a.index[g.id] = len(a.groups)
			a.groups = append(a.groups, g)
			continue
		}
		if len(a.check.by) == 0 {
			i = 0
		}
		mine := a.groups[i]
		if !a.second {
			mine.rows += g.rows
		}
		switch {
		case mine.acc != nil && g.acc != nil:
			if err := mine.acc.Merge(g.acc); err != nil {
				return err
			}
		case mine.acc == nil && g.acc == nil:
			// A group that needed no second pass: in the second pass
			// both sides share the merged first pass's accumulator.
			if a.second {
				break
			}
			if err := mine.final.Merge(g.final); err != nil {
				return err
			}
		default:
			return fmt.Errorf("rule %s: cannot merge a group's first pass with its second", a.check.rule.ID)
		}
	}
	if len(a.groups) > a.check.rule.Segment.Limit {
		return fmt.Errorf("more than %d groups of %s", a.check.rule.Segment.Limit, strings.Join(a.check.rule.Segment.By, ", "))
	}
	return nil
}

// SecondPass asks each group's accumulator for its second pass; it
// returns nil when none needs one.
func (a *SegmentAccumulator) SecondPass() Accumulator {
	next := &SegmentAccumulator{check: a.check, RowsRead: a.RowsRead, Rows: a.Rows, index: a.index, second: true}
	again := false
	var sample Accumulator
	for _, g := range a.groups {
		ng := &segGroup{id: g.id, key: g.key, rows: g.rows, final: g.final}
		if r, ok := g.acc.(Rescanner); ok {
			if p := r.SecondPass(); p != nil {
				ng.acc, ng.final = p, p
				again, sample = true, p
			}
		}
		next.groups = append(next.groups, ng)
	}
	if !again {
		return nil
	}
	return judging(next, sample)
}

// SegmentJudge is the accumulator of a segmented rule whose own
// accumulators judge rows one by one (see RowJudge): it hands each row to
// its group's accumulator to judge.
type SegmentJudge struct{ *SegmentAccumulator }

// Reject marks the rows that their groups count as offending. Rows the
// filter leaves out are not judged, so never rejected.
func (j SegmentJudge) Reject(b *source.Batch, bad []bool) error {
	return j.route(b, false, func(g *segGroup, part *source.Batch, rows []int) error {
		judge, ok := g.final.(RowJudge)
		if !ok {
			return nil
		}
		j.marks = slices.Grow(j.marks[:0], len(rows))[:len(rows)]
		clear(j.marks)
		if err := judge.Reject(part, j.marks); err != nil {
			return err
		}
		for k, r := range j.marks {
			if r {
				bad[rows[k]] = true
			}
		}
		return nil
	})
}

// Finish judges every group and returns the worst group's result with the
// segments' account.
func (a *SegmentAccumulator) Finish() report.Result {
	seg := &report.Segments{By: a.check.rule.Segment.By, Rows: a.Rows, RowsRead: a.RowsRead}
	if w := a.check.rule.Segment.Where; w != nil {
		seg.Where = strings.Join(strings.Fields(w.Expr), " ")
	}
	if len(a.check.by) == 0 {
		res := a.groups[0].final.Finish()
		res.Segments = seg
		res.Message = joinMessage(fmt.Sprintf("judged on %s where %s", countOf(a.Rows, a.RowsRead, "rows"), seg.Where), res.Message)
		return res
	}
	if len(a.groups) == 0 {
		res := a.check.inner.NewAccumulator().Finish()
		seg.Counts = &report.Counts{}
		res.Segments = seg
		res.Message = joinMessage("no rows to group", res.Message)
		return res
	}
	type judged struct {
		g   *segGroup
		res report.Result
		bad float64
	}
	all := make([]judged, len(a.groups))
	for i, g := range a.groups {
		res := g.final.Finish()
		all[i] = judged{g: g, res: res, bad: badness(a.check.rule.Tolerance, float64(res.Measure.Value))}
	}
	slices.SortStableFunc(all, func(x, y judged) int {
		if (x.res.Status == report.OK) != (y.res.Status == report.OK) {
			if x.res.Status == report.OK {
				return -1
			}
			return 1
		}
		if x.res.Verdict != y.res.Verdict {
			return int(y.res.Verdict) - int(x.res.Verdict)
		}
		if x.bad != y.bad {
			if x.bad > y.bad {
				return -1
			}
			return 1
		}
		return strings.Compare(x.g.id, y.g.id)
	})
	counts := &report.Counts{}
	listing := Offenders{Limit: a.check.env.MaxRowsListed}
	var total int64
	for i, j := range all {
		switch {
		case j.res.Status != report.OK:
			counts.Error++
		case j.res.Verdict == report.Fail:
			counts.Fail++
		case j.res.Verdict == report.Warn:
			counts.Warn++
		default:
			counts.Pass++
		}
		if off := j.res.Offending; off != nil {
			total += off.Count
			for _, row := range off.Rows {
				listing.Add(float64(row.Score), row.Row, func() report.Row { return row })
			}
		}
		if i < a.check.env.MaxRowsListed {
			seg.Groups = append(seg.Groups, groupOf(j.g, j.res))
		}
	}
	seg.GroupCount, seg.Counts = len(all), counts
	worst := all[0]
	res := worst.res
	res.Segments = seg
	res.Offending = offending(total, &listing)
	head := fmt.Sprintf("worst of %d groups: %s; %s", len(all), keyText(a.check.by, worst.g.key), groupTally(counts))
	if worst.res.Status != report.OK {
		res.Error = fmt.Sprintf("no group could be judged; %s: %s", keyText(a.check.by, worst.g.key), worst.res.Error)
		head = ""
	}
	res.Message = joinMessage(head, res.Message)
	return res
}

// groupOf is a group's line in a report.
func groupOf(g *segGroup, res report.Result) report.Group {
	out := report.Group{Key: g.key, Rows: g.rows, Status: res.Status, Verdict: res.Verdict, Measure: res.Measure.Value,
		Estimates: res.Estimates, Message: res.Message, Error: res.Error}
	if res.Offending != nil {
		out.Offending = res.Offending.Count
	}
	return out
}

// groupTally writes how many groups got each verdict: "2 fail, 1 warn, 9
// pass, 1 could not be judged".
func groupTally(c *report.Counts) string {
	parts := []string{fmt.Sprintf("%d fail", c.Fail), fmt.Sprintf("%d warn", c.Warn), fmt.Sprintf("%d pass", c.Pass)}
	if c.Error > 0 {
		parts = append(parts, fmt.Sprintf("%d could not be judged", c.Error))
	}
	return strings.Join(parts, ", ")
}

// keyText writes a group's key: "site=north, line=2".
func keyText(by []column, key map[string]any) string {
	parts := make([]string, len(by))
	for i, c := range by {
		v := key[c.name]
		s := fmt.Sprint(v)
		switch x := v.(type) {
		case nil:
			s = "(null)"
		case string:
			s = x
		}
		parts[i] = c.name + "=" + s
	}
	return strings.Join(parts, ", ")
}

// joinMessage joins two sentences of a result's message.
func joinMessage(a, b string) string {
	switch {
	case a == "":
		return b
	case b == "":
		return a
	}
	return a + "; " + b
}

// badness orders groups of equal verdict: how far measure v lies on the
// bad side of tolerance t (higher is worse; an undefined measure is the
// worst). For a "within" tolerance it is the distance outside the
// narrower interval (negative inside: the margin left).
func badness(t rules.Tolerance, v float64) float64 {
	if math.IsNaN(v) {
		return math.Inf(1)
	}
	switch t.Direction {
	case rules.HigherIsWorse:
		return v
	case rules.LowerIsWorse:
		return -v
	}
	l := t.Warn
	if l == nil {
		l = t.Fail
	}
	if l == nil {
		return 0
	}
	return max(l.Lo-v, v-l.Hi)
}
