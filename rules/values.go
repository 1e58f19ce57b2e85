package rules

import (
	"errors"
	"fmt"
	"math"
	"math/big"
	"regexp"
	"strconv"
	"strings"
	"time"
)

// numberText is the number grammar of policy texts: an optional sign,
// digits with an optional fraction and exponent ("-1.5e3", ".5", "5."); no
// hex, no digit underscores, no Inf or NaN spellings, no blanks.
var numberText = regexp.MustCompile(`^[+-]?([0-9]+(\.[0-9]*)?|\.[0-9]+)([eE][+-]?[0-9]+)?$`)

var errPercent = errors.New(`want a fraction such as 0.015 or a percent such as "1.5%"`)

// parsePercent reads a percent text such as "1.5%" as the fraction 0.015.
// The division by 100 is done in exact rational arithmetic, so "1.5%" and
// 0.015 give the same float64.
func parsePercent(s string) (float64, error) {
	num, ok := strings.CutSuffix(s, "%")
	if !ok || !numberText.MatchString(num) {
		return 0, errPercent
	}
	q, ok := new(big.Rat).SetString(num)
	if !ok {
		return 0, errPercent
	}
	f, _ := q.Quo(q, big.NewRat(100, 1)).Float64()
	return f, nil
}

// formatPercent writes a share as a percentage: 0.015 -> "1.5%". Twelve
// significant digits hide the float64 noise of the multiplication.
func formatPercent(v float64) string {
	return strconv.FormatFloat(v*100, 'g', 12, 64) + "%"
}

// formatNumber writes v in the shortest form that reads back as v, without
// an exponent for everyday magnitudes.
func formatNumber(v float64) string {
	if a := math.Abs(v); a == 0 || (a >= 1e-4 && a < 1e15) {
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// parseTime reads the text of a bound on a timestamp or date column and
// returns seconds since the Unix epoch. Timestamps are RFC 3339 with "T" or
// a space between date and time, an optional fraction of a second, and "Z"
// or an offset (none means UTC); a date YYYY-MM-DD means its midnight UTC.
// Date columns take dates only.
func parseTime(s string, t Type) (float64, error) {
	layouts := []string{time.DateOnly}
	if t == TypeTimestamp {
		layouts = append(layouts, time.RFC3339, "2006-01-02 15:04:05Z07:00", "2006-01-02T15:04:05", time.DateTime)
	}
	for _, l := range layouts {
		if tm, err := time.Parse(l, s); err == nil {
			return float64(tm.Unix()) + float64(tm.Nanosecond())/1e9, nil
		}
	}
	if t == TypeDate {
		return 0, fmt.Errorf("%q is not a date: write YYYY-MM-DD, e.g. 2024-01-31", s)
	}
	return 0, fmt.Errorf("%q is not a timestamp: write RFC 3339, e.g. 2024-01-31T08:00:00Z, or a date", s)
}

// formatTime writes seconds since the Unix epoch as a column of type t
// shows them.
func formatTime(v float64, t Type) string {
	sec := int64(v)
	tm := time.Unix(sec, int64((v-float64(sec))*1e9)).UTC()
	if t == TypeDate {
		return tm.Format(time.DateOnly)
	}
	return tm.Format(time.RFC3339Nano)
}
