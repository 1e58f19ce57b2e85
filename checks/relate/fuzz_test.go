package relate

import (
	"encoding/binary"
	"math"
	"slices"
	"testing"

	"github.com/assay-project/assay/checks/internal/order"
)

// fuzzValues turns bytes into up to 64 finite values with many ties: each
// byte pair is a small integer scaled by a power of two, so that slopes
// and ranks meet exact ties and extreme ratios.
func fuzzValues(data []byte) []float64 {
	var v []float64
	for len(data) >= 2 && len(v) < 64 {
		k := int8(data[0])
		e := int(data[1]%16) - 8
		v = append(v, math.Ldexp(float64(k), e))
		data = data[2:]
	}
	return v
}

// FuzzSelect: selection agrees with sorting for every rank and leaves a
// permutation of its input.
func FuzzSelect(f *testing.F) {
	f.Add([]byte{1, 0, 2, 0, 3, 0})
	f.Add([]byte{5, 1, 5, 1, 5, 1, 5, 1})
	f.Add([]byte{200, 3, 7, 9, 7, 9, 0, 0, 255, 15, 128, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		v := fuzzValues(data)
		if len(v) == 0 {
			return
		}
		sorted := slices.Clone(v)
		slices.Sort(sorted)
		for k := range v {
			a := slices.Clone(v)
			if got := order.Select(a, k); got != sorted[k] {
				t.Fatalf("order.Select(%v, %d) = %v, want %v", v, k, got, sorted[k])
			}
			slices.Sort(a)
			if !slices.Equal(a, sorted) {
				t.Fatalf("order.Select changed the values of %v", v)
			}
		}
		h := len(sorted) / 2
		want := sorted[h]
		if len(sorted)%2 == 0 {
			want = (sorted[h-1] + sorted[h]) / 2
		}
		if got := medianInPlace(slices.Clone(v)); got != want {
			t.Fatalf("median of %v = %v, want %v", v, got, want)
		}
	})
}

// FuzzPairs: on any pairs, Kendall's tau-b by Knight's algorithm and the
// exact Theil-Sen line agree with their definitions, and no fit panics or
// returns a p-value outside [0, 1].
func FuzzPairs(f *testing.F) {
	seed := make([]byte, 0, 64)
	for i := 0; i < 16; i++ {
		seed = binary.LittleEndian.AppendUint16(seed, uint16(i*37%11))
	}
	f.Add(seed)
	f.Add([]byte{1, 0, 1, 0, 2, 0, 2, 0, 3, 0, 3, 0})
	f.Add([]byte{9, 2, 9, 2, 9, 2, 1, 5, 4, 4, 4, 4, 8, 0, 0, 0})
	f.Fuzz(func(t *testing.T, data []byte) {
		v := fuzzValues(data)
		n := len(v) / 2
		x, y := v[:n], v[n:2*n]
		if k, err := KendallTest(x, y); err == nil {
			if want := kendallByDefinition(x, y); math.Abs(k.Estimate-want) > 1e-12 {
				t.Fatalf("tau-b of %v, %v = %v, by definition %v", x, y, k.Estimate, want)
			}
			if k.PValue < 0 || k.PValue > 1 {
				t.Fatalf("kendall p = %v", k.PValue)
			}
		}
		if s, err := SpearmanTest(x, y); err == nil && (s.PValue < 0 || s.PValue > 1 || math.Abs(s.Estimate) > 1) {
			t.Fatalf("spearman %+v", s)
		}
		if ts, err := TheilSen(x, y, TheilSenOptions{}); err == nil {
			if a, b := theilSenByDefinition(x, y); ts.Slope != b || ts.Intercept != a {
				t.Fatalf("theil-sen of %v, %v = %v + %v x, by definition %v + %v x", x, y, ts.Intercept, ts.Slope, a, b)
			}
		}
		if _, err := Huber(x, y, HuberOptions{MaxIter: 20}); err != nil && n >= 3 && slices.Min(x) != slices.Max(x) {
			t.Fatalf("huber of %v, %v: %v", x, y, err)
		}
	})
}
