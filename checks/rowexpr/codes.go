package rowexpr

import (
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
)

// A lift is a subexpression computed per dictionary entry rather than per
// row when a batch carries its column's dictionary codes (EvalCodes): it
// reads exactly one column, a utf8 one, yields a boolean, a number or an
// instant, and does not ask the time (now()). Its value on a row is then
// a function of the row's entry alone, the null entry included, so each
// row takes the value computed for its entry: `site != "lab"` compares
// each distinct site once.
type lift struct {
	node *plan
	col  int // index in Program.cols
}

// findLifts returns the largest subexpressions of root that can be lifts,
// and for each column whether it is also read outside them (and must be
// loaded from the batch even when its codes are there). The root is not
// one when measured: its operands give the gaps.
func findLifts(root *plan, cols []column, measured bool) ([]lift, []bool) {
	var lifts []lift
	raw := make([]bool, len(cols))
	var walk func(p *plan, top bool)
	walk = func(p *plan, top bool) {
		read, impure := map[int]bool{}, false
		readsOf(p, read, &impure)
		if len(read) == 1 && !impure && !(top && measured) {
			for k := range read {
				if c := cols[k]; c.kind == kindString && c.typ.ID() == arrow.STRING && p.kind != kindString && p.kind != kindNone {
					lifts = append(lifts, lift{node: p, col: k})
					return
				}
			}
		}
		for _, k := range p.reads() {
			raw[k] = true
		}
		for _, a := range p.args {
			walk(a, false)
		}
	}
	walk(root, true)
	return lifts, raw
}

// reads lists the columns node p reads itself, not through its operands.
func (p *plan) reads() []int {
	switch p.op {
	case opColumn:
		return []int{p.col}
	case opVM:
		return p.vm.cols
	}
	return nil
}

// readsOf adds the columns p reads to read, and sets *impure when it asks
// the time.
func readsOf(p *plan, read map[int]bool, impure *bool) {
	for _, k := range p.reads() {
		read[k] = true
	}
	*impure = *impure || p.op == opVM && p.vm.impure
	for _, a := range p.args {
		readsOf(a, read, impure)
	}
}

// dictCodes is what an Evaluator knows of the dictionary of a column that
// lifts read. It holds a reference to the dictionary, which is how it
// knows it again: a dictionary's memory, released by the reader and reused
// for another, cannot pass for it while held.
type dictCodes struct {
	dict  *array.String
	known []bool // per entry, then the null entry: the lifts' values are computed
	left  int    // entries (not counting the null entry) not computed yet
	// rows holds the current batch's rows as entries, the null entry for
	// a null row: the batch's codes themselves when the column has no
	// nulls, else buf. active says the current batch has codes.
	rows    []int32
	buf     []int32
	active  bool
	pending []int32
	strs    []string // a chunk of entries, to compute the lifts on
	valid   []bool
}

// liftState is a lift in an Evaluator: the subexpression as it evaluates
// row by row (inner), its value per entry of the column's dictionary
// (table), and the buffers of the values it gives a chunk of rows.
type liftState struct {
	lift
	inner evalFn
	table vec
	// unknown says some entry computed since the dictionary changed is
	// unknown, so the rows need a validity mask.
	unknown bool
	out     *buffers
}

// EvalCodes is Eval on a batch that may carry, per column index of rec,
// the dictionary codes of a string column (as source.Batch.Codes holds
// them: int32 indices into a utf8 dictionary, null where the column is;
// codes[k] nil, or codes nil, where there are none). Where a column some
// lifts read has them, each lift is computed once per dictionary entry,
// the first time a row points at it, and each row takes its entry's value;
// the dictionary is kept, with its values, for the next batches until one
// brings another (the Evaluator holds a reference to it until then, or
// until Release). Codes not as described, or pointing outside their
// dictionary (a reader's fault), make the lifts on that column run row by
// row for the batch. The results are Eval's, value for value.
func (e *Evaluator) EvalCodes(rec arrow.RecordBatch, codes []*array.Dictionary, out []Truth, gap []float64) error {
	return e.eval(rec, codes, out, gap)
}

// Release drops the references the Evaluator holds to dictionaries. It
// may evaluate again afterwards.
func (e *Evaluator) Release() {
	for _, d := range e.dicts {
		if d != nil && d.dict != nil {
			d.dict.Release()
			d.dict = nil
		}
	}
}

// newLifts makes the Evaluator's state of p's lifts; the lifts' nodes are
// then instantiated by inst.
func (e *Evaluator) newLifts() {
	e.dicts = make([]*dictCodes, len(e.p.cols))
	for _, l := range e.p.lifts {
		if e.dicts[l.col] == nil {
			e.dicts[l.col] = &dictCodes{strs: make([]string, chunkRows), valid: make([]bool, chunkRows)}
		}
		e.lifted = append(e.lifted, &liftState{lift: l, out: newBuffers(l.node.kind, chunkRows)})
	}
}

// liftFn is the evaluation of lift l: its entries' values on a batch with
// codes, else inner's.
func (e *Evaluator) liftFn(l *liftState) evalFn {
	d, out := e.dicts[l.col], &l.out.out
	return func(m int) *vec {
		if !d.active {
			return l.inner(m)
		}
		rows := d.rows[e.off : e.off+m]
		switch l.node.kind {
		case kindBool:
			gather(out.b[:m], l.table.b, rows)
		case kindInt:
			gather(out.i[:m], l.table.i, rows)
		case kindFloat:
			gather(out.f[:m], l.table.f, rows)
		case kindTime:
			gather(out.t[:m], l.table.t, rows)
		}
		out.valid = nil
		if l.unknown {
			gather(l.out.vbuf[:m], l.table.valid, rows)
			out.valid = l.out.vbuf[:m]
		}
		return out
	}
}

