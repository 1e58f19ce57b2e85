package source

import (
	"encoding/binary"
	"math/bits"
	"strconv"
	"unsafe"
)

// Cell grammars for text input (CSV cells, and strings in Parquet or Arrow
// files read as a declared type). Each parser takes a cell's bytes exactly as
// read, after unquoting, and never trims blanks: " 5" is not a number.
//
// Number (the grammar of integer and number columns):
//
//	number   = [sign] mantissa [exponent]
//	mantissa = digits ["." [digits]] | "." digits
//	exponent = ("e" | "E") [sign] digits
//	integer  = [sign] digits
//	sign     = "+" | "-"
//	digits   = one or more of "0"..."9"
//
// So "-1.5e3", ".5", "5.", "+7" and "007" are numbers; "0x1p3", "1_000",
// "Inf", "NaN", "1e", "." and " 5" are not. A number becomes the float64
// nearest to its decimal value (ties to even), the result strconv.ParseFloat
// gives; one whose magnitude rounds beyond the float64 range is invalid, one
// too small to represent becomes zero. An integer is the same grammar without
// fraction or exponent, and its value must lie in [-2^63, 2^63-1]: "5.0" and
// "1e3" are numbers but not integers.
//
// Boolean: "true", "True", "TRUE", "false", "False" or "FALSE" (not 1/0,
// yes/no or t/f).
//
// Timestamp (RFC 3339, with a space also allowed between date and time):
//
//	YYYY-MM-DD ("T" | "t" | " ") hh:mm:ss ["." digits] ["Z" | "z" | ("+" | "-") hh:mm]
//
// without an offset the time is UTC; it becomes microseconds since
// 1970-01-01T00:00:00Z, fraction digits past the sixth dropped. Seconds run
// 00-59 (no leap second 60); years 0000-9999.
//
// Date: YYYY-MM-DD, a valid day of the proleptic Gregorian calendar, which
// becomes days since 1970-01-01.

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseInt parses b by the integer grammar.
func parseInt(b []byte) (int64, bool) {
	i := 0
	neg := false
	if len(b) > 0 && (b[0] == '+' || b[0] == '-') {
		neg = b[0] == '-'
		i = 1
	}
	if i == len(b) {
		return 0, false
	}
	const cutoff = (1 << 63) / 10
	var u uint64
	for ; i < len(b); i++ {
		d := b[i] - '0'
		if d > 9 || u > cutoff {
			return 0, false
		}
		u = u*10 + uint64(d)
	}
	if neg {
		if u > 1<<63 {
			return 0, false
		}
		return -int64(u), true
	}
	if u > 1<<63-1 {
		return 0, false
	}
	return int64(u), true
}

// Short numbers: a cell of at most eight bytes is read as one 64-bit word
// and its digits converted together, with no branch per byte. The method
// is that of Lemire (2021, "Number parsing at a gigabyte per second",
// Software: Practice and Experience 51(8)): a test that all
// eight bytes are digits, then three multiplications that combine the
// digits pairwise into 2-, 4- and 8-digit values.

// isEightDigits reports whether every byte of w is an ASCII digit: its
// high nibble is 3, and adding 6 does not carry out of the low nibble.
// A byte's test cannot disturb another's verdict: a carry out of a byte
// only happens when its high nibble is not 3.
func isEightDigits(w uint64) bool {
	const hi = 0xf0f0f0f0f0f0f0f0
	return w&hi|(w+0x0606060606060606)&hi>>4 == 0x3333333333333333
}

// eightDigits returns the value of the eight ASCII digits of w, the first
// in its low byte: each step joins neighbouring groups, d1*10+d2 within
// 16-bit lanes, then pairs of those by 100 and pairs of pairs by 10^4 in
// one multiplication whose partial products land in the high 32 bits.
func eightDigits(w uint64) uint64 {
	w -= 0x3030303030303030
	w = w*10 + w>>8 // each 16-bit lane's low byte holds a 2-digit value
	const lanes = 0x000000ff000000ff
	w = ((w&lanes)*(100+1000000<<32) + (w>>16&lanes)*(1+10000<<32)) >> 32
	return w & 0xffffffff
}

