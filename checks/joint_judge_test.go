package checks

import (
	"math"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/assay-project/assay/checks/outlier"
)

// TestJointJudgeRows: the second pass of a joint rule judges the rows with
// a finite value in every column, and computes their distances, the same
// whether it finds them from every row's distance (jointRows.judge with
// distances, the path a Scatter from NewScatter takes) or value by value
// (without), with nulls, NaN, infinities and finite values so large that
// the distance overflows to +Inf (judged, and flagged).
func TestJointJudgeRows(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	const n = 24
	clean := func(k int) []any {
		return mapSlice(seq(0, n-1), func(i int) any { return float64((i*(k+3))%7) - 3 + 0.25*float64(k) })
	}
	s, err := outlier.NewScatter([]float64{0, 0.25, 0.5}, mat.NewSymDense(3, []float64{4, 1, 0, 1, 3, 0.5, 0, 0.5, 2}))
	if err != nil {
		t.Fatal(err)
	}
	if !s.ShowsNonFinite() {
		t.Fatal("the scatter's distances do not show non-finite values: Observe would not take the path from every row's distance")
	}
	for _, tc := range []struct {
		name    string
		x, y, z []any
	}{
		{"clean", clean(0), clean(1), clean(2)},
		{"nulls", withValues(clean(0), map[int]any{2: nil, 9: nil}), clean(1), withValues(clean(2), map[int]any{9: nil, 23: nil})},
		{"non-finite", withValues(clean(0), map[int]any{0: nan}), withValues(clean(1), map[int]any{5: inf, 6: -inf}), withValues(clean(2), map[int]any{7: nan})},
		{"overflow", withValues(clean(0), map[int]any{3: 1e300, 4: -1e300}), clean(1), withValues(clean(2), map[int]any{4: 1e300})},
		{"everything", withValues(clean(0), map[int]any{1: nil, 3: 1e300, 8: inf}), withValues(clean(1), map[int]any{1: nan, 11: nil}), withValues(clean(2), map[int]any{12: -inf, 13: 1e300})},
		{"none judged", withValues(clean(0), map[int]any{0: nil}), slices.Repeat([]any{nan}, n), clean(2)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			mem := checkedMem(t)
			b := newBatch(t, mem, 1, col{"x", tFloat, tc.x}, col{"y", tFloat, tc.y}, col{"z", tFloat, tc.z})
			release(t, b)
			c := compile(t, newRule(jointSpec(false), atMost(1), "x", "y", "z"), envOf(b, 100)).(*jointCheck)
			var want []int
			var wantD2 []float64
			var flagged int64
			for i := range n {
				row := make([]float64, 3)
				ok := true
				for k, vals := range [][]any{tc.x, tc.y, tc.z} {
					v, isNum := vals[i].(float64)
					ok = ok && isNum && !math.IsNaN(v) && !math.IsInf(v, 0)
					row[k] = v
				}
				if ok {
					d := s.Dist2(row)
					want, wantD2 = append(want, i), append(wantD2, d)
					if d > c.cutoff {
						flagged++
					}
				}
			}
			l := &jointJudge{check: c, found: &jointFinding{scatter: &s}, listing: Offenders{Limit: 100}}
			if err := l.Observe(b); err != nil {
				t.Fatal(err)
			}
			var got []int
			for k := range l.rows.Judged {
				got = append(got, l.rows.row(k))
			}
			if !slices.Equal(got, want) {
				t.Fatalf("judged rows %v, want %v", got, want)
			}
			if l.listing.Count != flagged {
				t.Errorf("%d rows flagged, want %d", l.listing.Count, flagged)
			}
			if len(want) > 0 {
				if d := l.distances(&s, l.all); !slices.Equal(d, wantD2) {
					t.Errorf("distances from every row's %v, want %v", d, wantD2)
				}
			}
			// Value by value, without distances: the same rows, and the
			// distances computed for them alone.
			nulls := slices.ContainsFunc(l.rows.valid, func(v valid) bool { return v.bits != nil })
			l.rows.judge(nulls, nil)
			got = got[:0]
			for k := range l.rows.Judged {
				got = append(got, l.rows.row(k))
			}
			if !slices.Equal(got, want) {
				t.Errorf("judged value by value: rows %v, want %v", got, want)
			}
			if len(want) > 0 {
				if d := l.distances(&s, nil); !slices.Equal(d, wantD2) {
					t.Errorf("distances of the judged rows %v, want %v", d, wantD2)
				}
			}
		})
	}
}

// TestRunEnd: the end of each run of consecutive places, against a scan,
// for runs of every length up to 70 (across the galloping steps) and
// places with gaps of one and more.
func TestRunEnd(t *testing.T) {
	for _, tc := range []struct {
		name string
		rows []int
	}{
		{"one", []int{4}},
		{"two apart", []int{0, 2}},
		{"gaps", []int{0, 1, 2, 4, 5, 9, 10, 11, 12, 13, 20}},
		{"long then short", append(seq(3, 70), 72, 73, 75)},
	} {
		for lo := range tc.rows {
			want := lo + 1
			for want < len(tc.rows) && tc.rows[want] == tc.rows[want-1]+1 {
				want++
			}
			if got := runEnd(tc.rows, lo); got != want {
				t.Errorf("%s: runEnd(%v, %d) = %d, want %d", tc.name, tc.rows, lo, got, want)
			}
		}
	}
	for n := 1; n <= 70; n++ {
		rows := append(seq(10, 10+n-1), 10+n+1)
		if got := runEnd(rows, 0); got != n {
			t.Errorf("a run of %d then a gap: runEnd = %d", n, got)
		}
		if got := runEnd(rows[:n], 0); got != n {
			t.Errorf("a run of %d to the end: runEnd = %d", n, got)
		}
	}
}

// withValues returns a copy of vals with vals[i] = v for every i, v in at.
func withValues(vals []any, at map[int]any) []any {
	out := slices.Clone(vals)
	for i, v := range at {
		out[i] = v
	}
	return out
}

// mapSlice returns f of every element of xs.
func mapSlice[T, U any](xs []T, f func(T) U) []U {
	out := make([]U, len(xs))
	for i, x := range xs {
		out[i] = f(x)
	}
	return out
}
