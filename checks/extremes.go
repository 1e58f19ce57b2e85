package checks

import (
	"fmt"
	"math"
	"slices"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/checks/outlier"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// extremesCheck finds the extreme values of one numeric column with a
// method of package outlier, fitted on the whole column, and lists the
// rows holding them. The measure is the share of the values judged (the
// non-null values other than NaN) that are extreme.
//
// First pass. zscore streams the count, mean and sum of squared
// deviations of the finite values (outlier.CoMoments over one column: each
// batch is summarised by two passes and merged, as accumulators are, by
// the pairwise update of Chan, Golub & LeVeque 1979, in the form of Pébay
// 2008), and the least and greatest value; it keeps no values. Every other
// method needs the whole column: exact quartiles, median and MAD are order
// statistics, the tests remove values one at a time, and the tail method
// fits a family by maximum likelihood. They keep every finite value, 8
// bytes each (esd and grubbs also keep its row number, 8 bytes more, to
// name the rows their tests flag), in one slice per batch (order.Chunks),
// which Merge moves rather than copies. Nothing is sampled: the thresholds
// are exact.
//
// Finish. The method is fitted: Tukey's fences (outlier.NewFences,
// quartiles by R's type 7), mean ± k sd (outlier.ZScore), the modified
// z-score (outlier.RobustZ, Iglewicz & Hoaglin 1993), Rosner's generalized
// ESD test (outlier.GeneralizedESD), Grubbs' two-sided test
// (outlier.Grubbs), or the tail rule on the column's distribution
// (outlier.Tail: the distribution rule's family, with its given
// parameters, the others fitted to the values it can produce; the best of
// several candidates by AIC then BIC, as that rule ranks them). ±Inf
// values are beyond every threshold: they are judged extreme and do not
// enter the fit. Every method but zscore counts its extreme values
// exactly here; zscore counts them in the second pass, unless its least
// and greatest values are both within the cutoff.
//
// Second pass. When some value is extreme, the rows holding extreme
// values are listed, worst first by the method's score: the distance
// beyond the nearer fence in IQRs (tukey), |z| (zscore), the modified
// z-score |M| (robust-z), the R_i of the step that removed the value
// (esd), G (grubbs), the normal deviate of the tail probability (tail).
type extremesCheck struct {
	rule     *rules.Rule
	env      *Env
	col      column
	spec     rules.ExtremesSpec
	families []dist.Family // tail: the candidates, with their given parameters
}

// Bounds of an extremes result's plot data.
const (
	minHistBins = 5
	maxHistBins = 50
)

func newExtremesCheck(r *rules.Rule, s rules.ExtremesSpec, env *Env) (Check, error) {
	col, err := bindColumnOf(r, env, "extremes", classInteger, classNumber)
	if err != nil {
		return nil, err
	}
	c := &extremesCheck{rule: r, env: env, col: col, spec: s}
	switch s.Method {
	case rules.ExtremesTukey, rules.ExtremesZScore, rules.ExtremesRobustZ:
		if !(s.K > 0) || math.IsInf(s.K, 0) {
			return nil, fmt.Errorf("%s: k is %v, want a finite number above 0", s.Method, s.K)
		}
	case rules.ExtremesESD, rules.ExtremesGrubbs, rules.ExtremesTail:
		if !(s.Alpha > 0 && s.Alpha < 1) {
			return nil, fmt.Errorf("%s: alpha is %v, want 0 < alpha < 1", s.Method, s.Alpha)
		}
	default:
		return nil, fmt.Errorf("unknown extremes method %q", s.Method)
	}
	if s.Method == rules.ExtremesESD && s.MaxOutliers < 1 {
		return nil, fmt.Errorf("esd: max_outliers is %d, want at least 1", s.MaxOutliers)
	}
	if s.Method == rules.ExtremesTail {
		if c.families, err = tailFamilies(s.Distribution); err != nil {
			return nil, fmt.Errorf("tail: %w", err)
		}
	}
	return c, nil
}

// tailFamilies are the candidate families of the tail method: those of the
// column's distribution rule, with its given parameters.
func tailFamilies(d rules.DistributionSpec) ([]dist.Family, error) {
	if len(d.Families) == 0 {
		return nil, fmt.Errorf("the column declares no distribution")
	}
	var out []dist.Family
	for _, name := range d.Families {
		f, err := dist.Lookup(name)
		if err != nil {
			return nil, err
		}
		if f.Kind() == dist.Categorical || f.Digits() > 0 {
			return nil, fmt.Errorf("%s is not a family of values", name)
		}
		if f, err = f.Fix(d.Parameters); err != nil {
			return nil, err
		}
		out = append(out, f)
	}
	return out, nil
}

func (c *extremesCheck) Rule() *rules.Rule { return c.rule }

func (c *extremesCheck) streams() bool { return c.spec.Method == rules.ExtremesZScore }

// tallies reports whether the method fits order statistics only, so that
// the values can be kept as distinct values and counts (order.Tally).
func (c *extremesCheck) tallies() bool {
	return c.spec.Method == rules.ExtremesTukey || c.spec.Method == rules.ExtremesRobustZ
}

// keepsRows reports whether the method flags values by their position,
// so that the rows of the values must be kept.
func (c *extremesCheck) keepsRows() bool {
	return c.spec.Method == rules.ExtremesESD || c.spec.Method == rules.ExtremesGrubbs
}

func (c *extremesCheck) NewAccumulator() Accumulator {
	a := &ExtremesAccumulator{check: c}
	a.Min, a.Max = math.Inf(1), math.Inf(-1)
	if c.streams() {
		a.Moments = outlier.NewCoMoments(1)
	}
	return a
}

// ExtremesState is the first-pass state of an extremes rule.
type ExtremesState struct {
	NaN            int64   // NaN values: not judged
	NegInf, PosInf int64   // -Inf and +Inf values: extreme whatever the method
	Min, Max       float64 // least and greatest finite value (±Inf before the first)
	// Moments are the count, mean and sum of squared deviations of the
	// finite values (zscore only).
	Moments *outlier.CoMoments
	// Tally holds the finite values as distinct values and counts while
	// they are few, else the values (tukey and robust-z, whose fences are
	// order statistics).
	Tally order.Tally[float64]
	// Values are the finite values, in no particular order (esd, grubbs
	// and tail); Rows the data-row number of each (esd and grubbs), in
	// the same order and the same parts.
	Values order.Chunks[float64]
	Rows   order.Chunks[int64]
}

// finite is the number of finite values seen.
func (s *ExtremesState) finite() int64 {
	if s.Moments != nil {
		return int64(s.Moments.N)
	}
	return int64(s.Values.Len()) + s.Tally.Len()
}

// ExtremesAccumulator is the first pass of an extremes rule.
type ExtremesAccumulator struct {
	ExtremesState
	check   *extremesCheck
	scratch scratch
	vals    []float64 // zscore, tukey, robust-z: the batch's finite values
	found   *extFinding
}

// Observe adds the batch's values: counted, and kept or summarised. When
// the batch's values are all finite, as most batches' are, they go to the
// moments or the tally as they are (with nulls, gathered first), after
// one loop that finds their extent; the values of other batches, and of
// methods that keep rows, are sorted one by one.
func (a *ExtremesAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	xs := numbers(arr, &a.scratch)
	if !a.check.keepsRows() {
		vals := xs
		if arr.NullN() > 0 {
			vals = appendValid(a.vals[:0], xs, validOf(arr))
			a.vals = vals
		}
		if lo, hi, ok := finiteExtent(vals); ok {
			a.Min, a.Max = min(a.Min, lo), max(a.Max, hi)
			if folded, err := a.fold(vals); folded || err != nil {
				return err
			}
			a.Values.Add(slices.Clone(vals)) // kept: a part of its own
			return nil
		}
	}
	var (
		finite = a.vals[:0]
		rows   []int64
		values = arr.Len() - arr.NullN()
	)
	if !a.check.tallies() && a.Moments == nil {
		finite = make([]float64, 0, values) // kept: a part of its own
	}
	if a.check.keepsRows() {
		rows = make([]int64, 0, values)
	}
	v := validOf(arr)
	lo, hi := a.Min, a.Max
	for i, x := range xs {
		switch {
		case !v.at(i):
			continue
		case math.IsNaN(x):
			a.NaN++
			continue
		case math.IsInf(x, -1):
			a.NegInf++
			continue
		case math.IsInf(x, 1):
			a.PosInf++
			continue
		}
		lo, hi = min(lo, x), max(hi, x)
		finite = append(finite, x)
		if rows != nil {
			rows = append(rows, b.Row(i))
		}
	}
	a.Min, a.Max = lo, hi
	if folded, err := a.fold(finite); folded || err != nil {
		a.vals = finite
		return err
	}
	a.Values.Add(finite)
	a.Rows.Add(rows) // the same length and capacity: kept or copied alike
	return nil
}

// fold adds finite values, which the caller keeps, to the moments
// (zscore) or the tally (tukey and robust-z); false when the method keeps
// the values themselves.
func (a *ExtremesAccumulator) fold(xs []float64) (bool, error) {
	switch {
	case a.Moments != nil:
		return true, a.Moments.AddColumns([][]float64{xs})
	case a.check.tallies():
		a.Tally.Add(xs)
		return true, nil
	}
	return false, nil
}

// appendValid appends the values of xs that v says are valid to dst, in
// order; eight values whose validity bits fill a byte of the bitmap are
// appended at once.
func appendValid(dst, xs []float64, v valid) []float64 {
	if v.bits == nil {
		return append(dst, xs...)
	}
	i := 0
	for ; i < len(xs) && (v.offset+i)%8 != 0; i++ {
		if v.at(i) {
			dst = append(dst, xs[i])
		}
	}
	for ; i+8 <= len(xs); i += 8 {
		switch bits := v.bits[(v.offset+i)/8]; bits {
		case 0xff:
			dst = append(dst, xs[i:i+8]...)
		case 0:
		default:
			for k, x := range xs[i : i+8] {
				if bits>>k&1 != 0 {
					dst = append(dst, x)
				}
			}
		}
	}
	for ; i < len(xs); i++ {
		if v.at(i) {
			dst = append(dst, xs[i])
		}
	}
	return dst
}

// finiteExtent returns the least and greatest of xs (+Inf and -Inf when
// there are none), as boundsOf finds them (-0 below 0); false if some
// value is NaN or infinite: min and max carry a NaN through, and an
// infinity is the least or the greatest value, so the extent is finite
// exactly when every value is.
func finiteExtent(xs []float64) (lo, hi float64, ok bool) {
	if len(xs) == 0 {
		return math.Inf(1), math.Inf(-1), true
	}
	if lo, hi = boundsOf(xs); !isFinite(lo) || !isFinite(hi) {
		return 0, 0, false
	}
	return lo, hi, true
}

// numbers returns the values of an integer or float array as float64
// (null slots hold arbitrary values): float64 arrays in place, others
// converted into s.floats.
func numbers(arr arrow.Array, s *scratch) []float64 {
	if classOf(arr.DataType()) == classNumber {
		return float64s(arr, &s.floats)
	}
	xs := int64s(arr, &s.ints)
	out := slices.Grow(s.floats[:0], len(xs))
	for _, x := range xs {
		out = append(out, float64(x))
	}
	s.floats = out
	return out
}

// Merge folds other's counts, moments and values into a; other's values
// are moved, not copied, and other is left without them.
func (a *ExtremesAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*ExtremesAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.NaN += o.NaN
	a.NegInf += o.NegInf
	a.PosInf += o.PosInf
	a.Min, a.Max = min(a.Min, o.Min), max(a.Max, o.Max)
	if a.Moments != nil {
		if err := a.Moments.Merge(o.Moments); err != nil {
			return err
		}
	}
	a.Tally.Merge(&o.Tally)
	a.Values.Splice(&o.Values)
	a.Rows.Splice(&o.Rows)
	return nil
}

// Finish fits the method and judges; rows are listed only after a second
// pass.
func (a *ExtremesAccumulator) Finish() report.Result {
	return a.finding().result(a.check)
}

// SecondPass returns the accumulator that lists the rows holding extreme
// values, or nil when there are none.
func (a *ExtremesAccumulator) SecondPass() Accumulator {
	f := a.finding()
	if f.match == nil || f.count == 0 {
		return nil
	}
	l := &extremesLister{check: a.check, found: f, listing: Offenders{Limit: a.check.env.MaxRowsListed}}
	if a.check.streams() && a.Max > a.Min {
		l.bins = make([]int64, histBins(a.finite()))
		l.lo, l.hi = a.Min, a.Max
	}
	return l
}

func (a *ExtremesAccumulator) finding() *extFinding {
	if a.found == nil {
		a.found = a.check.analyse(&a.ExtremesState)
	}
	return a.found
}
