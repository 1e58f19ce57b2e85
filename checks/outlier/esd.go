package outlier

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// ESDStep is one step of the generalized ESD test: the value removed and
// the statistic and critical value of the sample it was removed from.
type ESDStep struct {
	Index  int     // position in the input of the value removed, 0-based
	Value  float64 // the value removed
	R      float64 // R_i = max |x − mean| / s over the values left
	Lambda float64 // λ_i, the critical value
}

// ESD is the result of the generalized ESD test: one step per candidate
// and the number of outliers, the largest i with R_i > λ_i. The values of
// Steps[:Outliers] are the outliers.
type ESD struct {
	Steps    []ESDStep
	Alpha    float64
	Outliers int
}

// Extremes returns the outliers, in the order removed, scored by their R_i.
func (e ESD) Extremes() []Extreme {
	out := make([]Extreme, e.Outliers)
	for i, s := range e.Steps[:e.Outliers] {
		out[i] = Extreme{Index: s.Index, Value: s.Value, Score: s.R}
	}
	return out
}

// GeneralizedESD runs Rosner's (1983) generalized extreme Studentized
// deviate test for up to maxOutliers outliers in a sample from a normal
// distribution, at level alpha. For i = 1 .. r it takes the n − i + 1
// values left, with mean x̄ and sample sd s (divisor n − i), and computes
//
//	R_i = max |x_j − x̄| / s
//	λ_i = (n − i) t / sqrt((n − i − 1 + t²)(n − i + 1)),
//	t = t_{p, n−i−1},  p = 1 − α / (2(n − i + 1)),
//
// with t_{p,ν} the p-quantile of Student's t with ν degrees of freedom,
// then removes the value that attains R_i. The number of outliers is the
// largest i with R_i > λ_i (every i is examined, not only up to the first
// non-rejection). This is the procedure of the NIST/SEMATECH e-Handbook,
// section 1.3.5.17.3, and reproduces its worked example. When the largest
// deviations below and above the mean are equal the larger value is
// removed; among equal values the choice is fixed by position, so the
// result repeats. A sample whose
// remaining values are all equal has R_i = 0.
//
// It needs 1 <= maxOutliers <= n − 2 and 0 < alpha < 1, and costs
// O(n log n + r n).
func GeneralizedESD(x []float64, maxOutliers int, alpha float64) (ESD, error) {
	n := len(x)
	if maxOutliers < 1 || maxOutliers > n-2 {
		return ESD{}, fmt.Errorf("generalized esd: %d values allow 1 to %d outliers, got %d", n, n-2, maxOutliers)
	}
	if !(alpha > 0 && alpha < 1) {
		return ESD{}, fmt.Errorf("generalized esd: alpha is %v, want 0 < alpha < 1", alpha)
	}
	if err := checkAll(x); err != nil {
		return ESD{}, fmt.Errorf("generalized esd: %w", err)
	}
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(x[a], x[b]) })
	lo, hi := 0, n-1 // the values left are x[order[lo..hi]]
	res := ESD{Steps: make([]ESDStep, maxOutliers), Alpha: alpha}
	for i := 1; i <= maxOutliers; i++ {
		left := hi - lo + 1 // n − i + 1
		var s1 float64
		for _, k := range order[lo : hi+1] {
			s1 += x[k]
		}
		mean := s1 / float64(left)
		var ss float64
		for _, k := range order[lo : hi+1] {
			d := x[k] - mean
			ss += d * d
		}
		sd := math.Sqrt(ss / float64(left-1))
		dLo, dHi := mean-x[order[lo]], x[order[hi]]-mean
		var pick int
		var dev float64
		if dHi >= dLo {
			pick, dev = order[hi], dHi
			hi--
		} else {
			pick, dev = order[lo], dLo
			lo++
		}
		var r float64
		if sd > 0 {
			r = dev / sd
		}
		nu := float64(left - 2)
		t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Quantile(1 - alpha/(2*float64(left)))
		lambda := float64(left-1) * t / math.Sqrt((nu+t*t)*float64(left))
		res.Steps[i-1] = ESDStep{Index: pick, Value: x[pick], R: r, Lambda: lambda}
		if r > lambda {
			res.Outliers = i
		}
	}
	return res, nil
}
