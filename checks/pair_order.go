package checks

import (
	"fmt"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// orderCheck judges that the first column's value is at most the second's
// (below it, when strict) on every row where both hold a value: a start
// before its end, a minimum below its maximum. The measure is the share of
// those rows out of order; each is listed with score first - second, in
// the columns' unit (seconds for times), so the worst come first.
//
// Two integer columns, and two time columns of the same unit, compare
// exactly as integers; otherwise both are read as float64 (times in
// seconds since the epoch, exact to about a microsecond today). A NaN
// compares as out of order with nothing, as in Go, so a row with a NaN is
// never counted as out of order.
type orderCheck struct {
	rule *rules.Rule
	env  *Env
	x, y column
	spec rules.PairSpec
}

func (c *orderCheck) Rule() *rules.Rule { return c.rule }

func (c *orderCheck) NewAccumulator() Accumulator {
	return &OrderAccumulator{check: c, listing: Offenders{Limit: c.env.MaxRowsListed}}
}

// exact reports whether the two columns compare as integers.
func (c *orderCheck) exact() bool {
	return (c.x.class == classInteger && c.y.class == classInteger) ||
		(c.x.class == classTime && c.y.class == classTime && c.x.perSecond == c.y.perSecond)
}

// OrderAccumulator is one run of an ordered rule: rows with both values,
// and those out of order.
type OrderAccumulator struct {
	Rows       int64
	OutOfOrder int64
	check      *orderCheck
	listing    Offenders
	sx, sy     scratch
	px, py     []float64 // the rows with both values, for the plot
	at         []int     // their places in the batch
	points     *pairSample
}

// Observe compares the batch's rows.
func (a *OrderAccumulator) Observe(b *source.Batch) error {
	c := a.check
	ax, ay, err := bothIn(c.x, c.y, b)
	if err != nil {
		return err
	}
	vx, vy := validOf(ax), validOf(ay)
	fx, fy := asFloats(c.x, ax, &a.sx), asFloats(c.y, ay, &a.sy)
	var ix, iy []int64
	if c.exact() {
		ix, iy = int64s(ax, &a.sx.ints), int64s(ay, &a.sy.ints)
	}
	a.px, a.py, a.at = a.px[:0], a.py[:0], a.at[:0]
	for i := range fx {
		if !vx.at(i) || !vy.at(i) {
			continue
		}
		a.Rows++
		a.px, a.py, a.at = append(a.px, fx[i]), append(a.py, fy[i]), append(a.at, i)
		var out bool
		if ix != nil {
			out = ix[i] > iy[i] || (c.spec.Strict && ix[i] == iy[i])
		} else {
			out = fx[i] > fy[i] || (c.spec.Strict && fx[i] == fy[i])
		}
		if !out {
			continue
		}
		a.OutOfOrder++
		a.listing.Add(fx[i]-fy[i], b.Row(i), func() report.Row { return pairRow(c.env, b, i, c.x, c.y) })
	}
	return offer(&a.points, plotPoints, c.spec.Seed, b, a.at, a.px, a.py)
}

// Merge adds other's counts, listing and points to a.
func (a *OrderAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*OrderAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.Rows += o.Rows
	a.OutOfOrder += o.OutOfOrder
	a.listing.Merge(&o.listing)
	var err error
	a.points, err = mergeSample(a.points, o.points)
	return err
}

// Finish judges the share of rows out of order.
func (a *OrderAccumulator) Finish() report.Result {
	c := a.check
	res := NewResult(c.rule, share(a.OutOfOrder, a.Rows))
	op := "above"
	if c.spec.Strict {
		op = "at or above"
	}
	unit := ""
	if c.x.class == classTime {
		unit = " (scores in seconds)"
	}
	res.Message = fmt.Sprintf("%s have %s %s %s%s", countOf(a.OutOfOrder, a.Rows, "rows with both values"), c.x.name, op, c.y.name, unit)
	res.Offending = offending(a.OutOfOrder, &a.listing)
	res.Pair = &report.Pair{Relation: string(rules.RelationOrdered), N: a.Rows, Points: a.points.points()}
	return res
}
