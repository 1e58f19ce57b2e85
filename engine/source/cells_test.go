package source

import (
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// numberRE is the number grammar of cells.go written as a regular
// expression, an independent statement of the same rule.
var numberRE = regexp.MustCompile(`^[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?$`)

func TestParseFloat(t *testing.T) {
	good := []string{"0", "-0", "+0", "1", "-1.5e3", ".5", "5.", "+7", "007", "1e10", "1E-5", "123.456",
		"0.1", "0.3", "9007199254740993", "1e22", "1e23", "4.9e-324", "2e-324", "1e-400",
		"1.7976931348623157e308", "0.000000000000000000000000000001", "123456789012345678901234567890",
		"3.14159265358979323846264338327950288", "1e+5", "-.5e-2"}
	for _, s := range good {
		got, ok := parseFloat([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if !ok || err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("parseFloat(%q) = %v, %v; strconv gives %v, %v", s, got, ok, want, err)
		}
	}
	bad := []string{"", "+", "-", ".", "e5", "1e", "1e+", "1.2.3", "0x1p3", "0x10", "1_000", "Inf", "inf",
		"-Infinity", "NaN", "nan", " 5", "5 ", "1,5", "1e400", "-1e400", "٣", "5d", "--5", "+-5", "1e5.5"}
	for _, s := range bad {
		if got, ok := parseFloat([]byte(s)); ok {
			t.Errorf("parseFloat(%q) = %v, true; want invalid", s, got)
		}
	}
}

// TestParseFloatMatchesStrconv checks the fast path against strconv on
// random decimal texts of the kinds exports write: a few to twenty
// significant digits, with or without an exponent.
func TestParseFloatMatchesStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 200000 {
		var b strings.Builder
		if rng.IntN(4) == 0 {
			b.WriteByte('-')
		}
		b.WriteString(strconv.FormatUint(rng.Uint64()>>rng.UintN(64), 10))
		if rng.IntN(2) == 0 {
			b.WriteByte('.')
			b.WriteString(strconv.FormatUint(rng.Uint64()>>rng.UintN(64), 10))
		}
		if rng.IntN(3) == 0 {
			fmt.Fprintf(&b, "e%d", rng.IntN(80)-40)
		}
		s := b.String()
		got, ok := parseFloat([]byte(s))
		want, err := strconv.ParseFloat(s, 64)
		if !ok || err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("parseFloat(%q) = %v, %v; strconv gives %v, %v", s, got, ok, want, err)
		}
	}
}

func TestParseInt(t *testing.T) {
	tests := []struct {
		in   string
		want int64
		ok   bool
	}{
		{"0", 0, true},
		{"-0", 0, true},
		{"+42", 42, true},
		{"007", 7, true},
		{"9223372036854775807", math.MaxInt64, true},
		{"-9223372036854775808", math.MinInt64, true},
		{"9223372036854775808", 0, false},
		{"-9223372036854775809", 0, false},
		{"99999999999999999999", 0, false},
		{"5.0", 0, false},
		{"1e3", 0, false},
		{"", 0, false},
		{"-", 0, false},
		{" 1", 0, false},
		{"1 ", 0, false},
		{"1_000", 0, false},
		{"0x10", 0, false},
	}
	for _, tt := range tests {
		got, ok := parseInt([]byte(tt.in))
		if got != tt.want || ok != tt.ok {
			t.Errorf("parseInt(%q) = %d, %v; want %d, %v", tt.in, got, ok, tt.want, tt.ok)
		}
	}
}

func TestParseBool(t *testing.T) {
	for _, s := range []string{"true", "True", "TRUE", "false", "False", "FALSE"} {
		v, ok := parseBool([]byte(s))
		if !ok || v != (strings.ToLower(s) == "true") {
			t.Errorf("parseBool(%q) = %v, %v", s, v, ok)
		}
	}
	for _, s := range []string{"", "1", "0", "yes", "t", "f", "tRUE", "true ", "FaLsE"} {
		if _, ok := parseBool([]byte(s)); ok {
			t.Errorf("parseBool(%q) accepted", s)
		}
	}
}

