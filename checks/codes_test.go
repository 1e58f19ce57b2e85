package checks

import (
	"encoding/json"
	"fmt"
	"regexp"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// withCodes returns copies of bs, each holding its own reference to the
// same record, with Batch.Codes for every utf8 column, as a Parquet reader
// gives them: each run of group batches shares one dictionary (the same
// array object), made of the run's distinct values in order of first
// appearance, then unused (when not empty and not already there), an
// entry no row points at. The caller releases the copies.
func withCodes(tb testing.TB, mem memory.Allocator, bs []*source.Batch, group int, unused string) []*source.Batch {
	tb.Helper()
	out := make([]*source.Batch, len(bs))
	for i, b := range bs {
		c := *b
		c.Record.Retain()
		c.Text, c.Codes = nil, make([]*array.Dictionary, b.Record.NumCols())
		out[i] = &c
	}
	dictType := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	for from := 0; from < len(bs); from += group {
		run := out[from:min(from+group, len(bs))]
		for k, f := range bs[0].Record.Schema().Fields() {
			if f.Type.ID() != arrow.STRING {
				continue
			}
			place := map[string]int32{}
			db := array.NewStringBuilder(mem)
			add := func(s string) int32 {
				p, ok := place[s]
				if !ok {
					p = int32(len(place))
					place[s] = p
					db.Append(s)
				}
				return p
			}
			codes := make([][]int32, len(run))
			for r, b := range run {
				a := b.Record.Column(k).(*array.String)
				codes[r] = make([]int32, a.Len())
				for i := range a.Len() {
					if a.IsValid(i) {
						codes[r][i] = add(a.Value(i))
					}
				}
			}
			if unused != "" {
				add(unused)
			}
			dict := db.NewArray()
			db.Release()
			for r, b := range run {
				a := b.Record.Column(k)
				ib := array.NewInt32Builder(mem)
				for i, p := range codes[r] {
					if a.IsValid(i) {
						ib.Append(p)
					} else {
						ib.AppendNull()
					}
				}
				idx := ib.NewArray()
				b.Codes[k] = array.NewDictionaryArray(dictType, idx, dict)
				idx.Release()
				ib.Release()
			}
			dict.Release()
		}
	}
	return out
}

// codedBatches is 12 batches of 40 rows of strings for the rules that read
// dictionary codes: s (device codes, some missing, some bad, empty, too
// long, not ASCII), cat (a few categories, some unlisted, some empty) and n
// (integers, some missing).
func codedBatches(t *testing.T, mem memory.Allocator) []*source.Batch {
	t.Helper()
	var bs []*source.Batch
	const per = 40
	for k := range 12 {
		var s, cat, n []any
		for i := range per {
			r := k*per + i
			switch r % 23 {
			case 0:
				s = append(s, nil)
			case 4:
				s = append(s, "D-??")
			case 9:
				s = append(s, "")
			case 13:
				s = append(s, "D-12345")
			case 17:
				s = append(s, "D-ü1")
			default:
				s = append(s, fmt.Sprintf("D-%04d", (r*7)%(30+k)))
			}
			switch r % 19 {
			case 3:
				cat = append(cat, "")
			case 8:
				cat = append(cat, fmt.Sprintf("u%d", r%5))
			default:
				cat = append(cat, []string{"a", "b", "c"}[(r/3)%3])
			}
			if r%31 == 6 {
				n = append(n, nil)
			} else {
				n = append(n, (r*13)%40)
			}
		}
		bs = append(bs, newBatch(t, mem, int64(k*per)+1, col{"s", tString, s}, col{"cat", tString, cat}, col{"n", tInt, n}))
	}
	return bs
}

// TestCodesAgree: every rule on strings gives the same result, to the
// byte, whether the batches carry dictionary codes or not: over one
// accumulator, and over workers that saw interleaved batches and merged.
// The batches share a dictionary five at a time, then take a new one; in
// one set of codes each dictionary has an entry no row points at, which
// breaks every rule.
func TestCodesAgree(t *testing.T) {
	mem := checkedMem(t)
	plain := codedBatches(t, mem)
	release(t, plain...)
	// Every entry used: a worker finds them all judged in later batches.
	used := withCodes(t, mem, plain, 5, "")
	release(t, used...)
	unused := withCodes(t, mem, plain, 5, "unused, and too long for every rule: é")
	release(t, unused...)
	env := envOf(plain[0], 7)
	pattern := func(p string) rules.PatternSpec { return rules.PatternSpec{Pattern: p, Regexp: regexp.MustCompile(p)} }
	row := func(expr string, cols ...string) *rules.Rule {
		return newRule(rules.RowSpec{Expr: expr}, atMost(0), cols...)
	}
	tests := []struct {
		name string
		rule *rules.Rule
	}{
		{"enum of few", newRule(rules.EnumSpec{Values: []string{"a", "b", "c"}}, atMost(0), "cat")},
		{"enum with the empty string", newRule(rules.EnumSpec{Values: []string{"a", "", "c"}}, atMost(0), "cat")},
		{"enum of many", newRule(rules.EnumSpec{Values: []string{"a", "b", "c", "d", "e", "f", "g", "h", "i", "u1"}}, atMost(0), "cat")},
		{"pattern of fixed width", newRule(pattern("^D-[0-9]{4}$"), atMost(0), "s")},
		{"pattern", newRule(pattern("^D-[0-9]+$"), atMost(0), "s")},
		{"pattern the empty string meets", newRule(pattern("^(D-1.*)?$"), atMost(0), "s")},
		{"minLength", newRule(rules.LengthSpec{Bound: rules.KindMinLength, Length: 5}, atMost(0), "s")},
		{"maxLength", newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 6}, atMost(0), "s")},
		{"row: a string comparison or a number", row(`s != "D-0003" || n <= 25`, "s", "n")},
		{"row: strings of two columns apart", row(`s matches "^D-0" && len(cat) < 2`, "s", "cat")},
		{"row: a null test", row(`s == nil || n > 3`, "s", "n")},
		{"row: a default", row(`(s ?? "none") startsWith "D" && cat in ["a", ""]`, "s", "cat")},
		{"row: measured on a length", row(`len(s) < 7`, "s")},
		{"row: case", row(`upper(s) != "D-0005" && lower(cat) != "B"`, "s", "cat")},
		{"row: on the machine", row(`indexOf(s, "1") < 5`, "s")},
		{"row: a column read as it is too", row(`s > "D-0010" || s + "x" == cat + "x"`, "s", "cat")},
		{"row: no string", row(`n < 30`, "n")},
	}
	for _, tc := range tests {
		c := compile(t, tc.rule, env)
		want := run(t, c, plain...)
		wantJSON, _ := json.Marshal(want)
		if want.Offending == nil || want.Offending.Count == 0 {
			t.Fatalf("%s: no row offends, the test proves nothing: %s", tc.name, wantJSON)
		}
		for _, w := range []int{1, 2, 4} {
			for name, coded := range map[string][]*source.Batch{"every entry used": used, "an entry unused": unused} {
				t.Run(fmt.Sprintf("%s/%s/%d workers", tc.name, name, w), func(t *testing.T) {
					got := runInterleaved(t, c, w, coded...)
					if g, _ := json.Marshal(got); string(g) != string(wantJSON) {
						t.Errorf("with codes\n%s\nwithout\n%s", g, wantJSON)
					}
				})
			}
		}
	}
}

