package rowexpr

import (
	"fmt"
	"maps"
	"math"
	"regexp"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/expr-lang/expr/vm"
)

// Truth is the value of the expression for one row.
type Truth uint8

// The three truth values.
const (
	Unknown Truth = iota // the expression read a null and could not decide
	False
	True
)

func (t Truth) String() string {
	switch t {
	case False:
		return "false"
	case True:
		return "true"
	}
	return "unknown"
}

// chunkRows is how many rows each vector holds: batches are evaluated a
// chunk at a time, so that a node's values stay in cache between nodes and
// memory does not grow with the batch.
const chunkRows = 1024

// evalFn computes a node over the first m rows of the current chunk. The
// vector it returns belongs to the node (or to a column) and is valid
// until the next chunk.
type evalFn func(m int) *vec

// Evaluator evaluates one Program over record batches. It holds the
// buffers of every node, so evaluating allocates nothing per row on the
// vectorized path. An Evaluator is not safe for concurrent use; make one
// per goroutine.
type Evaluator struct {
	p       *Program
	root    evalFn
	arrs    []arrow.Array // the current batch's columns, as Program.cols
	cols    []vec         // the current chunk of each column
	colBufs []*buffers
	env     map[string]any // what the virtual machine reads
	machine vm.VM
	gapX    *vec // operands of a root comparison, for Eval's gap
	gapY    *vec
	off     int          // the current chunk's first row in the batch
	dicts   []*dictCodes // per column: its dictionary, for the lifts that read it; else nil
	lifted  []*liftState // per Program.lifts
}

// NewEvaluator makes an Evaluator of p.
func (p *Program) NewEvaluator() *Evaluator {
	e := &Evaluator{
		p:       p,
		arrs:    make([]arrow.Array, len(p.cols)),
		cols:    make([]vec, len(p.cols)),
		colBufs: make([]*buffers, len(p.cols)),
		env:     maps.Clone(p.env),
	}
	for k, c := range p.cols {
		e.colBufs[k] = newBuffers(c.kind, chunkRows)
	}
	e.newLifts()
	e.root = e.inst(p.root)
	return e
}

// Eval evaluates the expression on every row of rec into out, which must
// hold rec.NumRows() values. When gap is not nil (and as long), gap[i]
// receives for each false row a score of how wrong it is: |left − right|
// when the expression is a single comparison of numbers (in seconds for
// instants, see Program.Measured), else 1; 0 for other rows. Eval fails
// when rec lacks a column the expression reads or holds it in another type
// than the one compiled for.
func (e *Evaluator) Eval(rec arrow.RecordBatch, out []Truth, gap []float64) error {
	return e.eval(rec, nil, out, gap)
}

// eval is Eval and EvalCodes.
func (e *Evaluator) eval(rec arrow.RecordBatch, codes []*array.Dictionary, out []Truth, gap []float64) error {
	n := int(rec.NumRows())
	if len(out) < n || (gap != nil && len(gap) < n) {
		return fmt.Errorf("result buffers hold %d and %d rows, the batch has %d", len(out), len(gap), n)
	}
	schema := rec.Schema()
	defer e.clear()
	for k, c := range e.p.cols {
		idx := fieldIndex(schema, c.name)
		if idx < 0 {
			return fmt.Errorf("column %q is not in the data", c.name)
		}
		arr := rec.Column(idx)
		if !arrow.TypeEqual(arr.DataType(), c.typ) {
			return fmt.Errorf("column %q is %s in the data, the expression was compiled for %s", c.name, arr.DataType(), c.typ)
		}
		e.arrs[k] = arr
		if d := e.dicts[k]; d != nil && idx < len(codes) {
			d.active = e.useCodes(k, codes[idx], n)
		}
	}
	for off := 0; off < n; off += chunkRows {
		m := min(chunkRows, n-off)
		e.off = off
		for k := range e.cols {
			if d := e.dicts[k]; d != nil && d.active && !e.p.raw[k] {
				continue // read only by lifts, from the codes
			}
			e.load(k, off, m)
		}
		v := e.root(m)
		dst := out[off : off+m]
		b, valid := bytesOf(v.b[:m]), validBytes(v.valid, m)
		for i := range dst {
			dst[i] = Truth((1 + b[i]) * valid[i]) // False 1, True 2, Unknown 0
		}
		if gap != nil {
			e.gaps(dst, gap[off:off+m])
		}
	}
	return nil
}