// shortDecimal reads a cell of one to eight bytes of the form [sign]
// digits ["." digits], with at least one digit, as mant / 10^frac. ok is
// false when the cell is not of that form, or is not followed in its
// buffer by enough bytes to load eight.
//
// The cell is loaded into a word right-aligned (its last byte in the
// word's high byte, where a little-endian load puts the last digit), the
// positions before it filled with '0', a leading sign replaced by '0' and
// the bytes before a point moved up over it, so that the word reads as
// eight digits with the cell's value. The bytes past the cell are loaded
// but shifted out.
func shortDecimal(b []byte) (mant uint64, frac int, neg, ok bool) {
	n := len(b)
	if uint(n-1) > 7 || cap(b) < 8 { // n is not 1 to 8
		return 0, 0, false, false
	}
	const zeros = 0x3030303030303030 // "00000000"
	shift := uint(8 * (8 - n))
	w := binary.LittleEndian.Uint64(b[:8])<<shift | zeros>>(64-shift)
	digits := n
	if c := b[0]; c == '-' || c == '+' {
		neg = c == '-'
		w += uint64('0'-c) << shift // the sign byte becomes '0'
		digits--
	}
	if dots := ^nonzeroBytes(w^0x2e2e2e2e2e2e2e2e) & highBits; dots != 0 {
		k := uint(bits.TrailingZeros64(dots)) &^ 7 // bit offset of the point
		before := uint64(1)<<k - 1
		w = w&^(before|0xff<<k) | (w&before)<<8 | '0'
		frac = 7 - int(k/8)
		digits--
	}
	if digits == 0 || !isEightDigits(w) {
		return 0, 0, false, false
	}
	return eightDigits(w), frac, neg, true
}

// parseFloat parses b by the number grammar.
//
// Mantissas of at most 2^53 with a decimal exponent in [-22, 22] take the
// exact fast path of Clinger (1990, "How to read floating point numbers
// accurately", PLDI '90, section 3): both operands are exact float64 values,
// so the single IEEE multiplication or division rounds correctly. Everything
// else goes to strconv.ParseFloat, which is correctly rounded too.
//
// The text most data holds, a plain decimal with no exponent ("-12.375"),
// is read by shortDecimal when it has at most eight bytes, else by a loop
// of one test per byte when it has at most 19 digits; other texts by
// parseNumber.
func parseFloat(b []byte) (float64, bool) {
	if mant, frac, neg, ok := shortDecimal(b); ok {
		f := float64(mant) / pow10[frac] // mant < 10^8, frac <= 7: exact operands
		if neg {
			f = -f
		}
		return f, true
	}
	i, neg := 0, false
	if len(b) > 0 && (b[0] == '-' || b[0] == '+') {
		neg, i = b[0] == '-', 1
	}
	first := i
	i, mant := digitRun(b, i, 0)
	nd, frac := i-first, 0 // digits read; digits after the point
	if i < len(b) && b[i] == '.' {
		start := i + 1
		i, mant = digitRun(b, start, mant)
		frac = i - start
		nd += frac
	}
	// With at most 19 digits mant < 10^19 < 2^64 did not overflow, and
	// frac <= 19 keeps 10^frac exact.
	if i != len(b) || nd == 0 || nd > 19 || mant > 1<<53 {
		return parseNumber(b)
	}
	f := float64(mant)
	if frac > 0 {
		f /= pow10[frac]
	}
	if neg {
		f = -f
	}
	return f, true
}

// digitRun reads the digits of b from i on into mant (which may overflow
// past 19 digits) and returns the index after them.
func digitRun(b []byte, i int, mant uint64) (int, uint64) {
	for ; i < len(b); i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		mant = mant*10 + uint64(d)
	}
	return i, mant
}