// gather writes table[at[i]] into dst[i].
func gather[T any](dst, table []T, at []int32) {
	at = at[:len(dst)]
	for i, c := range at {
		dst[i] = table[c]
	}
}

// scatter writes src[i] into table[at[i]].
func scatter[T any](table, src []T, at []int32) {
	src = src[:len(at)]
	for i, c := range at {
		table[c] = src[i]
	}
}

// useCodes readies the lifts on column k (read from the batch at e.arrs[k],
// of n rows) for the batch's codes c: the rows as entries, and the lifts
// computed on the entries they point at for the first time. False when c
// is nil or not as EvalCodes describes; the lifts then run row by row.
func (e *Evaluator) useCodes(k int, c *array.Dictionary, n int) bool {
	d := e.dicts[k]
	str, ok := e.arrs[k].(*array.String)
	if c == nil || !ok || c.Len() != n {
		return false
	}
	indices, ok := c.Indices().(*array.Int32)
	dict := c.Data().Dictionary()
	if !ok || dict == nil || dict.DataType().ID() != arrow.STRING {
		return false
	}
	if d.dict == nil || d.dict.Data() != dict {
		e.newDictionary(k, dict)
	}
	entries := int32(d.dict.Len())
	codes, known, pending := indices.Int32Values(), d.known, d.pending[:0]
	fault := false // a code is not an entry: the reader's fault
	if str.NullN() == 0 {
		// The codes are the rows' entries. They need a look each while
		// some entry has not been computed, else only a check of bounds.
		if d.left == 0 {
			fault = !below(codes, entries)
		} else {
			for _, x := range codes {
				if fault = uint32(x) >= uint32(entries); fault {
					break
				}
				if !known[x] {
					known[x] = true
					pending = append(pending, x)
				}
			}
		}
		d.rows = codes
	} else {
		bits, base := str.NullBitmapBytes(), str.Data().Offset()
		rows := grown(d.buf, n)
		d.buf = rows
		for i, x := range codes {
			switch {
			case !bitutil.BitIsSet(bits, base+i):
				x = entries
			case uint32(x) >= uint32(entries):
				fault = true
			}
			if fault {
				break
			}
			rows[i] = x
			if !known[x] {
				known[x] = true
				pending = append(pending, x)
			}
		}
		d.rows = rows
	}
	if fault {
		for _, x := range pending {
			known[x] = false
		}
		return false
	}
	d.pending = pending
	for _, x := range pending {
		if x != entries {
			d.left--
		}
	}
	e.computeLifts(k)
	return true
}

// below reports whether every code is at least 0 and below n.
func below(codes []int32, n int32) bool {
	var hi uint32
	for _, x := range codes {
		hi = max(hi, uint32(x))
	}
	return len(codes) == 0 || hi < uint32(n)
}

// newDictionary makes dict the dictionary of column k, with no entry
// computed.
func (e *Evaluator) newDictionary(k int, dict arrow.ArrayData) {
	d := e.dicts[k]
	if d.dict != nil {
		d.dict.Release()
	}
	d.dict = array.NewStringData(dict) // a reference of its own
	n := d.dict.Len() + 1              // and the null entry
	d.known = grown(d.known, n)
	clear(d.known)
	d.left = n - 1
	for _, l := range e.lifted {
		if l.col != k {
			continue
		}
		l.unknown = false
		l.table.valid = grown(l.table.valid, n)
		switch l.node.kind {
		case kindBool:
			l.table.b = grown(l.table.b, n)
		case kindInt:
			l.table.i = grown(l.table.i, n)
		case kindFloat:
			l.table.f = grown(l.table.f, n)
		case kindTime:
			l.table.t = grown(l.table.t, n)
		default:
			panic(fmt.Sprintf("rowexpr: a lift of kind %d", l.node.kind))
		}
	}
}

// computeLifts computes the lifts on column k for its pending entries, a
// chunk of entries at a time, as if they were rows.
func (e *Evaluator) computeLifts(k int) {
	d := e.dicts[k]
	null := int32(d.dict.Len())
	for from := 0; from < len(d.pending); from += chunkRows {
		part := d.pending[from:min(from+chunkRows, len(d.pending))]
		m := len(part)
		v, hasNull := vec{s: d.strs[:m]}, false
		for j, x := range part {
			if x == null {
				v.s[j], hasNull = "", true
				continue
			}
			v.s[j] = d.dict.Value(int(x))
		}
		if hasNull {
			v.valid = d.valid[:m]
			for j, x := range part {
				v.valid[j] = x != null
			}
		}
		e.cols[k] = v
		for _, l := range e.lifted {
			if l.col != k {
				continue
			}
			r := l.inner(m)
			switch l.node.kind {
			case kindBool:
				scatter(l.table.b, r.b, part)
			case kindInt:
				scatter(l.table.i, r.i, part)
			case kindFloat:
				scatter(l.table.f, r.f, part)
			case kindTime:
				scatter(l.table.t, r.t, part)
			}
			for j, x := range part {
				ok := r.valid == nil || r.valid[j]
				l.table.valid[x] = ok
				l.unknown = l.unknown || !ok
			}
		}
	}
	e.cols[k] = vec{}
}

// grown returns s with length n, reusing its memory when it has room.
func grown[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n)
	}
	return s[:n]
}