// TestCodedVerdictsHoldTheirDictionary: an accumulator keeps the
// dictionary it judged alive after the batches that brought it are
// released (so its memory is not reused for another while it is known),
// skips a batch whose dictionary it has judged whole without finding a
// breaking entry, judges a new dictionary afresh, and lets go of the last
// one when it finishes.
func TestCodedVerdictsHoldTheirDictionary(t *testing.T) {
	mem := checkedMem(t)
	one := func(first int64, vals ...any) *source.Batch {
		b := newBatch(t, mem, first, col{"s", tString, vals})
		c := withCodes(t, mem, []*source.Batch{b}, 1, "")[0]
		b.Release()
		return c
	}
	b1 := one(1, "a", "bb", nil, "a")
	c := compile(t, newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 2}, atMost(0), "s"), envOf(b1, 10))
	a := c.NewAccumulator()
	observe(t, a, b1)
	if cv := &a.(*ValueAccumulator).scratch.coded; cv.left != 0 || cv.breaking != 0 {
		t.Fatalf("after the first batch %d entries unjudged and %d breaking, want 0 and 0 (so the next batch is skipped)", cv.left, cv.breaking)
	}
	observe(t, a, b1)
	b1.Release()
	if mem.CurrentAlloc() == 0 {
		t.Fatal("the accumulator let go of the dictionary it judged")
	}
	// The new dictionary's entries 0 and 1 break and meet the rule, the old
	// one's both met it: verdicts kept from the old would list nothing.
	b2 := one(5, "cccc", "a", "cccc", nil)
	observe(t, a, b2, b2)
	b2.Release()
	res := a.Finish()
	if n, rows, scores := listed(res); n != 4 || fmt.Sprint(rows, scores) != "[5 5 7 7] [2 2 2 2]" {
		t.Errorf("offending %d rows %v scores %v, want 4 [5 5 7 7] [2 2 2 2]", n, rows, scores)
	}
	if got := mem.CurrentAlloc(); got != 0 {
		t.Errorf("%d bytes still allocated after Finish", got)
	}
}

// TestCodesOutOfRange: codes that are not entries of their dictionary (a
// reader's fault) do not change a result: the rules on strings judge such
// rows by their own values, also once every entry is judged, and a row
// expression runs row by row.
func TestCodesOutOfRange(t *testing.T) {
	mem := checkedMem(t)
	plain := newBatch(t, mem, 1, col{"s", tString, []any{"a", "zzz", "bb", "zzzz", nil}})
	release(t, plain)
	coded := *plain
	coded.Record.Retain()
	release(t, &coded)
	db := array.NewStringBuilder(mem)
	db.AppendValues([]string{"a", "bb"}, nil)
	dict := db.NewArray()
	db.Release()
	ib := array.NewInt32Builder(mem)
	ib.AppendValues([]int32{0, 7, 1, -1, 0}, []bool{true, true, true, true, false})
	idx := ib.NewArray()
	ib.Release()
	dictType := &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int32, ValueType: arrow.BinaryTypes.String}
	coded.Codes = []*array.Dictionary{array.NewDictionaryArray(dictType, idx, dict)}
	idx.Release()
	dict.Release()
	env := envOf(plain, 10)
	for _, r := range []*rules.Rule{
		newRule(rules.LengthSpec{Bound: rules.KindMaxLength, Length: 2}, atMost(0), "s"),
		newRule(rules.RowSpec{Expr: `s != "zzz" && len(s) < 4`}, atMost(0), "s"),
	} {
		c := compile(t, r, env)
		want, _ := json.Marshal(run(t, c, plain, plain))
		// The second time every entry of the dictionary is judged.
		if got, _ := json.Marshal(run(t, c, &coded, &coded)); string(got) != string(want) {
			t.Errorf("%s with codes out of range\n%s\nwithout codes\n%s", r.Kind, got, want)
		}
		if !strings.Contains(string(want), `"row":4`) {
			t.Errorf("%s: row 4 does not offend, the test proves nothing: %s", r.Kind, want)
		}
	}
}