// parseNumber parses b by the number grammar: the general case of
// parseFloat, which takes the same fast path when the mantissa's
// significant digits allow it.
func parseNumber(b []byte) (float64, bool) {
	i, n := 0, len(b)
	neg := false
	if i < n && (b[i] == '+' || b[i] == '-') {
		neg = b[i] == '-'
		i++
	}
	var mant uint64
	nd, exp := 0, 0 // significant digits in mant; decimal exponent of mant
	digits, slow := false, false
	for ; i < n; i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		digits = true
		switch {
		case mant == 0 && d == 0:
		case nd < 19:
			mant = mant*10 + uint64(d)
			nd++
		default:
			slow = true
		}
	}
	if i < n && b[i] == '.' {
		for i++; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			digits = true
			switch {
			case mant == 0 && d == 0:
				exp--
			case nd < 19:
				mant = mant*10 + uint64(d)
				nd++
				exp--
			default:
				slow = true
			}
		}
	}
	if !digits {
		return 0, false
	}
	if i < n && (b[i] == 'e' || b[i] == 'E') {
		i++
		eneg := false
		if i < n && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		start, e := i, 0
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			if e < 1e6 {
				e = e*10 + int(d)
			}
		}
		if i == start {
			return 0, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if i != n {
		return 0, false
	}
	if !slow && mant <= 1<<53 && exp >= -22 && exp <= 22 {
		f := float64(mant)
		if exp < 0 {
			f /= pow10[-exp]
		} else {
			f *= pow10[exp]
		}
		if neg {
			f = -f
		}
		return f, true
	}
	// The grammar is a subset of strconv's, so only a range error remains.
	// strconv copies the text into any error it returns, so the string view
	// does not outlive b.
	f, err := strconv.ParseFloat(unsafe.String(unsafe.SliceData(b), len(b)), 64)
	if err != nil {
		return 0, false
	}
	return f, true
}

// parseBool parses b by the boolean grammar.
func parseBool(b []byte) (v, ok bool) {
	switch string(b) {
	case "true", "True", "TRUE":
		return true, true
	case "false", "False", "FALSE":
		return false, true
	}
	return false, false
}

// digits2 reads the two-digit decimal at b[i:i+2].
func digits2(b []byte, i int) (int, bool) {
	d1, d2 := b[i]-'0', b[i+1]-'0'
	return int(d1)*10 + int(d2), d1 <= 9 && d2 <= 9
}

// parseYMD reads YYYY-MM-DD at the start of b (which has at least 10 bytes)
// and returns days since 1970-01-01.
func parseYMD(b []byte) (int64, bool) {
	hi, ok1 := digits2(b, 0)
	lo, ok2 := digits2(b, 2)
	m, ok3 := digits2(b, 5)
	d, ok4 := digits2(b, 8)
	if !(ok1 && ok2 && ok3 && ok4) || b[4] != '-' || b[7] != '-' {
		return 0, false
	}
	y := hi*100 + lo
	if m < 1 || m > 12 || d < 1 || d > daysIn(y, m) {
		return 0, false
	}
	return daysFromCivil(y, m, d), true
}

// parseDate parses b by the date grammar into days since 1970-01-01.
func parseDate(b []byte) (int32, bool) {
	if len(b) != 10 {
		return 0, false
	}
	d, ok := parseYMD(b)
	return int32(d), ok
}

// parseTimestamp parses b by the timestamp grammar into microseconds since
// 1970-01-01T00:00:00Z.
func parseTimestamp(b []byte) (int64, bool) {
	if len(b) < 19 {
		return 0, false
	}
	days, ok := parseYMD(b)
	if !ok {
		return 0, false
	}
	return timeOfDay(b, days)
}

