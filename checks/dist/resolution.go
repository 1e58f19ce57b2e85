package dist

import "math"

// Resolution returns the recording resolution of a sample: the largest h
// of the form 10^k, 2·10^k or 5·10^k (k from 15 down to −15) such that
// every value is a whole multiple of h, within a tolerance of 1e-6·h for
// the binary representation of decimals (0.07 is stored as
// 0.0700000000000000067). It reports false when no such h exists: a value
// is not finite, all values are 0, or the values carry more than about
// nine significant digits relative to the candidate step, where binary
// rounding could no longer be told from a real digit (|x/h| above 1e9).
//
// For example 20.25, 19.5 and 21.75 give 0.05 (0.25 is not a candidate);
// temperatures logged to 0.01 give 0.01, or 0.02 or 0.05 if every value
// happens to be a multiple of those; counts give 1, or a larger step when
// all of them end in zeros.
func Resolution(sample []float64) (float64, bool) {
	nonzero := false
	for _, x := range sample {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, false
		}
		if x != 0 {
			nonzero = true
		}
	}
	if !nonzero {
		return 0, false
	}
	for k := 15; k >= -15; k-- {
		for _, m := range [...]float64{5, 2, 1} {
			h := m * math.Pow10(k)
			if k < 0 {
				// m / 10^−k is correctly rounded: 0.05 is the double
				// nearest 0.05, which 5 * 0.01 need not be.
				h = m / math.Pow10(-k)
			}
			if multiples(sample, h) {
				return h, true
			}
		}
	}
	return 0, false
}

// multiples reports whether every value is a whole multiple of h within
// 1e-6·h, with |x/h| at most 1e9, and no value other than 0 is 0·h.
func multiples(sample []float64, h float64) bool {
	for _, x := range sample {
		q := x / h
		k := math.Round(q)
		if math.Abs(q) > 1e9 || math.Abs(q-k) > 1e-6 || (k == 0 && x != 0) {
			return false
		}
	}
	return true
}