func TestParseTimestamp(t *testing.T) {
	tests := []struct {
		in   string
		want string // RFC 3339 in UTC, "" when invalid
	}{
		{"2024-03-01T12:30:45Z", "2024-03-01T12:30:45Z"},
		{"2024-03-01 12:30:45", "2024-03-01T12:30:45Z"},
		{"2024-03-01t12:30:45z", "2024-03-01T12:30:45Z"},
		{"2024-03-01T12:30:45.123456789+02:00", "2024-03-01T10:30:45.123456Z"},
		{"2024-03-01T00:30:45-01:30", "2024-03-01T02:00:45Z"},
		{"1969-12-31T23:59:59.5Z", "1969-12-31T23:59:59.5Z"},
		{"0000-01-01T00:00:00Z", "0000-01-01T00:00:00Z"},
		{"9999-12-31T23:59:59.999999Z", "9999-12-31T23:59:59.999999Z"},
		{"2024-02-29T00:00:00Z", "2024-02-29T00:00:00Z"},
		{"2023-02-29T00:00:00Z", ""},
		{"2024-13-01T00:00:00Z", ""},
		{"2024-03-01T24:00:00Z", ""},
		{"2024-03-01T12:60:00Z", ""},
		{"2024-03-01T12:00:60Z", ""},
		{"2024-03-01T12:00", ""},
		{"2024-03-01", ""},
		{"2024-03-01T12:00:00.Z", ""},
		{"2024-03-01T12:00:00+0200", ""},
		{"2024-03-01T12:00:00+24:00", ""},
		{"2024-03-01T12:00:00 Z", ""},
		{"2024-3-01T12:00:00Z", ""},
		{" 2024-03-01T12:00:00Z", ""},
		{"2024-03-01_12:00:00Z", ""},
	}
	for _, tt := range tests {
		got, ok := parseTimestamp([]byte(tt.in))
		if !ok {
			if tt.want != "" {
				t.Errorf("parseTimestamp(%q) invalid; want %s", tt.in, tt.want)
			}
			continue
		}
		s := time.UnixMicro(got).UTC().Format(time.RFC3339Nano)
		if s != tt.want {
			t.Errorf("parseTimestamp(%q) = %s; want %s", tt.in, s, tt.want)
		}
	}
}

// TestDaysFromCivil compares with the time package on every day of years
// 0000 to 2400 and on both ends of the range.
func TestDaysFromCivil(t *testing.T) {
	for d := time.Date(0, 1, 1, 0, 0, 0, 0, time.UTC); d.Year() <= 2400; d = d.AddDate(0, 0, 1) {
		want := int64(math.Floor(float64(d.Unix()) / 86400))
		s := d.Format("2006-01-02")
		got, ok := parseDate([]byte(s))
		if !ok || int64(got) != want {
			t.Fatalf("parseDate(%q) = %d, %v; want %d", s, got, ok, want)
		}
	}
	if got := daysFromCivil(9999, 12, 31); got != time.Date(9999, 12, 31, 0, 0, 0, 0, time.UTC).Unix()/86400 {
		t.Errorf("daysFromCivil(9999-12-31) = %d", got)
	}
	for _, s := range []string{"2024-02-30", "2100-02-29", "2024-00-10", "2024-01-00", "2024-01-32", "2024-1-01", "2024-01-01T"} {
		if _, ok := parseDate([]byte(s)); ok {
			t.Errorf("parseDate(%q) accepted", s)
		}
	}
}

func TestInferKind(t *testing.T) {
	tests := []struct {
		cells []string
		want  kind
	}{
		{[]string{"1", "-2", "+3"}, kInt},
		{[]string{"1", "2.5"}, kFloat},
		{[]string{"1", "1e3"}, kFloat},
		{[]string{"true", "FALSE"}, kBool},
		{[]string{"2024-01-01T00:00:00Z", "2024-01-01 10:00:00+02:00"}, kTimestamp},
		{[]string{"2024-01-01", "1999-12-31"}, kDate},
		{[]string{"2024-01-01", "2024-01-01T00:00:00Z"}, kString},
		{[]string{"1", "true"}, kString},
		{[]string{"1", " 2"}, kString},
		{[]string{"NaN"}, kString},
		{nil, kString}, // no non-null cell in the sample
	}
	for _, tt := range tests {
		fit := fitAll
		for _, c := range tt.cells {
			fit &= fits([]byte(c))
		}
		if got := inferKind(fit); got != tt.want {
			t.Errorf("inferKind(%q) = %v; want %v", tt.cells, got, tt.want)
		}
	}
}

// FuzzCells checks the cell parsers against independent references:
// strconv for numbers (within the grammar's regular expression) and the
// time package for timestamps.
func FuzzCells(f *testing.F) {
	for _, s := range []string{"1", "-1.5e3", ".5", "5.", "1e400", "9223372036854775808", "2024-03-01T12:30:45.5+02:00",
		"2024-02-29", "true", "0x10", "1_0"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		b := []byte(s)
		checkNumber(t, b)
		if us, ok := parseTimestamp(b); ok {
			norm := []byte(strings.ToUpper(s))
			norm[10] = 'T'
			if last := norm[len(norm)-1]; last != 'Z' && !(len(norm) > 6 && (norm[len(norm)-6] == '+' || norm[len(norm)-6] == '-')) {
				norm = append(norm, 'Z')
			}
			tm, err := time.Parse(time.RFC3339Nano, string(norm))
			if err != nil {
				t.Fatalf("parseTimestamp(%q) accepted; time.Parse(%q): %v", s, norm, err)
			}
			wantUs := tm.Unix()*1e6 + int64(tm.Nanosecond()/1000)
			if us != wantUs {
				t.Fatalf("parseTimestamp(%q) = %d; time gives %d", s, us, wantUs)
			}
		}
	})
}

