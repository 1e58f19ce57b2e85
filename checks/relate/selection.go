package relate

import (
	"slices"

	"github.com/assay-project/assay/checks/internal/order"
)

// medianInPlace returns the median of a (the mean of the two middle values
// for even length), reordering a. a must not be empty.
func medianInPlace(a []float64) float64 {
	h := len(a) / 2
	upper := order.Select(a, h)
	if len(a)%2 == 1 {
		return upper
	}
	lower := slices.Max(a[:h])
	return (lower + upper) / 2
}