// timeOfDay parses the part of a timestamp b (of at least 19 bytes) after
// its date, whose day is days since 1970-01-01, into microseconds since
// 1970-01-01T00:00:00Z.
func timeOfDay(b []byte, days int64) (int64, bool) {
	if c := b[10]; c != 'T' && c != 't' && c != ' ' {
		return 0, false
	}
	h, ok1 := digits2(b, 11)
	mi, ok2 := digits2(b, 14)
	s, ok3 := digits2(b, 17)
	if !(ok1 && ok2 && ok3) || b[13] != ':' || b[16] != ':' || h > 23 || mi > 59 || s > 59 {
		return 0, false
	}
	i := 19
	var micros int64
	if i < len(b) && b[i] == '.' {
		i++
		start := i
		scale := int64(100000)
		for ; i < len(b) && b[i]-'0' <= 9; i++ {
			micros += int64(b[i]-'0') * scale
			scale /= 10
		}
		if i == start {
			return 0, false
		}
	}
	offset := 0 // seconds east of UTC
	if i < len(b) {
		switch b[i] {
		case 'Z', 'z':
			i++
		case '+', '-':
			if len(b)-i < 6 || b[i+3] != ':' {
				return 0, false
			}
			oh, ok1 := digits2(b, i+1)
			om, ok2 := digits2(b, i+4)
			if !ok1 || !ok2 || oh > 23 || om > 59 {
				return 0, false
			}
			offset = oh*3600 + om*60
			if b[i] == '-' {
				offset = -offset
			}
			i += 6
		default:
			return 0, false
		}
	}
	if i != len(b) {
		return 0, false
	}
	secs := days*86400 + int64(h*3600+mi*60+s-offset)
	return secs*1e6 + micros, true
}

// daysIn returns the number of days of month m (1-12) in year y of the
// proleptic Gregorian calendar.
func daysIn(y, m int) int {
	switch m {
	case 2:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}

// daysFromCivil returns the number of days from 1970-01-01 to y-m-d in the
// proleptic Gregorian calendar, by the days_from_civil algorithm of
// H. Hinnant (2013), "chrono-Compatible Low-Level Date Algorithms": count
// 400-year eras of 146097 days from 0000-03-01, so that the leap day falls at
// the end of each year.
func daysFromCivil(y, m, d int) int64 {
	if m <= 2 {
		y--
	}
	era := y / 400
	if y < 0 {
		era = (y - 399) / 400
	}
	yoe := y - era*400 // [0, 399]
	mp := (m + 9) % 12 // March = 0
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return int64(era)*146097 + int64(doe) - 719468
}

// Bits of a cell's fit, for type inference.
const (
	fitInt uint8 = 1 << iota
	fitFloat
	fitBool
	fitTimestamp
	fitDate
	fitAll = fitInt | fitFloat | fitBool | fitTimestamp | fitDate
)

// fits returns the set of non-string kinds whose grammar b follows.
func fits(b []byte) uint8 {
	if len(b) == 0 {
		return 0
	}
	var f uint8
	switch c := b[0]; {
	case c >= '0' && c <= '9' || c == '+' || c == '-' || c == '.':
		if _, ok := parseInt(b); ok {
			f |= fitInt | fitFloat
		} else if _, ok := parseFloat(b); ok {
			f |= fitFloat
		}
		if len(b) == 10 {
			if _, ok := parseDate(b); ok {
				f |= fitDate
			}
		} else if _, ok := parseTimestamp(b); ok {
			f |= fitTimestamp
		}
	case c == 't' || c == 'T' || c == 'f' || c == 'F':
		if _, ok := parseBool(b); ok {
			f |= fitBool
		}
	}
	return f
}

// inferKind picks a column's kind from the intersection of its sampled
// cells' fits: integer, else number, else boolean, timestamp or date, else
// string. A column with no non-null cell in the sample (fit still fitAll)
// is string.
func inferKind(fit uint8) kind {
	switch {
	case fit == fitAll:
		return kString
	case fit&fitInt != 0:
		return kInt
	case fit&fitFloat != 0:
		return kFloat
	case fit&fitBool != 0:
		return kBool
	case fit&fitTimestamp != 0:
		return kTimestamp
	case fit&fitDate != 0:
		return kDate
	}
	return kString
}