// fieldIndex is the index of the first field named name, or -1. Unlike
// Schema.FieldIndices it does not allocate.
func fieldIndex(schema *arrow.Schema, name string) int {
	for i := range schema.NumFields() {
		if schema.Field(i).Name == name {
			return i
		}
	}
	return -1
}

// clear drops the references to the batch, which its owner releases.
func (e *Evaluator) clear() {
	for k := range e.arrs {
		e.arrs[k] = nil
		e.cols[k] = vec{}
	}
	for name := range e.env {
		e.env[name] = e.p.env[name]
	}
	e.gapX, e.gapY = nil, nil
	for _, d := range e.dicts {
		if d != nil {
			d.active, d.rows = false, nil // rows may be the batch's codes
		}
	}
}

func (e *Evaluator) gaps(truth []Truth, gap []float64) {
	for i, t := range truth {
		switch {
		case t != False:
			gap[i] = 0
		case !e.p.gap:
			gap[i] = 1
		default:
			switch e.p.root.args[0].kind {
			case kindInt:
				gap[i] = math.Abs(float64(e.gapX.i[i]) - float64(e.gapY.i[i]))
			case kindFloat:
				gap[i] = math.Abs(e.gapX.f[i] - e.gapY.f[i])
			default:
				gap[i] = math.Abs(e.gapX.t[i].minus(e.gapY.t[i]))
			}
		}
	}
}

// load points column k's vector at rows off..off+m of the batch, without
// copying where Arrow's layout is already a vector.
func (e *Evaluator) load(k, off, m int) {
	arr, buf, v := e.arrs[k], e.colBufs[k], &e.cols[k]
	v.valid = nil
	if arr.NullN() > 0 {
		bits, base := arr.NullBitmapBytes(), arr.Data().Offset()+off
		valid := buf.vbuf[:m]
		for i := range valid {
			valid[i] = bitutil.BitIsSet(bits, base+i)
		}
		v.valid = valid
	}
	switch a := arr.(type) {
	case *array.Int64:
		v.i = a.Int64Values()[off : off+m]
	case *array.Float64:
		v.f = a.Float64Values()[off : off+m]
	case *array.Boolean:
		b := buf.out.b[:m]
		for i := range b {
			b[i] = a.Value(off + i)
		}
		v.b = b
	case interface{ Value(int) string }: // utf8, large utf8, utf8 view
		s := buf.out.s[:m]
		for i := range s {
			s[i] = a.Value(off + i)
		}
		v.s = s
	case *array.Timestamp:
		unit := a.DataType().(*arrow.TimestampType).Unit
		v.t = instants(buf.out.t[:m], a.TimestampValues()[off:off+m], int64(unit.Multiplier()))
	case *array.Date32:
		v.t = instants(buf.out.t[:m], a.Date32Values()[off:off+m], 86400*1e9)
	case *array.Date64:
		v.t = instants(buf.out.t[:m], a.Date64Values()[off:off+m], 1e6)
	case *array.Float32:
		v.f = widen(buf.out.f[:m], a.Float32Values()[off:off+m])
	case *array.Int32:
		v.i = widen(buf.out.i[:m], a.Int32Values()[off:off+m])
	case *array.Int16:
		v.i = widen(buf.out.i[:m], a.Int16Values()[off:off+m])
	case *array.Int8:
		v.i = widen(buf.out.i[:m], a.Int8Values()[off:off+m])
	case *array.Uint32:
		v.i = widen(buf.out.i[:m], a.Uint32Values()[off:off+m])
	case *array.Uint16:
		v.i = widen(buf.out.i[:m], a.Uint16Values()[off:off+m])
	case *array.Uint8:
		v.i = widen(buf.out.i[:m], a.Uint8Values()[off:off+m])
	}
}

