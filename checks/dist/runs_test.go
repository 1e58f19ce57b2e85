package dist

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestRunMemo: runMemo gives f(x) for every x, bit for bit, and calls f
// once per run of identical values, keeping -0 apart from +0 and NaN
// runs together.
func TestRunMemo(t *testing.T) {
	negZero := math.Copysign(0, -1)
	tests := []struct {
		name  string
		x     []float64
		calls int
	}{
		{"empty", nil, 0},
		{"runs", []float64{1, 1, 1, 2, 2, 3, 1, 1}, 4},
		{"no ties", []float64{0.5, 0.25, 0.125}, 3},
		{"signed zeros", []float64{negZero, negZero, 0, 0, negZero}, 3},
		{"NaN", []float64{math.NaN(), math.NaN(), 4}, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			calls := 0
			f := func(x float64) float64 {
				calls++
				return 1 / x // tells -0 from +0
			}
			m := runMemo{f: func(x float64) float64 { return f(x) }}
			for _, x := range tc.x {
				got, want := m.at(x), 1/x
				if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
					t.Errorf("at(%v) = %v, want %v", x, got, want)
				}
			}
			if calls != tc.calls {
				t.Errorf("f called %d times, want %d (once per run)", calls, tc.calls)
			}
		})
	}
}

// TestLogLikRunsBitIdentical: LogLik and the mean and variance of ln x,
// which evaluate once per run of equal values, equal the plain sums over
// every value, bit for bit, on sorted data recorded to a few decimals, for
// every family of testDists.
func TestLogLikRunsBitIdentical(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	for _, d := range testDists(t) {
		x := make([]float64, 4000)
		d.Draw(rng, x)
		for i, v := range x {
			x[i] = math.Round(v*100) / 100
		}
		slices.Sort(x)
		var want float64
		for _, v := range x {
			want += d.LogProb(v)
		}
		if got := d.LogLik(x); math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("%v: LogLik = %v, per value %v", d, got, want)
		}
		if x[0] <= 0 {
			continue
		}
		n := float64(len(x))
		var s float64
		for _, v := range x {
			s += math.Log(v)
		}
		m := s / n
		var c, ss float64
		for _, v := range x {
			e := math.Log(v) - m
			c += e
			ss += e * e
		}
		wm, wv := m+c/n, (ss-c*c/n)/n
		if gm, gv := meanVar(x, math.Log); math.Float64bits(gm) != math.Float64bits(wm) || math.Float64bits(gv) != math.Float64bits(wv) {
			t.Errorf("%v: mean and variance of ln x = %v, %v; per value %v, %v", d, gm, gv, wm, wv)
		}
	}
}

// TestCheckValuesRuns: checkValues, which skips a value identical to one
// that just passed, still counts and shows every value outside, runs of
// them included.
func TestCheckValuesRuns(t *testing.T) {
	positive := func(x float64) bool { return x > 0 }
	negZero := math.Copysign(0, -1)
	tests := []struct {
		name   string
		x      []float64
		count  int
		values []float64
	}{
		{"runs outside", []float64{-1, -1, -1, 0, 0, 1, 1, 2}, 5, []float64{-1, -1, -1, 0, 0}},
		{"outside after a run inside", []float64{1, 1, 1, 0, 0, 1, 1}, 2, []float64{0, 0}},
		{"signed zeros", []float64{negZero, 0, negZero, 3, 3}, 3, []float64{negZero, 0, negZero}},
		{"all inside", []float64{2, 2, 2}, 0, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			err := checkValues(tc.x, "f", "values above 0", positive)
			if tc.count == 0 {
				if err != nil {
					t.Fatalf("got %v, want no error", err)
				}
				return
			}
			e, ok := err.(*SupportError)
			if !ok {
				t.Fatalf("got %v, want a *SupportError", err)
			}
			if e.Count != tc.count || !slices.Equal(e.Values, tc.values) {
				t.Errorf("count %d values %v, want %d %v", e.Count, e.Values, tc.count, tc.values)
			}
		})
	}
}

// TestEachRun: eachRun hands over each run of bit-identical consecutive
// values once, with its length, in order.
func TestEachRun(t *testing.T) {
	negZero := math.Copysign(0, -1)
	tests := []struct {
		name   string
		x      []float64
		values []float64
		counts []int
	}{
		{"empty", nil, nil, nil},
		{"runs", []float64{1, 1, 2, 3, 3, 3}, []float64{1, 2, 3}, []int{2, 1, 3}},
		{"unsorted", []float64{2, 1, 1, 2}, []float64{2, 1, 2}, []int{1, 2, 1}},
		{"signed zeros", []float64{negZero, negZero, 0}, []float64{negZero, 0}, []int{2, 1}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var values []float64
			var counts []int
			eachRun(tc.x, func(v float64, c int) {
				values, counts = append(values, v), append(counts, c)
			})
			if !slices.Equal(values, tc.values) || !slices.Equal(counts, tc.counts) {
				t.Errorf("runs %v x %v, want %v x %v", values, counts, tc.values, tc.counts)
			}
			for i, v := range values {
				if math.Signbit(v) != math.Signbit(tc.values[i]) {
					t.Errorf("run %d is %v, want %v", i, v, tc.values[i])
				}
			}
		})
	}
}
