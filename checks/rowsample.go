package checks

import (
	"cmp"
	"slices"

	"github.com/assay-project/assay/checks/bottomk"
)

// keyOrderColumns returns the rows of a sample as P columns, in the order
// of their sampling keys (no two rows share one), so that what is computed
// from them does not depend on the order the rows came in, and a robust
// estimate that draws subsets by position does not see the rows in data
// order.
func keyOrderColumns(s *bottomk.Sample) [][]float64 {
	keys := s.Keys()
	n := len(keys)
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return cmp.Compare(keys[a], keys[b]) })
	cols := make([][]float64, s.P())
	for j := range cols {
		cols[j] = make([]float64, n)
	}
	for i, k := range order {
		for j, v := range s.Row(k) {
			cols[j][i] = v
		}
	}
	return cols
}