// widen converts src into dst, which is as long.
func widen[T ~int8 | ~int16 | ~int32 | ~uint8 | ~uint16 | ~uint32 | ~float32, U int64 | float64](dst []U, src []T) []U {
	for i, x := range src {
		dst[i] = U(x)
	}
	return dst
}

// instants converts times counted in units of nsPer nanoseconds since the
// epoch into instants, in dst, which is as long.
func instants[T ~int32 | ~int64](dst []instant, src []T, nsPer int64) []instant {
	if nsPer >= 1e9 { // seconds or days: whole seconds
		for i, x := range src {
			dst[i] = instant{sec: int64(x) * (nsPer / 1e9)}
		}
		return dst
	}
	per := 1e9 / nsPer // units a second
	for i, x := range src {
		sec, rem := floorDiv(int64(x), per)
		dst[i] = instant{sec: sec, nsec: rem * nsPer}
	}
	return dst
}

// floorDiv returns the quotient rounded down and the remainder, which has
// the sign of d.
func floorDiv(x, d int64) (int64, int64) {
	q, r := x/d, x%d
	if r < 0 {
		q, r = q-1, r+d
	}
	return q, r
}

// inst turns a plan into a closure with its own buffers; the closure of
// a lift takes its values per dictionary entry when the batch has codes.
func (e *Evaluator) inst(p *plan) evalFn {
	for _, l := range e.lifted {
		if l.node == p {
			l.inner = e.build(p)
			return e.liftFn(l)
		}
	}
	return e.build(p)
}

// build is inst without the lifts at p itself.
func (e *Evaluator) build(p *plan) evalFn {
	args := make([]evalFn, len(p.args))
	for i, a := range p.args {
		args[i] = e.inst(a)
	}
	b := newBuffers(p.kind, chunkRows)
	out := &b.out
	switch p.op {
	case opColumn:
		v := &e.cols[p.col]
		return func(int) *vec { return v }
	case opConst:
		fillConst(out, p.kind, p.val)
		return func(int) *vec { return out }
	case opToFloat:
		return mapVec(args[0], ints, out.f, out, func(x int64) float64 { return float64(x) })
	case opToInt:
		return mapVec(args[0], floats, out.i, out, func(x float64) int64 { return int64(x) })
	case opNeg:
		if p.kind == kindInt {
			return mapVec(args[0], ints, out.i, out, func(x int64) int64 { return -x })
		}
		return mapVec(args[0], floats, out.f, out, func(x float64) float64 { return -x })
	case opNot:
		return func(m int) *vec {
			x := args[0](m)
			xb, dst := bytesOf(x.b[:m]), bytesOf(out.b[:m])
			for i := range dst {
				dst[i] = xb[i] ^ 1
			}
			out.valid = x.valid
			return out
		}
	case opAnd, opOr:
		kleene := and
		if p.op == opOr {
			kleene = or
		}
		return func(m int) *vec {
			x, y := args[0](m), args[1](m)
			out.valid = kleene(x, y, out.b[:m], b.vbuf[:m])
			return out
		}
	case opArith:
		return e.arith(p, args[0], args[1], b)
	case opConcat:
		return func(m int) *vec {
			x, y := args[0](m), args[1](m)
			b.arena = b.arena[:0]
			dst := out.s[:m]
			for i := range dst {
				from := len(b.arena)
				b.arena = append(append(b.arena, x.s[i]...), y.s[i]...)
				dst[i] = arenaString(b.arena, from, len(b.arena))
			}
			out.valid = bothValid(x.valid, y.valid, b.vbuf)
			return out
		}
	case opCompare:
		return e.compare(p, args[0], args[1], b)
	case opStrTest:
		test := [...]func(string, string) bool{strings.Contains, strings.HasPrefix, strings.HasSuffix}[p.test]
		return func(m int) *vec {
			x, y := args[0](m), args[1](m)
			xs, ys, dst := x.s[:m], y.s[:m], out.b[:m]
			for i := range dst {
				dst[i] = test(xs[i], ys[i])
			}
			out.valid = bothValid(x.valid, y.valid, b.vbuf)
			return out
		}
	case opMatches:
		return matches(p.re, args[0], b)
	case opIn:
		return in(p.set, p.args[0].kind, args[0], b)
	case opInRange:
		return func(m int) *vec {
			x := args[0](m)
			xi, dst := x.i[:m], out.b[:m]
			for i := range dst {
				dst[i] = !p.empty && p.lo <= xi[i] && xi[i] <= p.hi
			}
			out.valid = x.valid
			return out
		}
	case opCond:
		return cond(p.kind, args[0], args[1], args[2], b)
	case opCoalesce:
		return coalesce(p.kind, args[0], args[1], b)
	case opIsNull, opNotNull:
		isNull := p.op == opIsNull
		return func(m int) *vec {
			x := args[0](m)
			dst := out.b[:m]
			for i := range dst {
				dst[i] = (x.valid != nil && !x.valid[i]) == isNull
			}
			out.valid = nil
			return out
		}
	case opMath:
		return mapVec(args[0], floats, out.f, out, p.fn)
	case opAbs:
		// expr's abs is x < 0 ? -x : x, so abs(-0.0) stays -0.0 and the
		// smallest int64 stays negative.
		if p.kind == kindInt {
			return mapVec(args[0], ints, out.i, out, abs[int64])
		}
		return mapVec(args[0], floats, out.f, out, abs[float64])
	case opLen:
		return mapVec(args[0], strs, out.i, out, func(x string) int64 { return int64(utf8.RuneCountInString(x)) })
	case opCase:
		return func(m int) *vec {
			x := args[0](m)
			b.arena = b.arena[:0]
			dst := out.s[:m]
			for i, xs := range x.s[:m] {
				if !needsCase(xs, p.upper) {
					dst[i] = xs
					continue
				}
				from := len(b.arena)
				b.arena = appendCase(b.arena, xs, p.upper)
				dst[i] = arenaString(b.arena, from, len(b.arena))
			}
			out.valid = x.valid
			return out
		}
	case opTrim:
		return trim(p.trim, args, b)
	case opMinMax:
		return e.minMax(p, args, b)
	case opVM:
		return e.machineFn(p, b)
	}
	panic(fmt.Sprintf("rowexpr: no evaluation for opcode %d", p.op))
}

