package rowexpr

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// TestFindLifts: the lifts are the largest subexpressions reading one
// string column alone and giving no string, never the measured root; a
// column read elsewhere too is loaded.
func TestFindLifts(t *testing.T) {
	tests := []struct {
		src   string
		lifts string // each lift's opcode and column
		raw   string // the columns read outside lifts
	}{
		{`s != "lab" || a <= 25`, "compare s", "a"},
		{`s matches "^a"`, "matches s", ""},
		{`lower(s) == upper(s) && u in ["a", "b"]`, "compare s, in u", ""},
		{`len(s) < 7`, "len s", ""}, // the root is measured
		{`len(s) != 7`, "compare s", ""},
		{`s == nil || (u ?? "x") startsWith "a"`, "isNull s, strTest u", ""},
		{`s == u`, "", "s u"},
		{`s > "x" || s + "x" == u`, "compare s", "s u"},
		{`indexOf(s, "1") < 5`, "vm s", ""},    // on the machine
		{`s == now().Format("2006")`, "", "s"}, // asks the time
		{`x > 0 && p`, "", "x p"},
	}
	ops := map[opcode]string{opCompare: "compare", opMatches: "matches", opIn: "in", opLen: "len", opIsNull: "isNull", opStrTest: "strTest", opVM: "vm"}
	for _, tc := range tests {
		p, err := Compile(tc.src, testTypes)
		if err != nil {
			t.Fatalf("Compile(%q): %v", tc.src, err)
		}
		var lifts, raw []string
		for _, l := range p.lifts {
			lifts = append(lifts, ops[l.node.op]+" "+p.cols[l.col].name)
		}
		for k, r := range p.raw {
			if r {
				raw = append(raw, p.cols[k].name)
			}
		}
		if got := strings.Join(lifts, ", "); got != tc.lifts || strings.Join(raw, " ") != tc.raw {
			t.Errorf("%s: lifts %q, raw %q; want %q, %q", tc.src, got, strings.Join(raw, " "), tc.lifts, tc.raw)
		}
	}
}

// shareCodes returns, for each record, the dictionary codes of column k
// (a utf8 column) into one dictionary the records share: their distinct
// values in order of first appearance, then unused, when not empty, an
// entry no row points at.
func shareCodes(t *testing.T, mem memory.Allocator, recs []arrow.RecordBatch, k int, unused string) []*array.Dictionary {
	t.Helper()
	place := map[string]int32{}
	db := array.NewStringBuilder(mem)
	defer db.Release()
	add := func(s string) int32 {
		p, ok := place[s]
		if !ok {
			p = int32(len(place))
			place[s] = p
			db.Append(s)
		}
		return p
	}
	var idx []arrow.Array
	for _, rec := range recs {
		a := rec.Column(k).(*array.String)
		ib := array.NewInt32Builder(mem)
		for i := range a.Len() {
			if a.IsNull(i) {
				ib.AppendNull()
			} else {
				ib.Append(add(a.Value(i)))
			}
		}
		idx = append(idx, ib.NewArray())
		ib.Release()
	}
	if unused != "" {
		add(unused)
	}
	dict := db.NewArray()
	defer dict.Release()
	typ := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	out := make([]*array.Dictionary, len(recs))
	for i, x := range idx {
		out[i] = array.NewDictionaryArray(typ, x, dict)
		x.Release()
	}
	return out
}

// TestEvalCodesAgrees: on random expressions, EvalCodes gives what Eval
// gives, truth and gap, row for row, over batches longer than a chunk that
// share dictionaries of s and u: two with nulls and an entry no row points
// at, three where s has no nulls and every entry is used (so the third
// finds every entry computed), and one of more distinct values than a
// chunk holds.
func TestEvalCodesAgrees(t *testing.T) {
	n := 600
	if testing.Short() {
		n = 150
	}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	r := rand.New(rand.NewPCG(5, 8))
	var recs []arrow.RecordBatch
	for b := range 6 {
		rows := randomRows(r, 1500+b*300)
		for i, row := range rows {
			switch {
			case b >= 2 && b <= 4 && row["s"] == nil:
				row["s"] = "a"
			case b == 5 && row["s"] != nil:
				row["s"] = fmt.Sprintf("w%d", i*7%2500)
			}
		}
		recs = append(recs, record(t, mem, rows))
	}
	codes := make([][]*array.Dictionary, len(recs))
	for i := range codes {
		codes[i] = make([]*array.Dictionary, len(testOrder))
	}
	for _, name := range []string{"s", "u"} {
		k := slices.Index(testOrder, name)
		for _, group := range []struct {
			from, to int
			unused   string
		}{{0, 2, "an entry no row points at"}, {2, 5, ""}, {5, 6, ""}} {
			for i, d := range shareCodes(t, mem, recs[group.from:group.to], k, group.unused) {
				codes[group.from+i][k] = d
			}
		}
	}
	defer func() {
		for i, rec := range recs {
			rec.Release()
			for _, d := range codes[i] {
				if d != nil {
					d.Release()
				}
			}
		}
	}()
	g := &exprGen{r: r}
	lifted := 0
	for range n {
		src := g.gen(kindBool, 1+r.IntN(4))
		p, err := Compile(src, testTypes)
		if err != nil {
			continue // a constant modulo by zero, expr's own error
		}
		if len(p.lifts) > 0 {
			lifted++
		}
		plain, coded := p.NewEvaluator(), p.NewEvaluator()
		for b, rec := range recs {
			rows := int(rec.NumRows())
			want, wantGap := make([]Truth, rows), make([]float64, rows)
			got, gotGap := make([]Truth, rows), make([]float64, rows)
			if err := plain.Eval(rec, want, wantGap); err != nil {
				t.Fatalf("%s: %v", src, err)
			}
			if err := coded.EvalCodes(rec, codes[b], got, gotGap); err != nil {
				t.Fatalf("%s: %v", src, err)
			}
			for i := range want {
				if got[i] != want[i] || math.Float64bits(gotGap[i]) != math.Float64bits(wantGap[i]) {
					t.Fatalf("%s: batch %d row %d: %v (gap %v) with codes, %v (gap %v) without", src, b, i, got[i], gotGap[i], want[i], wantGap[i])
				}
			}
		}
		coded.Release()
	}
	t.Logf("%d expressions, %d with lifts", n, lifted)
	if lifted < n/8 {
		t.Errorf("only %d of %d expressions have lifts: the test covers too little", lifted, n)
	}
}
