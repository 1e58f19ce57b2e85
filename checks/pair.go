package checks

import (
	"fmt"
	"slices"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Pair rules judge how two columns relate; their statistics come from
// package relate. Each kind lives in its own file: linear (pair_linear.go),
// monotonic (pair_rank.go), ordered (pair_order.go), association and
// determines (pair_category.go). What they share is here: binding the two
// columns, reading the rows where both hold a value, and a uniform sample
// of pairs.

// plotPoints is how many points a pair result keeps for a scatter plot.
const plotPoints = 500

// newPairCheck compiles a pair rule: its two columns must hold what its
// relation compares.
func newPairCheck(r *rules.Rule, s rules.PairSpec, env *Env) (Check, error) {
	if len(r.Columns) != 2 {
		return nil, fmt.Errorf("a pair rule reads two columns, the rule names %d", len(r.Columns))
	}
	var cols [2]column
	for i, name := range r.Columns {
		c, err := bindColumn(env, name)
		if err != nil {
			return nil, err
		}
		cols[i] = c
	}
	x, y := cols[0], cols[1]
	want := func(what string, ok func(column) bool, classes ...class) error {
		for _, c := range cols {
			if !ok(c) {
				return fmt.Errorf("column %q holds %s; %s applies to %s", c.name, typeWords(c.typ), what, classList(classes))
			}
		}
		return nil
	}
	numeric := func(c column) bool { return c.class == classInteger || c.class == classNumber }
	var err error
	switch s.Relation {
	case rules.RelationLinear:
		if err = want("a linear pair", numeric, classInteger, classNumber); err == nil {
			return newLinearCheck(r, s, env, x, y)
		}
	case rules.RelationMonotonic:
		if err = want("a monotonic pair", numeric, classInteger, classNumber); err == nil {
			return &rankCheck{rule: r, env: env, x: x, y: y, spec: s}, nil
		}
	case rules.RelationOrdered:
		ordered := func(c column) bool { return numeric(c) || c.class == classTime }
		if err = want("an ordered pair", ordered, classInteger, classNumber, classTime); err == nil {
			if (x.class == classTime) != (y.class == classTime) {
				return nil, fmt.Errorf("column %q holds %s and %q %s; an ordered pair compares two numbers or two times",
					x.name, typeWords(x.typ), y.name, typeWords(y.typ))
			}
			return &orderCheck{rule: r, env: env, x: x, y: y, spec: s}, nil
		}
	case rules.RelationAssociation:
		categorical := func(c column) bool {
			return c.class == classString || c.class == classInteger || c.class == classBoolean
		}
		if err = want("an association", categorical, classString, classInteger, classBoolean); err == nil {
			return &associationCheck{categoryPair{rule: r, env: env, a: x, b: y}}, nil
		}
	case rules.RelationDetermines:
		if err = want("a dependency", func(c column) bool { return c.class != classOther },
			classString, classInteger, classNumber, classBoolean, classTime); err == nil {
			return &dependencyCheck{categoryPair{rule: r, env: env, a: x, b: y}}, nil
		}
	default:
		err = fmt.Errorf("unknown relation %q", s.Relation)
	}
	return nil, err
}

// pairRows reads the rows of a batch where both columns hold a finite
// value, as float64 (times in seconds since the epoch).
type pairRows struct {
	// X and Y are the pairs; Rows the row index in the batch of each, or
	// nil when every row of the batch is a pair (the pair k is row k).
	X, Y []float64
	Rows []int
	// NonFinite counts the rows left out for a NaN or an infinite value.
	NonFinite int64
	sx, sy    scratch
	// x, y and rows hold X, Y and Rows when some rows are left out; when
	// none is, X and Y are the columns' values, read in place when they
	// are float64.
	x, y []float64
	rows []int
}

// read fills X, Y and Rows from batch b. A batch without nulls whose
// values are all finite, the common case, is read without a copy.
func (p *pairRows) read(x, y column, b *source.Batch) error {
	ax, ay, err := bothIn(x, y, b)
	if err != nil {
		return err
	}
	fx, fy := asFloats(x, ax, &p.sx), asFloats(y, ay, &p.sy)
	if ax.NullN() == 0 && ay.NullN() == 0 && allFinite(fx, fy) {
		p.X, p.Y, p.Rows = fx, fy, nil
		return nil
	}
	vx, vy := validOf(ax), validOf(ay)
	n := len(fx)
	xs, ys, rows := slices.Grow(p.x[:0], n)[:n], slices.Grow(p.y[:0], n)[:n], slices.Grow(p.rows[:0], n)[:n]
	fy = fy[:n]
	m := 0
	for i, u := range fx {
		if !vx.at(i) || !vy.at(i) {
			continue
		}
		v := fy[i]
		if !isFinite(u) || !isFinite(v) {
			p.NonFinite++
			continue
		}
		xs[m], ys[m], rows[m] = u, v, i
		m++
	}
	p.x, p.y, p.rows = xs, ys, rows
	p.X, p.Y, p.Rows = xs[:m], ys[:m], rows[:m]
	return nil
}

// row is the index in the batch of pair k.
func (p *pairRows) row(k int) int {
	if p.Rows == nil {
		return k
	}
	return p.Rows[k]
}

// isFinite reports whether v is neither NaN nor infinite: v - v is 0 for
// every finite v and NaN otherwise.
func isFinite(v float64) bool { return v-v == 0 }

// allFinite reports whether every xs[i] and ys[i] is finite.
func allFinite(xs, ys []float64) bool {
	ys = ys[:len(xs)]
	for i, u := range xs {
		if !isFinite(u) || !isFinite(ys[i]) {
			return false
		}
	}
	return true
}

// bothIn returns the arrays of two columns in batch b.
func bothIn(x, y column, b *source.Batch) (ax, ay arrow.Array, err error) {
	if ax, err = x.in(b); err != nil {
		return nil, nil, err
	}
	ay, err = y.in(b)
	return ax, ay, err
}

// asFloats returns every element of an integer, float or time array as
// float64 (times in seconds), null slots included: a float64 array's own
// values, read in place, or a conversion into s.floats, which is reused.
func asFloats(c column, a arrow.Array, s *scratch) []float64 {
	if c.class == classNumber {
		return float64s(a, &s.floats)
	}
	out := s.floats[:0]
	if c.class == classTime {
		for _, v := range int64s(a, &s.ints) {
			out = append(out, float64(v)/c.perSecond)
		}
	} else {
		for _, v := range int64s(a, &s.ints) {
			out = append(out, float64(v))
		}
	}
	s.floats = out
	return out
}

// pairSample keeps a uniform sample of at most a size of pairs: a
// bottomk.Sample of two values per row, keyed by the rule's seed and the
// data-row number, so the pairs it keeps, in row order, depend on the
// rows alone, not on how batches were cut or dealt to accumulators.
type pairSample struct {
	s   *bottomk.Sample
	buf []float64 // the pairs of a batch, interleaved
}

// newPairSample returns an empty sample of at most size pairs.
func newPairSample(size int, seed uint64) (*pairSample, error) {
	s, err := bottomk.New(size, 2, seed)
	if err != nil {
		return nil, err
	}
	return &pairSample{s: s}, nil
}

// add offers the pairs (xs[i], ys[i]) of data rows first+at[i] (first+i
// when at is nil).
func (s *pairSample) add(first int64, at []int, xs, ys []float64) {
	vals := s.interleave(xs, ys)
	if at == nil {
		s.s.OfferRun(first, vals)
	} else {
		s.s.OfferAt(first, at, vals)
	}
}

// interleave writes the pairs (xs[i], ys[i]) one after the other into the
// sample's buffer, as a bottomk.Sample takes rows of two values.
func (s *pairSample) interleave(xs, ys []float64) []float64 {
	ys = ys[:len(xs)]
	buf := slices.Grow(s.buf[:0], 2*len(xs))[:2*len(xs)]
	for i, x := range xs {
		buf[2*i], buf[2*i+1] = x, ys[i]
	}
	s.buf = buf
	return buf
}

// offer offers the pairs (xs[i], ys[i]) of rows at[i] of batch b (row i
// when at is nil) to *s, making it on first use: a sample of at most size
// pairs keyed by seed.
func offer(s **pairSample, size int, seed uint64, b *source.Batch, at []int, xs, ys []float64) error {
	if *s == nil {
		var err error
		if *s, err = newPairSample(size, seed); err != nil {
			return err
		}
	}
	if b.Rows == nil {
		(*s).add(b.FirstRow, at, xs, ys)
		return nil
	}
	vals := (*s).interleave(xs, ys)
	for i := range xs {
		k := i
		if at != nil {
			k = at[i]
		}
		(*s).s.Offer(b.Rows[k], vals[2*i:2*i+2])
	}
	return nil
}

// mergeSample folds o into s; a nil s takes o.
func mergeSample(s, o *pairSample) (*pairSample, error) {
	switch {
	case o == nil:
		return s, nil
	case s == nil:
		return o, nil
	}
	return s, s.s.Merge(o.s)
}

// values returns copies of the sampled pairs, in row order.
func (s *pairSample) values() (xs, ys []float64) {
	if s == nil {
		return nil, nil
	}
	return s.s.Values(0), s.s.Values(1)
}

// sampled reports whether the sample holds fewer pairs than were offered.
func (s *pairSample) sampled() bool { return s != nil && !s.s.Complete() }

// points writes a sample as a report's points.
func (s *pairSample) points() *report.Points {
	xs, ys := s.values()
	if len(xs) == 0 {
		return nil
	}
	p := &report.Points{X: make([]report.Number, len(xs)), Y: make([]report.Number, len(ys))}
	for i := range xs {
		p.X[i], p.Y[i] = report.Number(xs[i]), report.Number(ys[i])
	}
	return p
}

// nonFinite is the sentence about pairs left out for NaN or infinite
// values; "" when there were none.
func nonFinite(n int64) string {
	if n == 0 {
		return ""
	}
	if n == 1 {
		return "1 row with a NaN or infinite value left out"
	}
	return thousands(n) + " rows with a NaN or infinite value left out"
}

// cellTexts calls f with the text of every non-null value of a column of
// any class but classOther, as a dependency or association compares them:
// strings as they are, whole numbers in decimal, booleans as true and
// false, floats in the shortest form that reads back the same, times in
// RFC 3339 (dates as YYYY-MM-DD).
func cellTexts(c column, arr arrow.Array, s *scratch, f func(i int, s string)) {
	switch c.class {
	case classString, classBoolean, classInteger:
		eachText(arr, f)
	case classNumber:
		v := validOf(arr)
		for i, x := range float64s(arr, &s.floats) {
			if v.at(i) {
				if x == 0 {
					x = 0 // -0 and 0 are one value
				}
				f(i, strconv.FormatFloat(x, 'g', -1, 64))
			}
		}
	case classTime:
		v := validOf(arr)
		for i, x := range int64s(arr, &s.ints) {
			if v.at(i) {
				f(i, timeText(arr.DataType(), x))
			}
		}
	}
}

// pairRow lists row i of b with the values of the pair's columns.
func pairRow(env *Env, b *source.Batch, i int, x, y column) report.Row {
	return RowAt(env, b, i, []int{x.index, y.index})
}

// sig4 writes an estimate for a message, to four significant digits.
func sig4(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