func fillConst(out *vec, k kind, v scalar) {
	for i := range chunkRows {
		switch k {
		case kindBool:
			out.b[i] = v.b
		case kindInt:
			out.i[i] = v.i
		case kindFloat:
			out.f[i] = v.f
		case kindString:
			out.s[i] = v.s
		case kindTime:
			out.t[i] = v.t
		}
	}
}

// mapVec is a node applying f to each value of its operand, keeping the
// operand's nulls.
func mapVec[X, Y any](x evalFn, get func(*vec) []X, dst []Y, out *vec, f func(X) Y) evalFn {
	return func(m int) *vec {
		v := x(m)
		xs, d := get(v)[:m], dst[:m]
		for i := range d {
			d[i] = f(xs[i])
		}
		out.valid = v.valid
		return out
	}
}

func abs[T int64 | float64](x T) T {
	if x < 0 {
		return -x
	}
	return x
}

func ints(v *vec) []int64     { return v.i }
func floats(v *vec) []float64 { return v.f }
func strs(v *vec) []string    { return v.s }

func (e *Evaluator) arith(p *plan, x, y evalFn, b *buffers) evalFn {
	out := &b.out
	if p.kind == kindInt {
		return func(m int) *vec {
			u, v := x(m), y(m)
			if p.arith == opMod {
				modulo(u.i, v.i, out.i[:m], u.valid, v.valid, b.vbuf)
				out.valid = b.vbuf[:m]
				return out
			}
			arith(p.arith, u.i, v.i, out.i[:m])
			out.valid = bothValid(u.valid, v.valid, b.vbuf)
			return out
		}
	}
	return func(m int) *vec {
		u, v := x(m), y(m)
		switch p.arith {
		case opDiv:
			divide(u.f, v.f, out.f[:m])
		case opPow:
			power(u.f, v.f, out.f[:m])
		default:
			arith(p.arith, u.f, v.f, out.f[:m])
		}
		out.valid = bothValid(u.valid, v.valid, b.vbuf)
		return out
	}
}

