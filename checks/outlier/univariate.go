package outlier

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"sort"
)

// Cutoffs in common use.
const (
	// DefaultTukeyK is Tukey's (1977) k for the inner fences ("outside"
	// values); k = 3 gives his outer fences ("far out").
	DefaultTukeyK = 1.5
	// DefaultZCutoff flags |z| > 3: common practice, no single source.
	DefaultZCutoff = 3.0
	// DefaultRobustZCutoff flags |M| > 3.5, the value Iglewicz & Hoaglin
	// (1993, section 3.3) recommend for the modified z-score.
	DefaultRobustZCutoff = 3.5
)

// Extreme is a value flagged by a Rule or a test.
type Extreme struct {
	Index int     // position in the input slice, 0-based
	Value float64 // the value itself
	Score float64 // how far out, in the rule's own unit; larger is further
}

// Rule flags single values against thresholds fitted on a whole column.
// Fences, ZScore, RobustZ and Tail are rules.
type Rule interface {
	// Outside reports whether x is flagged.
	Outside(x float64) bool
	// Score says how far out x is; larger is further.
	Score(x float64) float64
}

// Scan returns the values of x that r flags, largest score first, ties in
// input order. NaN values (missing) are never flagged.
func Scan(x []float64, r Rule) []Extreme {
	var out []Extreme
	for i, v := range x {
		if v == v && r.Outside(v) {
			out = append(out, Extreme{Index: i, Value: v, Score: r.Score(v)})
		}
	}
	sortExtremes(out)
	return out
}

func sortExtremes(e []Extreme) {
	slices.SortStableFunc(e, func(a, b Extreme) int { return cmp.Compare(b.Score, a.Score) })
}

// Fences are Tukey's (1977) fences [Q1 − k·IQR, Q3 + k·IQR], IQR = Q3 − Q1,
// with the quartiles by definition 7 of Hyndman & Fan (1996) (Quantile7).
// A value strictly beyond a fence is outside.
type Fences struct {
	Q1, Q3       float64
	K            float64
	Lower, Upper float64
}

// TukeyFences fits the fences to values sorted in ascending order. k must
// be finite and non-negative (DefaultTukeyK is Tukey's 1.5).
func TukeyFences(sorted []float64, k float64) (Fences, error) {
	if !(k >= 0) || math.IsInf(k, 0) {
		return Fences{}, fmt.Errorf("tukey fences: k is %v, want a finite number >= 0", k)
	}
	if err := checkSorted(sorted); err != nil {
		return Fences{}, fmt.Errorf("tukey fences: %w", err)
	}
	return NewFences(Quantile7(sorted, 0.25), Quantile7(sorted, 0.75), k), nil
}

// NewFences are the fences of k around quartiles q1 <= q3 found by any
// means (by selection, without sorting, say); k is not checked: it must
// be finite and non-negative, as in TukeyFences.
func NewFences(q1, q3, k float64) Fences {
	iqr := q3 - q1
	return Fences{Q1: q1, Q3: q3, K: k, Lower: q1 - k*iqr, Upper: q3 + k*iqr}
}

// IQR is the interquartile range Q3 − Q1.
func (f Fences) IQR() float64 { return f.Q3 - f.Q1 }

// Outside reports whether x < Lower or x > Upper.
func (f Fences) Outside(x float64) bool { return x < f.Lower || x > f.Upper }

// Score is the distance beyond the nearer fence in IQR units: (Lower − x)/IQR
// below, (x − Upper)/IQR above, 0 between the fences. With IQR = 0 every
// value off the quartiles scores +Inf.
func (f Fences) Score(x float64) float64 {
	beyond := max(f.Lower-x, x-f.Upper)
	if !(beyond > 0) {
		return 0
	}
	return beyond / f.IQR()
}

// ZScore is the classical rule |z| > Cutoff, z = (x − Mean)/SD, SD the
// sample standard deviation (divisor n − 1). Mean and SD may come from
// anywhere, e.g. CoMoments over the one column streamed in batches:
// Mean[0] and sqrt(C[0]/(N − 1)).
type ZScore struct {
	Mean, SD, Cutoff float64
}

