package checks

import (
	"reflect"
	"regexp"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

func TestPattern(t *testing.T) {
	mem := checkedMem(t)
	vals := []any{"H-001", "h-002", "xH-003y", nil, "H-0004", ""}
	tests := []struct {
		name    string
		typ     arrow.DataType
		pattern string
		rows    []int64
		msg     string
	}{
		{"anchored", tString, "^H-[0-9]{3}$", []int64{2, 3, 5, 6}, "4 of 5 values (80%) fail to match ^H-[0-9]{3}$"},
		{"unanchored as in JSON Schema", tString, "H-[0-9]{3}", []int64{2, 6}, "2 of 5 values (40%) fail to match H-[0-9]{3}"},
		{"large strings", arrow.BinaryTypes.LargeString, "^H", []int64{2, 3, 6}, "3 of 5 values (60%) fail to match ^H"},
		{"string views", arrow.BinaryTypes.StringView, "^H", []int64{2, 3, 6}, "3 of 5 values (60%) fail to match ^H"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			b := newBatch(t, mem, 1, col{"id", tc.typ, vals})
			release(t, b)
			spec := rules.PatternSpec{Pattern: tc.pattern, Regexp: regexp.MustCompile(tc.pattern)}
			res := run(t, compile(t, newRule(spec, atMost(0), "id"), envOf(b, 10)), b)
			count, rows, _ := listed(res)
			if count != int64(len(tc.rows)) || !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("offending %d %v, want %v", count, rows, tc.rows)
			}
			if res.Message != tc.msg {
				t.Errorf("message %q, want %q", res.Message, tc.msg)
			}
		})
	}
}