func (e *Evaluator) compare(p *plan, x, y evalFn, b *buffers) evalFn {
	out := &b.out
	root := p == e.p.root && e.p.gap
	k := p.args[0].kind
	return func(m int) *vec {
		u, v := x(m), y(m)
		dst := out.b[:m]
		switch k {
		case kindInt:
			compareOrdered(p.cmp, u.i, v.i, dst)
		case kindFloat:
			compareOrdered(p.cmp, u.f, v.f, dst)
		case kindString:
			compareOrdered(p.cmp, u.s, v.s, dst)
		case kindBool:
			compareBools(p.cmp, u.b, v.b, dst)
		case kindTime:
			compareInstants(p.cmp, u.t, v.t, dst)
		}
		out.valid = bothValid(u.valid, v.valid, b.vbuf)
		if root {
			e.gapX, e.gapY = u, v
		}
		return out
	}
}

func matches(re *regexp.Regexp, x evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		v := x(m)
		xs, dst := v.s[:m], out.b[:m]
		for i := range dst {
			dst[i] = (v.valid == nil || v.valid[i]) && re.MatchString(xs[i])
		}
		out.valid = v.valid
		return out
	}
}

func in(s *set, k kind, x evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		v := x(m)
		dst := out.b[:m]
		for i := range dst {
			switch k {
			case kindInt:
				_, ok := s.ints[v.i[i]]
				if !ok && len(s.floats) > 0 {
					_, ok = s.floats[float64(v.i[i])]
				}
				dst[i] = ok
			case kindFloat:
				_, dst[i] = s.numbers[v.f[i]]
			case kindString:
				_, dst[i] = s.strs[v.s[i]]
			case kindBool:
				dst[i] = s.bools[b2i(v.b[i])]
			case kindTime:
				_, dst[i] = s.times[v.t[i]]
			}
		}
		out.valid = v.valid
		return out
	}
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// pick writes c[i] ? x[i] : y[i].
func pick[T any](c []bool, x, y, dst []T) {
	x, y, c = x[:len(dst)], y[:len(dst)], c[:len(dst)]
	for i := range dst {
		if c[i] {
			dst[i] = x[i]
		} else {
			dst[i] = y[i]
		}
	}
}

// pickKind writes c[i] ? x[i] : y[i] for vectors of kind k.
func pickKind(k kind, c []bool, x, y, dst *vec) {
	switch k {
	case kindBool:
		pick(c, x.b, y.b, dst.b)
	case kindInt:
		pick(c, x.i, y.i, dst.i)
	case kindFloat:
		pick(c, x.f, y.f, dst.f)
	case kindString:
		pick(c, x.s, y.s, dst.s)
	case kindTime:
		pick(c, x.t, y.t, dst.t)
	}
}

// window is v with every slice cut to m rows, for writing into.
func window(v *vec, m int) vec {
	w := vec{}
	if v.b != nil {
		w.b = v.b[:m]
	}
	if v.i != nil {
		w.i = v.i[:m]
	}
	if v.f != nil {
		w.f = v.f[:m]
	}
	if v.s != nil {
		w.s = v.s[:m]
	}
	if v.t != nil {
		w.t = v.t[:m]
	}
	return w
}

// cond is c ? x : y: unknown when c is, else the chosen side.
func cond(k kind, c, x, y evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		cv, xv, yv := c(m), x(m), y(m)
		w := window(out, m)
		pickKind(k, cv.b, xv, yv, &w)
		out.valid = nil
		if cv.valid != nil || xv.valid != nil || yv.valid != nil {
			valid := b.vbuf[:m]
			for i := range valid {
				ok := cv.valid == nil || cv.valid[i]
				if cv.b[i] {
					valid[i] = ok && (xv.valid == nil || xv.valid[i])
				} else {
					valid[i] = ok && (yv.valid == nil || yv.valid[i])
				}
			}
			out.valid = valid
		}
		return out
	}
}

// coalesce is x ?? y: x where it is not null, else y.
func coalesce(k kind, x, y evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		xv, yv := x(m), y(m)
		if xv.valid == nil {
			return xv
		}
		w := window(out, m)
		pickKind(k, xv.valid, xv, yv, &w)
		out.valid = nil
		if yv.valid != nil {
			valid := b.vbuf[:m]
			for i := range valid {
				valid[i] = xv.valid[i] || yv.valid[i]
			}
			out.valid = valid
		}
		return out
	}
}