// inBuffer returns s as a slice of a larger buffer in which tail follows
// it, as cells are slices of the splitter's buffer: the short-cell path
// loads eight bytes from the cell's start whenever the buffer has them.
func inBuffer(s string, tail []byte) []byte {
	buf := append([]byte(s), tail...)
	return buf[:len(s):len(buf)]
}

// checkNumber compares parseFloat and parseInt on b with strconv: the
// grammar is numberRE (a subset of strconv's syntax), the values must be
// bit-identical.
func checkNumber(t *testing.T, b []byte) {
	t.Helper()
	s := string(b)
	v, ok := parseFloat(b)
	want, err := strconv.ParseFloat(s, 64)
	switch {
	case ok != (numberRE.MatchString(s) && err == nil):
		t.Fatalf("parseFloat(%q) ok = %v; grammar %v, strconv error %v", s, ok, numberRE.MatchString(s), err)
	case ok && math.Float64bits(v) != math.Float64bits(want):
		t.Fatalf("parseFloat(%q) = %v (%#x); strconv gives %v (%#x)", s, v, math.Float64bits(v), want, math.Float64bits(want))
	}
	i, ok := parseInt(b)
	wantI, err := strconv.ParseInt(s, 10, 64)
	if ok != (err == nil && !strings.Contains(s, "_")) || ok && i != wantI {
		t.Fatalf("parseInt(%q) = %d, %v; strconv gives %d, %v", s, i, ok, wantI, err)
	}
}

// TestShortCells checks the eight-byte path of the number parsers on cells
// of one to nine bytes, followed in their buffer by no byte, by digits, by
// a delimiter and by a point, so that loads past the cell show.
func TestShortCells(t *testing.T) {
	cells := []string{"0", "7", "-7", "+7", "-0", "00", ".5", "5.", "-.5", "+5.", ".", "-.", "+", "-", "..",
		"1.2.3", "12345678", "99999999", "-9999999", "9999999.", ".9999999", "1234.567", "0.000001", "-0.00001",
		"123456789", "1234567.8", "-1234567", "1e5", "1E-2", "-1e+3", "12-3", "1+2", "1 2", " 12", "12 ", "1,5",
		"1/2", "1:2", "١٢", "0x1f", "NaN", "inf", "12\x00", "\xff", "/", ":", "9.", "-9.9", "+.0", "0.0.",
		"1234.5678", "-123.4567", "00000000", "-0000000", "1.000000"}
	tails := [][]byte{nil, []byte("12345678"), []byte(",x,y,z,w"), []byte("........"), []byte("-+eE\n\r\"0")}
	for _, c := range cells {
		for _, tail := range tails {
			checkNumber(t, inBuffer(c, tail))
		}
	}
}

// TestEightDigits checks the word arithmetic of the short-cell path on
// every value of some digit patterns and on bytes around the digits.
func TestEightDigits(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for range 100000 {
		v := rng.Uint64N(100000000)
		s := fmt.Sprintf("%08d", v)
		w := uint64(0)
		for k := 7; k >= 0; k-- {
			w = w<<8 | uint64(s[k])
		}
		if !isEightDigits(w) || eightDigits(w) != v {
			t.Fatalf("%q: isEightDigits %v, eightDigits %d", s, isEightDigits(w), eightDigits(w))
		}
		// Any non-digit byte fails the test.
		k := rng.IntN(8)
		for c := range 256 {
			bad := w&^(0xff<<(8*k)) | uint64(c)<<(8*k)
			if isEightDigits(bad) != (c >= '0' && c <= '9') {
				t.Fatalf("%q with byte %d = %#x: isEightDigits %v", s, k, c, isEightDigits(bad))
			}
		}
	}
}

// FuzzNumbers compares the number parsers with strconv on arbitrary texts
// placed in a buffer before arbitrary bytes: they must accept exactly the
// texts of the number and integer grammars and give bit-identical values.
func FuzzNumbers(f *testing.F) {
	for _, s := range []string{"1", "-1.5", ".5", "5.", "-.5", "1234.567", "12345678", "99999999", "1e5",
		"0.1", "9007199254740993", "1.7976931348623157e308", "4.9e-324", "9223372036854775808", "1.2.3", "+", "."} {
		f.Add(s, []byte(",1234567"))
		f.Add(s, []byte(nil))
	}
	f.Fuzz(func(t *testing.T, s string, tail []byte) {
		checkNumber(t, inBuffer(s, tail))
	})
}
