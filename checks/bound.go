package checks

import (
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

// newBoundCheck compiles minimum, maximum, exclusiveMinimum and
// exclusiveMaximum: the share of non-null values below (at or below) the
// minimum or above (at or above) the maximum. A value's score is its
// distance beyond the bound, in the column's unit (seconds for time
// columns), so the listing starts with the values farthest off.
//
// Integer and time columns are compared exactly in their own integer unit:
// the bound becomes the nearest allowed whole number once (a minimum of 0.5
// on integers allows 1 and up). For time columns the bound (seconds since
// the epoch) is first scaled to the column's unit and rounded to the nearest
// unit when it lies within float64 precision of it, so a bound written to
// the microsecond is exact on timestamp[us]. Float columns are compared
// as float64 (on a float32 column the bound is first rounded to float32, as
// the data were, so a maximum of 0.1 allows the 0.1 written in the data);
// NaN breaks every bound.
func newBoundCheck(r *rules.Rule, s rules.BoundSpec, env *Env) (Check, error) {
	word := string(s.Bound)
	if s.Exclusive {
		word = "exclusive " + word
	}
	c, err := bindColumnOf(r, env, word, classInteger, classNumber, classTime)
	if err != nil {
		return nil, err
	}
	if math.IsNaN(s.Value) {
		return nil, fmt.Errorf("%s of column %q is not a number", word, c.name)
	}
	vc := &valueCheck{rule: r, env: env, col: c}
	shown := quantity(env, c, s.Value)
	if c.class == classTime && s.Text != "" {
		shown = s.Text
	}
	switch {
	case s.Bound == rules.KindMinimum && s.Exclusive:
		vc.breaks = "are at or below " + shown
	case s.Bound == rules.KindMinimum:
		vc.breaks = "are below " + shown
	case s.Bound == rules.KindMaximum && s.Exclusive:
		vc.breaks = "are at or above " + shown
	case s.Bound == rules.KindMaximum:
		vc.breaks = "are above " + shown
	default:
		return nil, fmt.Errorf("bound of kind %q", s.Bound)
	}
	if c.class == classNumber {
		s.Value = asStored(c, s.Value)
		lo, hi := floatRange(s)
		vc.scan = func(a arrow.Array, sc *scratch, hit func(int, float64)) {
			v := validOf(a)
			for i, x := range float64s(a, &sc.floats) {
				if !(x >= lo && x <= hi) && v.at(i) {
					hit(i, math.Abs(x-s.Value))
				}
			}
		}
		return vc, nil
	}
	lo, hi := intRange(s, c.perSecond)
	bound := toUnits(s.Value, c.perSecond)
	vc.scan = func(a arrow.Array, sc *scratch, hit func(int, float64)) {
		v := validOf(a)
		for i, x := range int64s(a, &sc.ints) {
			if (x < lo || x > hi) && v.at(i) {
				hit(i, math.Abs(float64(x)-bound)/c.perSecond)
			}
		}
	}
	return vc, nil
}

// asStored rounds v as a value of float column c is stored: to float32 on
// a float32 column.
func asStored(c column, v float64) float64 {
	if c.typ.ID() == arrow.FLOAT32 {
		return float64(float32(v))
	}
	return v
}

// floatRange is the closed interval of float64 values the bound allows. An
// exclusive bound b becomes the neighbouring float64, which is exact: no
// float64 lies strictly between b and it.
func floatRange(s rules.BoundSpec) (lo, hi float64) {
	lo, hi = math.Inf(-1), math.Inf(1)
	switch {
	case s.Bound == rules.KindMinimum && s.Exclusive:
		lo = math.Nextafter(s.Value, math.Inf(1))
	case s.Bound == rules.KindMinimum:
		lo = s.Value
	case s.Exclusive:
		hi = math.Nextafter(s.Value, math.Inf(-1))
	default:
		hi = s.Value
	}
	return lo, hi
}

// intRange is the closed interval of whole units the bound allows, for a
// column with perSecond units to the bound's unit. When no int64 is allowed,
// lo > hi.
func intRange(s rules.BoundSpec, perSecond float64) (lo, hi int64) {
	u := toUnits(s.Value, perSecond)
	var lower bool
	var f float64
	switch {
	case s.Bound == rules.KindMinimum && s.Exclusive:
		lower, f = true, math.Floor(u)+1
	case s.Bound == rules.KindMinimum:
		lower, f = true, math.Ceil(u)
	case s.Exclusive:
		f = math.Ceil(u) - 1
	default:
		f = math.Floor(u)
	}
	const two63 = 0x1p63
	lo, hi = math.MinInt64, math.MaxInt64
	switch {
	case lower && f >= two63, !lower && f < -two63:
		return math.MaxInt64, math.MinInt64 // no int64 is allowed
	case lower && f > -two63:
		lo = int64(f)
	case !lower && f < two63:
		hi = int64(f)
	}
	return lo, hi
}

// toUnits scales seconds v to a column with perSecond units a second. The
// seconds are known only to float64 precision, so a result within that
// precision of a whole unit is that unit: 1704067200.000001 s is exactly
// 1704067200000001 µs. With perSecond 1 (not a time column) v is returned
// as it is.
func toUnits(v, perSecond float64) float64 {
	if perSecond == 1 {
		return v
	}
	u := v * perSecond
	ulp := (math.Nextafter(math.Abs(v), math.Inf(1)) - math.Abs(v)) * perSecond
	if r := math.Round(u); math.Abs(u-r) <= 2*ulp {
		return r
	}
	return u
}
