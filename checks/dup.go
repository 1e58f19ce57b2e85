package checks

import (
	"cmp"
	"encoding/binary"
	"fmt"
	"hash/maphash"
	"math"
	"slices"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// dupCheck finds repeated values (unique) or repeated key combinations
// (key) in two passes, keeping memory to what the meaning needs.
//
// Each row's value (or combination) is written as bytes: per column a tag
// (0 missing, 1 value, 2 a cell that did not parse) and the value's bytes
// (8 for numbers and times, 1 for booleans, a length and the bytes for
// strings and unparsed text), so equal bytes mean equal values. Floats are
// written as their bits with -0 as 0 and every NaN as one value.
//
// The first pass keeps only how often each 64-bit hash of those bytes
// occurred (HashCounts). The second pass looks again at the rows whose hash
// occurred more than once, groups them by their actual bytes, so a hash
// collision cannot make a false duplicate, and counts exactly
// (DuplicateState), keeping per duplicated value its bytes, its count and
// its first MaxRowsListed rows.
type dupCheck struct {
	rule *rules.Rule
	env  *Env
	cols []column
	// key makes every row count, a missing value being one more value;
	// otherwise (unique) only the non-null values of the one column count.
	key bool
	// noun names what is counted: "values" or "rows".
	noun string
	// hash hashes a row's bytes; a test may put a poorer one in its place.
	hash func([]byte) uint64
}

func newDupCheck(r *rules.Rule, env *Env, key bool) (*dupCheck, error) {
	c := &dupCheck{rule: r, env: env, key: key, noun: "values"}
	if key {
		c.noun = "rows"
	}
	for _, name := range r.Columns {
		col, err := bindColumn(env, name)
		if err != nil {
			return nil, err
		}
		if col.class == classOther {
			return nil, fmt.Errorf("column %q holds %s, which %s cannot compare", name, typeWords(col.typ), r.Kind)
		}
		c.cols = append(c.cols, col)
	}
	seed := maphash.MakeSeed()
	c.hash = func(b []byte) uint64 { return maphash.Bytes(seed, b) }
	return c, nil
}

func (c *dupCheck) Rule() *rules.Rule { return c.rule }

func (c *dupCheck) NewAccumulator() Accumulator {
	return &HashAccumulator{check: c, HashCounts: HashCounts{Hashes: map[uint64]int64{}}}
}

// eachRow calls f with the bytes of every row of b that counts, and the
// row's index.
func (c *dupCheck) eachRow(b *source.Batch, buf []byte, f func(i int, key []byte)) ([]byte, error) {
	writers := make([]cellWriter, len(c.cols))
	for k, col := range c.cols {
		arr, err := col.in(b)
		if err != nil {
			return buf, err
		}
		var invalid map[int]string
		if c.key {
			invalid = invalidTexts(b, col.index)
		}
		writers[k] = writerFor(arr, invalid)
	}
	first := b.Record.Column(c.cols[0].index)
	v := validOf(first)
	for i := range int(b.Record.NumRows()) {
		if !c.key && !v.at(i) {
			continue
		}
		buf = buf[:0]
		for _, w := range writers {
			buf = w(buf, i)
		}
		f(i, buf)
	}
	return buf, nil
}

// cellWriter appends the bytes of row i of one column to buf.
type cellWriter func(buf []byte, i int) []byte

const (
	tagNull byte = iota
	tagValue
	tagInvalid
)

// writerFor returns the cellWriter of one batch's array; invalid holds the
// text of the cells that did not parse, by row.
func writerFor(a arrow.Array, invalid map[int]string) cellWriter {
	v := validOf(a)
	var value cellWriter
	switch a := a.(type) {
	case *array.String:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.LargeString:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.StringView:
		value = func(buf []byte, i int) []byte { return appendText(buf, a.Value(i)) }
	case *array.Boolean:
		value = func(buf []byte, i int) []byte { return append(buf, byte(boolIndex(a.Value(i)))) }
	case *array.Float64, *array.Float32:
		var scratch []float64
		xs := float64s(a, &scratch)
		value = func(buf []byte, i int) []byte { return binary.LittleEndian.AppendUint64(buf, floatKey(xs[i])) }
	default:
		var scratch []int64
		xs := int64s(a, &scratch)
		value = func(buf []byte, i int) []byte { return binary.LittleEndian.AppendUint64(buf, uint64(xs[i])) }
	}
	return func(buf []byte, i int) []byte {
		if v.at(i) {
			return value(append(buf, tagValue), i)
		}
		if text, ok := invalid[i]; ok {
			return appendText(append(buf, tagInvalid), text)
		}
		return append(buf, tagNull)
	}
}

func appendText(buf []byte, s string) []byte {
	buf = binary.AppendUvarint(buf, uint64(len(s)))
	return append(buf, s...)
}

// invalidTexts maps the rows of b whose cell in column col did not parse to
// the text read; nil when there are none.
func invalidTexts(b *source.Batch, col int) map[int]string {
	cells := b.Invalid[col]
	if len(cells) == 0 {
		return nil
	}
	m := make(map[int]string, len(cells))
	for _, c := range cells {
		m[c.Row] = c.Text
	}
	return m
}

// HashCounts is the first-pass state of unique and key: Of is how many
// values (unique: non-null values) or rows (key) were hashed, the measure's
// denominator; Hashes counts each 64-bit hash of their bytes.
type HashCounts struct {
	Of     int64
	Hashes map[uint64]int64
}

// HashAccumulator is the first pass of a unique or key rule.
type HashAccumulator struct {
	HashCounts
	check *dupCheck
	buf   []byte
}

// Observe counts the hashes of the batch's values or key combinations.
func (a *HashAccumulator) Observe(b *source.Batch) error {
	var err error
	a.buf, err = a.check.eachRow(b, a.buf, func(_ int, key []byte) {
		a.Of++
		a.Hashes[a.check.hash(key)]++
	})
	return err
}

// Merge adds other's hash counts to a.
func (a *HashAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*HashAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Of += o.Of
	for h, n := range o.Hashes {
		a.Hashes[h] += n
	}
	return nil
}

// Finish judges the duplicates as the hashes count them, without listing
// rows: the engine runs the second pass, whose Finish is exact. A hash
// collision can only make this count too high.
func (a *HashAccumulator) Finish() report.Result {
	var s DuplicateState
	s.Of = a.Of
	for _, n := range a.Hashes {
		if n > 1 {
			s.Rows += n
			s.Groups++
		}
	}
	res := s.result(a.check)
	res.Message += " (counted by hash; the second pass lists the rows)"
	return res
}

// SecondPass returns the accumulator that groups, by their actual bytes,
// the rows whose hash occurred more than once.
func (a *HashAccumulator) SecondPass() Accumulator {
	suspects := make(map[uint64]struct{})
	for h, n := range a.Hashes {
		if n > 1 {
			suspects[h] = struct{}{}
		}
	}
	return &DuplicateAccumulator{
		DuplicateState: DuplicateState{Of: a.Of},
		check:          a.check,
		suspects:       suspects,
		groups:         map[string]*dupGroup{},
	}
}

// DuplicateState is the exact outcome of unique and key: of Of values or
// rows, Rows belong to one of Groups values (combinations) that occur more
// than once. The measure is Rows/Of.
type DuplicateState struct {
	Of     int64
	Rows   int64
	Groups int64
}

// DuplicateAccumulator is the second pass of a unique or key rule.
type DuplicateAccumulator struct {
	DuplicateState
	check    *dupCheck
	suspects map[uint64]struct{} // shared, read only
	groups   map[string]*dupGroup
	buf      []byte
}

// dupGroup is the rows sharing one value's bytes.
type dupGroup struct {
	count int64
	rows  []rowRef // the first rows, at most MaxRowsListed, in row order
}

// rowRef locates a row for the listing.
type rowRef struct {
	row, line int64
	source    int
}

// Observe groups the batch's suspect rows by their bytes.
func (a *DuplicateAccumulator) Observe(b *source.Batch) error {
	limit := a.check.env.MaxRowsListed
	var err error
	a.buf, err = a.check.eachRow(b, a.buf, func(i int, key []byte) {
		if _, ok := a.suspects[a.check.hash(key)]; !ok {
			return
		}
		g := a.groups[string(key)]
		if g == nil {
			g = &dupGroup{}
			a.groups[string(key)] = g
		}
		a.count(g.count, 1)
		g.count++
		if len(g.rows) < limit {
			g.rows = append(g.rows, rowRef{row: b.Row(i), line: b.Line(i), source: b.Source})
		}
	})
	return err
}

// count updates Rows and Groups for a group of had rows that gains more.
func (a *DuplicateAccumulator) count(had, more int64) {
	dup := func(n int64) int64 {
		if n > 1 {
			return n
		}
		return 0
	}
	a.Rows += dup(had+more) - dup(had)
	if had < 2 && had+more >= 2 {
		a.Groups++
	}
}

// Merge folds other's groups into a. Both must come from the same first
// pass, whose Of they share.
func (a *DuplicateAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*DuplicateAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	for key, og := range o.groups {
		g := a.groups[key]
		if g == nil {
			g = &dupGroup{}
			a.groups[key] = g
		}
		// Add other's rows one group at a time: Rows and Groups then
		// count what the merged groups hold.
		a.count(g.count, og.count)
		g.count += og.count
		g.rows = append(g.rows, og.rows...)
		slices.SortFunc(g.rows, func(x, y rowRef) int { return cmp.Compare(x.row, y.row) })
		g.rows = g.rows[:min(len(g.rows), a.check.env.MaxRowsListed)]
	}
	return nil
}

// Finish judges the share of values (rows) in a duplicated group and lists
// the groups, largest first (then by first row), each with its rows in
// order, up to MaxRowsListed rows; a row's score is its group's size.
func (a *DuplicateAccumulator) Finish() report.Result {
	res := a.DuplicateState.result(a.check)
	limit := a.check.env.MaxRowsListed
	if res.Offending == nil || limit <= 0 {
		return res
	}
	var dups []*dupGroup
	keys := map[*dupGroup]string{}
	for k, g := range a.groups {
		if g.count > 1 {
			dups = append(dups, g)
			keys[g] = k
		}
	}
	slices.SortFunc(dups, func(x, y *dupGroup) int {
		if c := cmp.Compare(y.count, x.count); c != 0 {
			return c
		}
		return cmp.Compare(x.rows[0].row, y.rows[0].row)
	})
	for _, g := range dups {
		if len(res.Offending.Rows) >= limit {
			break
		}
		values := a.check.decode(keys[g])
		for _, r := range g.rows[:min(len(g.rows), limit-len(res.Offending.Rows))] {
			res.Offending.Rows = append(res.Offending.Rows, report.Row{
				Row:    r.row,
				Line:   r.line,
				Source: sourceName(a.check.env, r.source),
				Values: values,
				Score:  report.Number(g.count),
			})
		}
	}
	return res
}

// result judges the state.
func (s DuplicateState) result(c *dupCheck) report.Result {
	res := NewResult(c.rule, share(s.Rows, s.Of))
	what := "value"
	if c.key {
		what = "key"
	}
	res.Message = fmt.Sprintf("%s share their %s with another row", countOf(s.Rows, s.Of, c.noun), what)
	if s.Groups > 0 {
		res.Message += fmt.Sprintf(" (%s duplicated %s", thousands(s.Groups), what)
		if s.Groups > 1 {
			res.Message += "s"
		}
		res.Message += ")"
	}
	if s.Rows > 0 {
		res.Offending = &report.Offending{Count: s.Rows, Rows: []report.Row{}}
	}
	return res
}

// decode turns a row's bytes back into the values a listing shows, the way
// Value shows them.
func (c *dupCheck) decode(key string) map[string]any {
	values := make(map[string]any, len(c.cols))
	b := []byte(key)
	for _, col := range c.cols {
		tag := b[0]
		b = b[1:]
		switch {
		case tag == tagNull:
			values[col.name] = nil
		case tag == tagInvalid || col.class == classString:
			n, k := binary.Uvarint(b)
			values[col.name] = string(b[k : k+int(n)])
			b = b[k+int(n):]
		case col.class == classBoolean:
			values[col.name] = b[0] == 1
			b = b[1:]
		default:
			bits := binary.LittleEndian.Uint64(b)
			b = b[8:]
			switch col.class {
			case classNumber:
				values[col.name] = float(math.Float64frombits(bits))
			case classTime:
				values[col.name] = timeText(col.typ, int64(bits))
			default:
				values[col.name] = int64(bits)
			}
		}
	}
	return values
}
