package checks

import (
	"math"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

func TestCountOf(t *testing.T) {
	tests := []struct {
		k, n int64
		want string
	}{
		{3, 10000, "3 of 10,000 values (0.03%)"},
		{0, 1234567, "none of 1,234,567 values"},
		{0, 0, "no values"},
		{1, 1, "1 of 1 value (100%)"},
		{1, 3, "1 of 3 values (33.33%)"},
		{1, 10_000_000, "1 of 10,000,000 values (1e-05%)"},
		{999999, 1000000, "999,999 of 1,000,000 values (99.99%)"},
		{5, 1000, "5 of 1,000 values (0.5%)"},
	}
	for _, tc := range tests {
		if got := countOf(tc.k, tc.n, "values"); got != tc.want {
			t.Errorf("countOf(%d, %d) = %q, want %q", tc.k, tc.n, got, tc.want)
		}
	}
	if got := thousands(-1234); got != "-1,234" {
		t.Errorf("thousands(-1234) = %q", got)
	}
}

func TestNumber(t *testing.T) {
	tests := []struct {
		v    float64
		want string
	}{
		{150, "150"},
		{1e6, "1000000"},
		{0.25, "0.25"},
		{1e-7, "1e-07"},
		{2e15, "2e+15"},
		{math.Inf(-1), "-Inf"},
	}
	for _, tc := range tests {
		if got := number(tc.v); got != tc.want {
			t.Errorf("number(%v) = %q, want %q", tc.v, got, tc.want)
		}
	}
}

// TestValue: cells as a listing shows them.
func TestValue(t *testing.T) {
	mem := checkedMem(t)
	b := newBatch(t, mem, 1,
		col{"i", arrow.PrimitiveTypes.Int32, []any{7}},
		col{"f", tFloat, []any{math.NaN()}},
		col{"t", tTime, []any{1_704_067_200_000_001}},
		col{"d", tDate, []any{19723}},
		col{"s", tString, []any{"héllo"}},
		col{"b", tBool, []any{nil}},
		col{"g", arrow.PrimitiveTypes.Float32, []any{0.5}},
	)
	release(t, b)
	want := map[string]any{"i": int64(7), "f": "NaN", "t": "2024-01-01T00:00:00.000001Z", "d": "2024-01-01", "s": "héllo", "b": nil, "g": 0.5}
	got := RowAt(envOf(b, 1), b, 0, []int{0, 1, 2, 3, 4, 5, 6}).Values
	if !reflect.DeepEqual(got, want) {
		t.Errorf("values %v, want %v", got, want)
	}
}
