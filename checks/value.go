package checks

import (
	"fmt"
	"slices"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// valueCheck is a rule that each value of one column meets or breaks on its
// own: minimum, maximum and their exclusive forms, enum, pattern, minLength
// and maxLength. Its measure is the share of the column's non-null,
// well-typed values that break it. (Cells that did not parse are null in
// the batch; the type rule counts them.)
type valueCheck struct {
	rule *rules.Rule
	env  *Env
	col  column
	// scan calls hit for every non-null value of a that breaks the rule,
	// with its row index in a and its score (how far off it is, higher is
	// worse). s holds scratch buffers of the run.
	scan func(a arrow.Array, s *scratch, hit func(i int, score float64))
	// text gives a rule on strings' verdict on one value, as scan judges
	// it; nil for other rules. On a batch with dictionary codes for the
	// column, Observe asks it once per dictionary entry (codedVerdicts)
	// instead of scanning.
	text func(string) verdict
	// breaks says what breaking values do, for the message: "are above 150".
	breaks string
}

// scratch holds an accumulator's reusable buffers for widening narrow
// Arrow arrays, and its memo of verdicts on strings.
type scratch struct {
	ints   []int64
	floats []float64
	memo   verdicts
	coded  codedVerdicts
}

// verdict is what a rule on single strings says of one value: whether it
// breaks the rule, and its score when it does.
type verdict struct {
	breaks bool
	score  float64
}

// Bounds of a verdicts memo. memoMax distinct strings cost about 1 MiB;
// memoProbe is how many it holds when it first checks that values repeat;
// memoTrial is how many lookups a full memo gets to show that it pays.
const (
	memoMax   = 1 << 14
	memoProbe = 1 << 12
	memoTrial = 1 << 16
)

// verdicts remembers the verdict of a rule on each of the first memoMax
// distinct strings of a column, so that a column of few distinct values
// (device codes, country names) runs an expensive test such as a regular
// expression once per distinct value instead of once per row. It is no
// longer consulted when the column has too many distinct values for it to
// pay: when the first memoProbe distinct values took fewer than
// memoProbe/8 repeats to come (values drawn evenly from 16,384 or more do
// that), or when the memo is full and, over memoTrial further lookups,
// misses outnumber hits. It belongs to one accumulator, so workers never share
// it; the verdicts are those judge would give, so results do not change.
type verdicts struct {
	seen         map[string]verdict
	off          bool
	hits, misses int
}

// judge returns judge(s), from the memo when s is in it.
func (m *verdicts) judge(s string, judge func(string) verdict) verdict {
	if m.off {
		return judge(s)
	}
	if v, ok := m.seen[s]; ok {
		m.hits++
		return v
	}
	v := judge(s)
	if len(m.seen) < memoMax {
		if m.seen == nil {
			m.seen = make(map[string]verdict)
		}
		m.seen[strings.Clone(s)] = v // s points into the batch's buffers
		if len(m.seen) == memoProbe && m.hits*8 < memoProbe {
			m.off, m.seen = true, nil
		}
		return v
	}
	if m.misses++; m.hits+m.misses >= memoTrial {
		if m.misses > m.hits {
			m.off, m.seen = true, nil
		}
		m.hits, m.misses = 0, 0
	}
	return v
}

// codedVerdicts holds the verdicts of a rule on strings on the entries of
// one dictionary of a column (source.Batch.Codes), each judged when a row
// first points at it, so that the batches of a dictionary-encoded Parquet
// column chunk, which share one dictionary, judge each distinct value once
// and each row costs a lookup by its code. It holds a reference to the
// dictionary's data, which is how it knows the dictionary again: memory the
// reader released and reused for another dictionary cannot pass for it.
// The verdicts are those of the rule's text function, so results do not
// change.
type codedVerdicts struct {
	dict     *array.String
	state    []uint8 // per entry: unjudged, meets or breaks
	score    []float64
	left     int // entries not judged yet
	breaking int // entries judged to break the rule
}

// The states of a dictionary entry in codedVerdicts.
const (
	entryUnjudged uint8 = iota
	entryMeets
	entryBreaks
)

// codesOf returns the dictionary codes of column k of b when the batch has
// them in the form source.Batch.Codes states, for the column's array arr;
// false otherwise.
func codesOf(b *source.Batch, k int, arr arrow.Array) (*array.Int32, arrow.ArrayData, bool) {
	if k >= len(b.Codes) || b.Codes[k] == nil || b.Codes[k].Len() != arr.Len() {
		return nil, nil, false
	}
	codes, ok := b.Codes[k].Indices().(*array.Int32)
	dict := b.Codes[k].Data().Dictionary()
	if !ok || dict == nil || dict.DataType().ID() != arrow.STRING {
		return nil, nil, false
	}
	return codes, dict, true
}

// scan calls hit for every non-null value of str, whose dictionary codes
// into dict are codes, that breaks the rule judge gives verdicts of. A code
// out of the dictionary's range (a reader's fault) is judged by the row's
// own value. Once every entry is judged, a row costs a look at its entry's
// state, and a batch nothing, after a check of the codes' range, when no
// entry breaks the rule.
func (c *codedVerdicts) scan(str *array.String, codes *array.Int32, dict arrow.ArrayData, judge func(string) verdict, hit func(int, float64)) {
	if c.dict == nil || c.dict.Data() != dict {
		c.release()
		c.dict = array.NewStringData(dict)
		n := c.dict.Len()
		c.state, c.score = slices.Grow(c.state[:0], n)[:n], slices.Grow(c.score[:0], n)[:n]
		clear(c.state)
		c.left, c.breaking = n, 0
	}
	v, state, score := validOf(str), c.state, c.score
	if c.left == 0 && codesBelow(codes.Int32Values(), len(state)) {
		if c.breaking == 0 {
			return
		}
		for i, p := range codes.Int32Values() {
			if state[p] == entryBreaks && v.at(i) {
				hit(i, score[p])
			}
		}
		return
	}
	for i, p := range codes.Int32Values() {
		if !v.at(i) {
			continue
		}
		if uint(p) >= uint(len(state)) {
			if r := judge(str.Value(i)); r.breaks {
				hit(i, r.score)
			}
			continue
		}
		if state[p] == entryUnjudged {
			c.left--
			state[p] = entryMeets
			if r := judge(c.dict.Value(int(p))); r.breaks {
				c.breaking++
				state[p], score[p] = entryBreaks, r.score
			}
		}
		if state[p] == entryBreaks {
			hit(i, score[p])
		}
	}
}

// codesBelow reports whether every code is at least 0 and below n, the dictionary's length.
func codesBelow(codes []int32, n int) bool {
	var hi uint32
	for _, p := range codes {
		hi = max(hi, uint32(p))
	}
	return len(codes) == 0 || uint64(hi) < uint64(n)
}

// release drops the reference to the dictionary and its verdicts.
func (c *codedVerdicts) release() {
	if c.dict != nil {
		c.dict.Release()
		c.dict = nil
	}
}

// failing is the verdict of a rule that the strings passes accepts meet
// and every other breaks, with the score 1.
func failing(passes func(string) bool) func(string) verdict {
	return func(s string) verdict { return verdict{breaks: !passes(s), score: 1} }
}

// scanText makes the scan of a rule on single strings from its verdict on
// one value, which it remembers per distinct value (verdicts).
func scanText(judge func(string) verdict) func(arrow.Array, *scratch, func(int, float64)) {
	return func(a arrow.Array, s *scratch, hit func(int, float64)) {
		if str, ok := a.(*array.String); ok { // the common case, without a call per value
			v := validOf(str)
			for i := range str.Len() {
				if v.at(i) {
					if r := s.memo.judge(str.Value(i), judge); r.breaks {
						hit(i, r.score)
					}
				}
			}
			return
		}
		eachString(a, func(i int, v string) {
			if r := s.memo.judge(v, judge); r.breaks {
				hit(i, r.score)
			}
		})
	}
}

// scanPassing makes the scan of a rule on single strings that the strings
// passes accepts meet and every other breaks, with the score 1.
func scanPassing(passes func(string) bool) func(arrow.Array, *scratch, func(int, float64)) {
	return func(a arrow.Array, _ *scratch, hit func(int, float64)) {
		if str, ok := a.(*array.String); ok { // the common case, without a closure per value
			v := validOf(str)
			for i := range str.Len() {
				if v.at(i) && !passes(str.Value(i)) {
					hit(i, 1)
				}
			}
			return
		}
		eachString(a, func(i int, s string) {
			if !passes(s) {
				hit(i, 1)
			}
		})
	}
}

func (c *valueCheck) Rule() *rules.Rule { return c.rule }

func (c *valueCheck) NewAccumulator() Accumulator {
	return &ValueAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// ValueState is the sufficient statistic of the rules on single values:
// the non-null values seen and how many of them break the rule. The
// measure is Breaking/Values (0 when Values is 0).
type ValueState struct {
	Values   int64
	Breaking int64
}

// ValueAccumulator is one run of a rule on single values.
type ValueAccumulator struct {
	ValueState
	check   *valueCheck
	listing Offenders
	scratch scratch
}

// Observe counts the batch's non-null values of the column and the ones
// that break the rule, keeping the worst for the listing.
func (a *ValueAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		a.scratch.coded.release() // no more batches come
		return err
	}
	a.Values += int64(arr.Len() - arr.NullN())
	cols := []int{a.check.col.index}
	hit := func(i int, score float64) {
		a.Breaking++
		a.listing.Add(score, b.Row(i), func() report.Row { return RowAt(a.check.env, b, i, cols) })
	}
	if str, ok := arr.(*array.String); ok && a.check.text != nil {
		if codes, dict, ok := codesOf(b, a.check.col.index, arr); ok {
			a.scratch.coded.scan(str, codes, dict, a.check.text, hit)
			return nil
		}
	}
	a.check.scan(arr, &a.scratch, hit)
	return nil
}

// Merge adds other's counts and listing to a, and drops the dictionary
// other last judged (codedVerdicts).
func (a *ValueAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*ValueAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Values += o.Values
	a.Breaking += o.Breaking
	a.listing.Merge(&o.listing)
	o.scratch.coded.release()
	return nil
}

// Finish judges the share of breaking values. It drops the dictionary the
// accumulator last judged.
func (a *ValueAccumulator) Finish() report.Result {
	a.scratch.coded.release()
	res := NewResult(a.check.rule, share(a.Breaking, a.Values))
	res.Message = fmt.Sprintf("%s %s", countOf(a.Breaking, a.Values, "values"), a.check.breaks)
	res.Offending = offending(a.Breaking, &a.listing)
	return res
}
