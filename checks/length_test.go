package checks

import (
	"reflect"
	"testing"

	"github.com/assay-project/assay/rules"
)

func TestLength(t *testing.T) {
	mem := checkedMem(t)
	// Lengths in characters: 0, 2, 5 (6 bytes), 7 (21 bytes), missing, 4.
	b := newBatch(t, mem, 1, col{"s", tString, []any{"", "ab", "héllo", "日本語テキスト", nil, "abcd"}})
	b1, b2 := split(t, b, 3)
	release(t, b, b1, b2)
	tests := []struct {
		name   string
		spec   rules.LengthSpec
		rows   []int64
		scores []float64
		msg    string
	}{
		{"minLength", rules.LengthSpec{Bound: rules.KindMinLength, Length: 3},
			[]int64{1, 2}, []float64{3, 1}, "2 of 5 values (40%) are shorter than 3 characters"},
		{"maxLength counts characters, not bytes", rules.LengthSpec{Bound: rules.KindMaxLength, Length: 4},
			[]int64{4, 3}, []float64{3, 1}, "2 of 5 values (40%) are longer than 4 characters"},
		{"maxLength 5 allows héllo", rules.LengthSpec{Bound: rules.KindMaxLength, Length: 5},
			[]int64{4}, []float64{2}, "1 of 5 values (20%) are longer than 5 characters"},
		{"minLength 1", rules.LengthSpec{Bound: rules.KindMinLength, Length: 1},
			[]int64{1}, []float64{1}, "1 of 5 values (20%) are shorter than 1 character"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, newRule(tc.spec, atMost(0), "s"), envOf(b, 10))
			res := run(t, c, b)
			_, rows, scores := listed(res)
			if !reflect.DeepEqual(rows, tc.rows) || !reflect.DeepEqual(scores, tc.scores) {
				t.Errorf("offending %v %v, want %v %v", rows, scores, tc.rows, tc.scores)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
			sameResult(t, "merged", runMerged(t, c, b1, b2), res, 0)
		})
	}
}
