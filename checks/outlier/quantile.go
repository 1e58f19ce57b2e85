package outlier

import (
	"fmt"
	"math"

	"github.com/assay-project/assay/checks/internal/order"
)

// Quantile7 returns the p-quantile, 0 <= p <= 1, of values sorted in
// ascending order, by definition 7 of Hyndman & Fan (1996), the default of R
// and NumPy: with h = 1 + (n−1)p, j = floor(h) and g = h − j,
//
//	Q(p) = (1−g) x_(j) + g x_(j+1)    (1-based order statistics)
//
// and x_(j) alone when g = 0 or x_(j) = x_(j+1). The arithmetic is the one
// R's quantile.default does, so the two agree to the last bit. It returns NaN
// for no values or p outside [0, 1]; for unsorted input the result is
// meaningless.
func Quantile7(sorted []float64, p float64) float64 { return order.Quantile7(sorted, p) }

// checkSorted reports the first value of x that is not finite or is smaller
// than the one before it.
func checkSorted(x []float64) error {
	if len(x) == 0 {
		return fmt.Errorf("no values")
	}
	for i, v := range x {
		if err := checkFinite(v, i); err != nil {
			return err
		}
		if i > 0 && v < x[i-1] {
			return fmt.Errorf("value %d (%v) is smaller than value %d (%v): sort the values first", i+1, v, i, x[i-1])
		}
	}
	return nil
}

// checkAll reports the first value of x that is not finite.
func checkAll(x []float64) error {
	for i, v := range x {
		if err := checkFinite(v, i); err != nil {
			return err
		}
	}
	return nil
}

func checkFinite(v float64, i int) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("value %d is %v: drop missing and infinite values first", i+1, v)
	}
	return nil
}
