package rowexpr

import (
	"cmp"
	"math"
	"time"
	"unicode"
	"unicode/utf8"
	"unsafe"
)

// kind is the type of a vector: what an expression node yields per row.
type kind uint8

const (
	kindNone kind = iota
	kindBool
	kindInt   // int64
	kindFloat // float64
	kindString
	kindTime // an instant, from a timestamp or date column or a time constant
)

func (k kind) numeric() bool { return k == kindInt || k == kindFloat }

// instant is a point in time as seconds and nanoseconds since the Unix
// epoch (UTC), 0 <= nsec < 1e9. Comparing instants field by field orders
// them in time, exactly, whatever unit the column was stored in.
type instant struct {
	sec  int64
	nsec int64
}

func instantOf(t time.Time) instant { return instant{sec: t.Unix(), nsec: int64(t.Nanosecond())} }

func (t instant) time() time.Time { return time.Unix(t.sec, t.nsec).UTC() }

func (t instant) compare(u instant) int {
	if c := cmp.Compare(t.sec, u.sec); c != 0 {
		return c
	}
	return cmp.Compare(t.nsec, u.nsec)
}

// seconds is t-u in seconds.
func (t instant) minus(u instant) float64 {
	return float64(t.sec-u.sec) + float64(t.nsec-u.nsec)/1e9
}

// vec holds one chunk of a node's values; only the slice of the node's kind
// is used. valid[i] false means row i is null (unknown); valid == nil means
// every row is valid. Values at invalid rows are arbitrary but never read
// as meaningful.
type vec struct {
	b     []bool
	i     []int64
	f     []float64
	s     []string
	t     []instant
	valid []bool
}

// buffers is a node's own storage: the vector it returns and room for a
// validity mask it computes.
type buffers struct {
	out   vec
	vbuf  []bool
	arena []byte // string results (lower, upper, +)
}

func newBuffers(k kind, n int) *buffers {
	b := &buffers{vbuf: make([]bool, n)}
	switch k {
	case kindBool:
		b.out.b = make([]bool, n)
	case kindInt:
		b.out.i = make([]int64, n)
	case kindFloat:
		b.out.f = make([]float64, n)
	case kindString:
		b.out.s = make([]string, n)
	case kindTime:
		b.out.t = make([]instant, n)
	}
	return b
}

// bothValid combines the masks of two operands: a row is valid when it is
// valid in both. It returns an operand's mask unchanged when the other has
// none, so no work is done for columns without nulls.
func bothValid(x, y, buf []bool) []bool {
	switch {
	case x == nil:
		return y
	case y == nil:
		return x
	}
	n := len(x)
	b, xb, yb := bytesOf(buf[:n]), bytesOf(x), bytesOf(y[:n])
	for i := range b {
		b[i] = xb[i] & yb[i]
	}
	return buf[:n]
}

type cmpOp uint8

const (
	opEq cmpOp = iota
	opNe
	opLt
	opLe
	opGt
	opGe
)

var cmpOps = map[string]cmpOp{"==": opEq, "!=": opNe, "<": opLt, "<=": opLe, ">": opGt, ">=": opGe}

// compareOrdered writes x[i] op y[i] into dst. For floats it follows Go
// (and expr): every comparison with NaN is false except !=.
func compareOrdered[T int64 | float64 | string](op cmpOp, x, y []T, dst []bool) {
	x, y = x[:len(dst)], y[:len(dst)]
	switch op {
	case opEq:
		for i := range dst {
			dst[i] = x[i] == y[i]
		}
	case opNe:
		for i := range dst {
			dst[i] = x[i] != y[i]
		}
	case opLt:
		for i := range dst {
			dst[i] = x[i] < y[i]
		}
	case opLe:
		for i := range dst {
			dst[i] = x[i] <= y[i]
		}
	case opGt:
		for i := range dst {
			dst[i] = x[i] > y[i]
		}
	case opGe:
		for i := range dst {
			dst[i] = x[i] >= y[i]
		}
	}
}

func compareBools(op cmpOp, x, y, dst []bool) {
	x, y = x[:len(dst)], y[:len(dst)]
	for i := range dst {
		dst[i] = (x[i] == y[i]) == (op == opEq)
	}
}

func compareInstants(op cmpOp, x, y []instant, dst []bool) {
	x, y = x[:len(dst)], y[:len(dst)]
	for i := range dst {
		c := x[i].compare(y[i])
		switch op {
		case opEq:
			dst[i] = c == 0
		case opNe:
			dst[i] = c != 0
		case opLt:
			dst[i] = c < 0
		case opLe:
			dst[i] = c <= 0
		case opGt:
			dst[i] = c > 0
		case opGe:
			dst[i] = c >= 0
		}
	}
}

type arithOp uint8

const (
	opAdd arithOp = iota
	opSub
	opMul
	opDiv
	opMod
	opPow
)

var arithOps = map[string]arithOp{"+": opAdd, "-": opSub, "*": opMul, "/": opDiv, "%": opMod, "**": opPow, "^": opPow}

