package checks

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/assay-project/assay/rules"
)

// share is k/n, and 0 when there is nothing to count: a rule on values
// breaks no value of an empty column.
func share(k, n int64) float64 {
	if n == 0 {
		return 0
	}
	return float64(k) / float64(n)
}

// countOf writes "3 of 10,000 values (0.03%)", or "none of 10,000 values",
// or "no values" when n is 0; noun is plural ("1 of 1 value").
func countOf(k, n int64, noun string) string {
	switch {
	case n == 0:
		return "no " + noun
	case n == 1:
		noun = strings.TrimSuffix(noun, "s")
	}
	if k == 0 {
		return fmt.Sprintf("none of %s %s", thousands(n), noun)
	}
	return fmt.Sprintf("%s of %s %s (%s)", thousands(k), thousands(n), noun, percent(share(k, n)))
}

// thousands writes n with commas between groups of three digits.
func thousands(n int64) string {
	s := strconv.FormatInt(n, 10)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	if neg {
		b.WriteByte('-')
	}
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	return b.String()
}

// percent writes a share as a percentage with two decimals, or two
// significant digits when it is smaller than 0.01%, never rounding a
// non-zero share to 0 or a share below 1 to 100.
func percent(f float64) string {
	p := 100 * f
	var s string
	switch {
	case p == 0 || p == 100:
		s = strconv.FormatFloat(p, 'f', 0, 64)
	case p < 0.01:
		s = strconv.FormatFloat(p, 'g', 2, 64)
	case p > 99.99:
		s = "99.99"
	default:
		s = strings.TrimRight(strings.TrimRight(strconv.FormatFloat(p, 'f', 2, 64), "0"), ".")
	}
	return s + "%"
}

// number writes a value for a message: plain digits for ordinary
// magnitudes, an exponent only for very large or very small ones.
func number(v float64) string {
	a := math.Abs(v)
	if a != 0 && (a < 1e-4 || a >= 1e15) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// quantity writes a value of column c in the policy's words: with the
// column's unit when the policy declares one; as a time for time columns
// (v in seconds since the epoch).
func quantity(env *Env, c column, v float64) string {
	if c.class == classTime && !math.IsNaN(v) && !math.IsInf(v, 0) {
		if u := toUnits(v, c.perSecond); u == math.Trunc(u) && math.Abs(u) < 0x1p63 {
			return timeText(c.typ, int64(u))
		}
		// Between two units: to the microsecond, about what float64
		// seconds hold for present-day times.
		us := math.Round(v * 1e6)
		return time.UnixMicro(int64(us)).UTC().Format(time.RFC3339Nano)
	}
	s := number(v)
	if env.Policy != nil {
		if col := env.Policy.Column(c.name); col != nil && col.Unit != "" {
			s += " " + col.Unit
		}
	}
	return s
}

// errMerge says that two accumulators cannot merge.
func errMerge(r *rules.Rule, a, b Accumulator) error {
	return fmt.Errorf("rule %s: cannot merge %T into %T of another check", r.ID, b, a)
}
