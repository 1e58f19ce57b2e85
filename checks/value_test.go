package checks

import (
	"fmt"
	"regexp"
	"testing"
	"unsafe"
)

// TestVerdictsMemo: the memo gives the verdict judge gives, calls judge
// once per distinct value while it has room, and stops being consulted
// when a column has too many distinct values for it to pay.
func TestVerdictsMemo(t *testing.T) {
	re := regexp.MustCompile("^D-[0-9]{4}$")
	tests := []struct {
		name     string
		values   func(i int) string
		n        int
		calls    int // calls of judge
		off      bool
		distinct int // values kept in the memo at the end
	}{
		{"few distinct values", func(i int) string { return fmt.Sprintf("D-%04d", i%37) }, 10000, 37, false, 37},
		{"a planted bad value among few", func(i int) string {
			if i%100 == 7 {
				return "D-??"
			}
			return fmt.Sprintf("D-%04d", i%500)
		}, 20000, 496, false, 496}, // 500 codes less the 5 the bad value stands in for, plus it
		{"as many distinct values as fit, each repeated at once", func(i int) string { return fmt.Sprint(i / 2 % memoMax) }, 6 * memoMax, memoMax, false, memoMax},
		{"all distinct: stops at the probe", func(i int) string { return fmt.Sprint(i) }, 3 * memoProbe, 3 * memoProbe, true, 0},
		{"repeats at the probe, then all new: the memo fills, then stops", func(i int) string {
			if i < 2*memoProbe {
				return fmt.Sprint(i / 2)
			}
			return fmt.Sprint(i)
		}, memoMax + memoTrial + 3*memoProbe, memoMax + memoTrial + 2*memoProbe, true, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var m verdicts
			calls := 0
			judge := func(s string) verdict {
				calls++
				return verdict{breaks: !re.MatchString(s), score: float64(len(s))}
			}
			for i := range tc.n {
				s := tc.values(i)
				got, want := m.judge(s, judge), verdict{breaks: !re.MatchString(s), score: float64(len(s))}
				if got != want {
					t.Fatalf("value %q: verdict %+v, want %+v", s, got, want)
				}
			}
			if calls != tc.calls || m.off != tc.off || len(m.seen) != tc.distinct {
				t.Errorf("judge called %d times, off %v, %d kept; want %d, %v, %d", calls, m.off, len(m.seen), tc.calls, tc.off, tc.distinct)
			}
		})
	}
}

// TestVerdictsMemoCopiesKeys: a remembered value does not point into the
// buffer it came from (a batch's, released and reused after the batch).
func TestVerdictsMemoCopiesKeys(t *testing.T) {
	var m verdicts
	buf := []byte("D-0001")
	judge := func(s string) verdict { return verdict{breaks: s != "D-0001", score: 1} }
	m.judge(unsafe.String(&buf[0], len(buf)), judge) // as Arrow's Value gives it
	copy(buf, "X-9999")
	if v, ok := m.seen["D-0001"]; !ok || v.breaks || len(m.seen) != 1 {
		t.Errorf("memo after the buffer changed: %+v", m.seen)
	}
}