func trim(op trimOp, args []evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		x := args[0](m)
		xs, dst := x.s[:m], out.s[:m]
		if op == trimSpace {
			for i := range dst {
				dst[i] = strings.TrimSpace(xs[i])
			}
			out.valid = x.valid
			return out
		}
		y := args[1](m)
		ys := y.s[:m]
		for i := range dst {
			switch op {
			case trimCutset:
				dst[i] = strings.Trim(xs[i], ys[i])
			case trimPrefix:
				dst[i] = strings.TrimPrefix(xs[i], ys[i])
			case trimSuffix:
				dst[i] = strings.TrimSuffix(xs[i], ys[i])
			}
		}
		out.valid = bothValid(x.valid, y.valid, b.vbuf)
		return out
	}
}

// minMax follows expr's min and max: start from the first argument and
// take each next one that is smaller (larger), so a NaN is kept only when
// it comes first.
func (e *Evaluator) minMax(p *plan, args []evalFn, b *buffers) evalFn {
	out := &b.out
	return func(m int) *vec {
		first := args[0](m)
		out.valid = first.valid
		if p.kind == kindInt {
			copy(out.i[:m], first.i[:m])
		} else {
			copy(out.f[:m], first.f[:m])
		}
		for _, a := range args[1:] {
			v := a(m)
			if p.kind == kindInt {
				minMaxInto(p.max, out.i[:m], v.i)
			} else {
				minMaxInto(p.max, out.f[:m], v.f)
			}
			out.valid = bothValid(out.valid, v.valid, b.vbuf)
		}
		return out
	}
}

func minMaxInto[T int64 | float64](isMax bool, acc, x []T) {
	x = x[:len(acc)]
	for i := range acc {
		if isMax && acc[i] < x[i] || !isMax && acc[i] > x[i] {
			acc[i] = x[i]
		}
	}
}

// machineFn runs a subexpression on expr's virtual machine row by row,
// with the row's values in the reused env map. A row where a column it
// reads is null is unknown without running it, unless it handles nil
// itself; a row where it fails is unknown.
func (e *Evaluator) machineFn(p *plan, b *buffers) evalFn {
	out := &b.out
	vp := p.vm
	return func(m int) *vec {
		valid := b.vbuf[:m]
		for i := range valid {
			valid[i] = e.setRow(vp, i)
			if !valid[i] {
				continue
			}
			r, err := e.machine.Run(vp.prog, e.env)
			if err != nil {
				valid[i] = false
				continue
			}
			valid[i] = store(out, p.kind, i, r)
		}
		out.valid = valid
		return out
	}
}

// setRow puts row i's values of the columns vp reads into the env; false
// when one is null and vp does not handle nil.
func (e *Evaluator) setRow(vp *vmPlan, i int) bool {
	for _, k := range vp.cols {
		v := &e.cols[k]
		if v.valid != nil && !v.valid[i] {
			if !vp.nullAware {
				return false
			}
			e.env[e.p.cols[k].name] = nil
			continue
		}
		var x any
		switch e.p.cols[k].kind {
		case kindBool:
			x = v.b[i]
		case kindInt:
			x = v.i[i]
		case kindFloat:
			x = v.f[i]
		case kindString:
			x = v.s[i]
		case kindTime:
			x = v.t[i].time()
		}
		e.env[e.p.cols[k].name] = x
	}
	return true
}

// store writes the machine's result r into row i of out; false when r is
// nil or not of kind k (expr's static types can be wider than its values).
func store(out *vec, k kind, i int, r any) bool {
	var ok bool
	switch k {
	case kindBool:
		out.b[i], ok = r.(bool)
	case kindInt:
		out.i[i], ok = toInt(r)
	case kindFloat:
		out.f[i], ok = toFloat(r)
	case kindString:
		out.s[i], ok = r.(string)
	case kindTime:
		var t time.Time
		t, ok = r.(time.Time)
		out.t[i] = instantOf(t)
	}
	return ok
}