// NewZScore fits the mean and sample sd of x (two passes) for the given
// cutoff (DefaultZCutoff is common practice). x needs two or more values.
// When all values are equal, Mean is that value and SD is 0.
func NewZScore(x []float64, cutoff float64) (ZScore, error) {
	if err := checkCutoff(cutoff); err != nil {
		return ZScore{}, fmt.Errorf("z-score: %w", err)
	}
	if len(x) < 2 {
		return ZScore{}, fmt.Errorf("z-score: %d values, need at least 2 for a standard deviation", len(x))
	}
	if err := checkAll(x); err != nil {
		return ZScore{}, fmt.Errorf("z-score: %w", err)
	}
	if lo, hi := slices.Min(x), slices.Max(x); lo == hi {
		return ZScore{Mean: lo, Cutoff: cutoff}, nil
	}
	mean, ss := meanSS(x)
	return ZScore{Mean: mean, SD: math.Sqrt(ss / float64(len(x)-1)), Cutoff: cutoff}, nil
}

// meanSS returns the mean of x and the sum of squared deviations from it,
// by two passes with the first pass's rounding error corrected (the
// "corrected two-pass algorithm" of Chan, Golub & LeVeque 1983).
func meanSS(x []float64) (mean, ss float64) {
	var s float64
	for _, v := range x {
		s += v
	}
	mean = s / float64(len(x))
	var c float64
	for _, v := range x {
		d := v - mean
		c += d
		ss += d * d
	}
	n := float64(len(x))
	mean += c / n
	ss -= c * c / n
	return mean, ss
}

// Z is (x − Mean)/SD; with SD = 0 it is 0 at the mean and ±Inf elsewhere.
func (z ZScore) Z(x float64) float64 {
	d := x - z.Mean
	if d == 0 {
		return 0
	}
	return d / z.SD
}

// Outside reports whether |Z(x)| > Cutoff.
func (z ZScore) Outside(x float64) bool { return math.Abs(z.Z(x)) > z.Cutoff }

// Score is |Z(x)|.
func (z ZScore) Score(x float64) float64 { return math.Abs(z.Z(x)) }

// RobustZ is the modified z-score of Iglewicz & Hoaglin (1993, section
// 3.3): M = 0.6745 (x − Median)/MAD with MAD = median |x_i − Median|
// (unscaled), flagging |M| > Cutoff. 0.6745 is their rounding of
// Φ⁻¹(3/4) = 0.67449, which makes M comparable with a z-score under the
// normal; they recommend the cutoff 3.5 (DefaultRobustZCutoff).
type RobustZ struct {
	Median, MAD, Cutoff float64
}

// modZConst is Iglewicz & Hoaglin's constant, as they print it.
const modZConst = 0.6745

// NewRobustZ fits the median and MAD (both by Quantile7 at 1/2, so equal to
// R's median and mad(constant = 1)) of values sorted in ascending order.
func NewRobustZ(sorted []float64, cutoff float64) (RobustZ, error) {
	if err := checkCutoff(cutoff); err != nil {
		return RobustZ{}, fmt.Errorf("robust z: %w", err)
	}
	if err := checkSorted(sorted); err != nil {
		return RobustZ{}, fmt.Errorf("robust z: %w", err)
	}
	med := Quantile7(sorted, 0.5)
	return RobustZ{Median: med, MAD: sortedMAD(sorted, med), Cutoff: cutoff}, nil
}

// sortedMAD returns the median of |x_i − med| for sorted x without sorting
// the deviations: they are two sorted runs (going down from med and going
// up from it), merged here only as far as the middle.
func sortedMAD(x []float64, med float64) float64 {
	n := len(x)
	h := 1 + float64(n-1)*0.5
	j := int(h) // 1-based rank of the lower middle deviation
	frac := h - float64(j)
	r := sort.SearchFloat64s(x, med) // first index with x[r] >= med
	l := r - 1
	next := func() float64 {
		if l >= 0 && (r >= n || med-x[l] <= x[r]-med) {
			l--
			return med - x[l+1]
		}
		r++
		return x[r-1] - med
	}
	var lo float64
	for range j {
		lo = next()
	}
	if frac == 0 {
		return lo
	}
	hi := next()
	if hi == lo {
		return lo
	}
	return (1-frac)*lo + frac*hi
}

// M is the modified z-score 0.6745 (x − Median)/MAD; with MAD = 0 it is 0 at
// the median and ±Inf elsewhere.
func (r RobustZ) M(x float64) float64 {
	d := x - r.Median
	if d == 0 {
		return 0
	}
	return modZConst * d / r.MAD
}

// Outside reports whether |M(x)| > Cutoff.
func (r RobustZ) Outside(x float64) bool { return math.Abs(r.M(x)) > r.Cutoff }

// Score is |M(x)|.
func (r RobustZ) Score(x float64) float64 { return math.Abs(r.M(x)) }

func checkCutoff(c float64) error {
	if !(c > 0) || math.IsInf(c, 0) {
		return fmt.Errorf("cutoff is %v, want a finite number > 0", c)
	}
	return nil
}
