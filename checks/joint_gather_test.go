package checks

import (
	"fmt"
	"testing"
)

// TestJointGather: gather writes the judged rows' values one row after
// the other for every number of columns (three has a loop of its own),
// whether every row is judged or some are.
func TestJointGather(t *testing.T) {
	const n = 11
	for _, p := range []int{2, 3, 4} {
		cols := make([][]float64, p)
		for c := range cols {
			for i := range n {
				cols[c] = append(cols[c], float64(100*c+i))
			}
		}
		for _, tc := range []struct {
			name string
			rows []int // nil: every row judged
		}{
			{"all", nil},
			{"some", []int{0, 2, 3, 9, 10}},
			{"one", []int{5}},
			{"none", []int{}},
		} {
			j := jointRows{cols: cols, All: tc.rows == nil, Rows: tc.rows, N: n, Judged: len(tc.rows)}
			judged := tc.rows
			if tc.rows == nil {
				j.Judged = n
				for i := range n {
					judged = append(judged, i)
				}
			}
			var want []float64
			for _, i := range judged {
				for c := range p {
					want = append(want, cols[c][i])
				}
			}
			got := j.gather()
			if fmt.Sprint(got) != fmt.Sprint(want) {
				t.Errorf("%d columns, %s rows: gather = %v, want %v", p, tc.name, got, want)
			}
		}
	}
}