// arith writes x[i] op y[i] for +, - and *. Integers wrap around on
// overflow, as Go's (and expr's) int64 arithmetic does.
func arith[T int64 | float64](op arithOp, x, y, dst []T) {
	x, y = x[:len(dst)], y[:len(dst)]
	switch op {
	case opAdd:
		for i := range dst {
			dst[i] = x[i] + y[i]
		}
	case opSub:
		for i := range dst {
			dst[i] = x[i] - y[i]
		}
	case opMul:
		for i := range dst {
			dst[i] = x[i] * y[i]
		}
	}
}

func divide(x, y, dst []float64) {
	x, y = x[:len(dst)], y[:len(dst)]
	for i := range dst {
		dst[i] = x[i] / y[i]
	}
}

func power(x, y, dst []float64) {
	x, y = x[:len(dst)], y[:len(dst)]
	for i := range dst {
		dst[i] = math.Pow(x[i], y[i])
	}
}

// modulo writes x[i] % y[i] with Go's sign rule; a zero divisor makes the
// row invalid instead of panicking.
func modulo(x, y, dst []int64, xv, yv, valid []bool) {
	x, y, valid = x[:len(dst)], y[:len(dst)], valid[:len(dst)]
	for i := range dst {
		ok := y[i] != 0 && (xv == nil || xv[i]) && (yv == nil || yv[i])
		valid[i] = ok
		if ok {
			dst[i] = x[i] % y[i]
		} else {
			dst[i] = 0
		}
	}
}

// bytesOf views a bool slice as bytes. A Go bool is one byte holding 0 or
// 1, so &, | and ^1 on the bytes are and, or and not without the branches
// that && and || compile to, which random data mispredicts half the time.
func bytesOf(b []bool) []uint8 {
	if len(b) == 0 {
		return nil
	}
	return unsafe.Slice((*uint8)(unsafe.Pointer(&b[0])), len(b))
}

// and writes Kleene's three-valued conjunction: false when either side is
// known false, true when both are true, unknown otherwise. It returns the
// validity mask, nil when both sides have none.
func and(x, y *vec, dst, valid []bool) []bool {
	n := len(dst)
	d, xb, yb := bytesOf(dst), bytesOf(x.b[:n]), bytesOf(y.b[:n])
	if x.valid == nil && y.valid == nil {
		for i := range d {
			d[i] = xb[i] & yb[i]
		}
		return nil
	}
	xv, yv, v := validBytes(x.valid, n), validBytes(y.valid, n), bytesOf(valid[:n])
	for i := range d {
		// A side counts as true where unknown; a known false decides.
		xt, yt := xb[i]|(xv[i]^1), yb[i]|(yv[i]^1)
		d[i] = xt & yt
		v[i] = xv[i]&yv[i] | xv[i]&(xb[i]^1) | yv[i]&(yb[i]^1)
	}
	return valid[:n]
}

// or writes Kleene's three-valued disjunction: true when either side is
// known true, false when both are false, unknown otherwise.
func or(x, y *vec, dst, valid []bool) []bool {
	n := len(dst)
	d, xb, yb := bytesOf(dst), bytesOf(x.b[:n]), bytesOf(y.b[:n])
	if x.valid == nil && y.valid == nil {
		for i := range d {
			d[i] = xb[i] | yb[i]
		}
		return nil
	}
	xv, yv, v := validBytes(x.valid, n), validBytes(y.valid, n), bytesOf(valid[:n])
	for i := range d {
		d[i] = xb[i]&xv[i] | yb[i]&yv[i]
		v[i] = xv[i]&yv[i] | xv[i]&xb[i] | yv[i]&yb[i]
	}
	return valid[:n]
}

// allValid is a mask of ones, for operands without a mask.
var allValid = func() []uint8 {
	b := make([]uint8, chunkRows)
	for i := range b {
		b[i] = 1
	}
	return b
}()

func validBytes(valid []bool, n int) []uint8 {
	if valid == nil {
		return allValid[:n]
	}
	return bytesOf(valid[:n])
}

// needsCase reports whether lower (or upper) case changes s: whether it
// has an ASCII letter of the other case or any byte outside ASCII.
func needsCase(s string, upper bool) bool {
	lo, hi := byte('A'), byte('Z')
	if upper {
		lo, hi = 'a', 'z'
	}
	for i := 0; i < len(s); i++ {
		if c := s[i]; c >= utf8.RuneSelf || lo <= c && c <= hi {
			return true
		}
	}
	return false
}

// appendCase appends s with every code point mapped to lower case (or
// upper case), writing invalid UTF-8 bytes as U+FFFD: byte for byte what
// strings.ToLower and strings.ToUpper return, without allocating.
func appendCase(dst []byte, s string, upper bool) []byte {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c >= utf8.RuneSelf {
			fn := unicode.ToLower
			if upper {
				fn = unicode.ToUpper
			}
			for _, r := range s[i:] {
				dst = utf8.AppendRune(dst, fn(r))
			}
			return dst
		}
		switch {
		case !upper && 'A' <= c && c <= 'Z':
			c += 'a' - 'A'
		case upper && 'a' <= c && c <= 'z':
			c -= 'a' - 'A'
		}
		dst = append(dst, c)
	}
	return dst
}

// arenaString is arena[from:to] as a string sharing its memory. The string
// stays valid until the arena is written again, in the next chunk; no
// string made this way outlives the evaluation of a chunk.
func arenaString(arena []byte, from, to int) string {
	if from == to {
		return ""
	}
	return unsafe.String(&arena[from], to-from)
}
