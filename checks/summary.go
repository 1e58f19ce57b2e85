package checks

import (
	"fmt"
	"hash/maphash"
	"math"
	"math/big"
	"math/bits"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/checks/internal/fsum"
	"github.com/assay-project/assay/checks/internal/order"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// summaryCheck bounds one summary statistic of a column; the measure is the
// statistic itself, judged "within" its limits.
//
//   - count: non-null values (any column type).
//   - distinct: distinct non-null values (numbers, strings, booleans, times).
//     Numbers, times and booleans are counted exactly by their 8-byte values
//     (-0 and 0 are one value, all NaNs one value). Strings are counted by a
//     64-bit hash (hash/maphash, one seed per check): two distinct strings
//     share a hash with probability 2^-64, so among n distinct strings some
//     pair collides with probability about n²/2^65 (birthday bound: 2.7e-8
//     for a million, 2.7e-4 for 100 million), which would count one too few.
//   - mean, std, min, max: streamed in O(1) memory. Each batch is summed
//     with Welford's update (Welford 1962, "Note on a method for calculating
//     corrected sums of squares and products", Technometrics 4(3):419-420):
//     n += 1; d = x - mean; mean += d/n; M2 += d(x - mean); batches and
//     accumulators are combined with the pairwise update of Chan, Golub &
//     LeVeque (1979, "Updating formulae and a pairwise algorithm for
//     computing sample variances", Stanford STAN-CS-79-773; 1983, "Algorithms
//     for computing the sample variance: analysis and recommendations", The
//     American Statistician 37(3):242-247), written with means:
//     d = mean_b - mean_a; mean = mean_a + d n_b/n; M2 = M2_a + M2_b + d² n_a n_b/n.
//     std is the sample standard deviation sqrt(M2/(n-1)), undefined below
//     two values. Neither forms the sum of squares, which loses every digit
//     on data with a large mean and a small spread (NIST StRD NumAcc4).
//     The mean reported is the sum divided by n: Welford's running mean
//     drifts in the last bits (it gives 4.999999999999999 for 2 4 4 4 5 5 7
//     9), so the sum is kept beside it, exactly in 128 bits for integer and
//     time columns, and for float columns with Neumaier's compensated
//     summation (Neumaier 1974, "Rundungsfehleranalyse einiger Verfahren zur
//     Summation endlicher Summen", ZAMM 54(1):39-51), whose error does not
//     grow with n for sums that do not cancel.
//   - median and quantiles: exact, from every value kept (8 bytes per
//     non-null value, in one slice per batch; the only summaries whose
//     memory grows with the rows), found at Finish by radix selection over
//     the kept parts, neither sorting nor copying them (order.Chunks'
//     Quantiles7, about two passes). Definition 7 of Hyndman & Fan (1996, "Sample
//     quantiles in statistical packages", The American Statistician
//     50(4):361-365), R's default: with the values sorted x_1..x_n,
//     h = 1 + (n-1)p, j = floor(h), Q(p) = (1-g) x_j + g x_{j+1}, g = h - j
//     (no interpolation when x_j = x_{j+1}, as in R).
//
// Integer columns are summarised on their int64 values (min, max, quantile
// ends and distinct exact; mean from the exact sum). Time columns work in
// the column's integer unit and report seconds since the Unix epoch (std in
// seconds). A NaN in a float column is a non-null value: it counts for
// count and distinct and makes every other statistic undefined (NaN, which
// fails a bounded rule); ±Inf make mean and std undefined.
type summaryCheck struct {
	rule *rules.Rule
	env  *Env
	col  column
	stat rules.Stat
	q    float64
	seed maphash.Seed
}

func newSummaryCheck(r *rules.Rule, s rules.SummarySpec, env *Env) (Check, error) {
	var (
		c   column
		err error
	)
	what := "summary " + string(s.Stat)
	switch s.Stat {
	case rules.StatCount:
		c, err = bindOne(r, env, what)
	case rules.StatDistinct:
		c, err = bindColumnOf(r, env, what, classInteger, classNumber, classTime, classString, classBoolean)
	case rules.StatMean, rules.StatStd, rules.StatMin, rules.StatMax, rules.StatMedian, rules.StatQuantile:
		c, err = bindColumnOf(r, env, what, classInteger, classNumber, classTime)
	default:
		return nil, fmt.Errorf("unknown summary statistic %q", s.Stat)
	}
	if err != nil {
		return nil, err
	}
	q := s.Q
	if s.Stat == rules.StatMedian {
		q = 0.5
	}
	if !(q >= 0 && q <= 1) {
		return nil, fmt.Errorf("quantile %v of column %q is outside [0, 1]", q, c.name)
	}
	return &summaryCheck{rule: r, env: env, col: c, stat: s.Stat, q: q, seed: maphash.MakeSeed()}, nil
}

func (c *summaryCheck) Rule() *rules.Rule { return c.rule }

func (c *summaryCheck) NewAccumulator() Accumulator {
	a := &SummaryAccumulator{check: c}
	a.Min, a.Max = math.Inf(1), math.Inf(-1)
	if c.stat == rules.StatDistinct {
		a.Distinct = map[uint64]struct{}{}
	}
	return a
}

// summaryNeeds says which parts of a SummaryState a statistic is
// computed from (beyond Count and NaN, which every one needs).
type summaryNeeds struct {
	moments bool // Mean and M2: std
	extent  bool // Min and Max: min and max
	sum     bool // Sum or FloatSum: mean
	values  bool // Floats or Ints: median and quantile
}

func (c *summaryCheck) needs() summaryNeeds {
	return summaryNeeds{
		moments: c.stat == rules.StatStd,
		extent:  c.stat == rules.StatMin || c.stat == rules.StatMax,
		sum:     c.stat == rules.StatMean,
		values:  c.stat == rules.StatMedian || c.stat == rules.StatQuantile,
	}
}

// SummaryState is the sufficient statistic of a summary rule. Values are in
// the column's own unit (days for date32, microseconds for timestamp[us]).
// Mean, M2, Min and Max are over the Count-NaN values that are not NaN.
// Only the fields the rule's statistic is computed from are kept
// (summaryCheck.needs); the others stay at their zero or starting value.
type SummaryState struct {
	Count    int64    // non-null values, NaN included
	NaN      int64    // NaN values (float columns)
	Mean     float64  // running mean (Welford; Chan et al. when merged), for M2
	M2       float64  // sum of squared deviations from Mean
	Min, Max float64  // +Inf and -Inf before the first value
	Sum      Int128   // exact sum of an integer or time column
	FloatSum Neumaier // compensated sum of a float column
	// Floats (float columns) or Ints (integer and time columns) keep every
	// value that is not NaN, for median and quantiles only: as distinct
	// values and counts while there are few of them, else as the values
	// (order.Tally).
	Floats order.Tally[float64]
	Ints   order.Tally[int64]
	// Distinct holds the distinct values (their 8 bytes, or a string's
	// 64-bit hash), for distinct only.
	Distinct map[uint64]struct{}
}

// Int128 is a two's-complement 128-bit integer, Hi·2⁶⁴ + Lo: the exact sum
// of up to 2⁶⁴ int64 values.
type Int128 struct {
	Hi int64
	Lo uint64
}

// Add adds v to s.
func (s *Int128) Add(v int64) {
	var carry uint64
	s.Lo, carry = bits.Add64(s.Lo, uint64(v), 0)
	s.Hi += v>>63 + int64(carry) // v>>63 is the sign extension: 0 or -1
}

// AddInt128 adds t to s.
func (s *Int128) AddInt128(t Int128) {
	var carry uint64
	s.Lo, carry = bits.Add64(s.Lo, t.Lo, 0)
	s.Hi += t.Hi + int64(carry)
}

// Big returns s as a big.Int.
func (s Int128) Big() *big.Int {
	x := big.NewInt(s.Hi)
	x.Lsh(x, 64)
	return x.Add(x, new(big.Int).SetUint64(s.Lo))
}

// Neumaier is the compensated sum a float column's mean is taken from.
type Neumaier = fsum.Neumaier

// SummaryAccumulator is one run of a summary rule.
type SummaryAccumulator struct {
	SummaryState
	check   *summaryCheck
	scratch scratch
	// keptFloats and keptInts hold a batch's values on their way to the
	// tally, reused from batch to batch.
	keptFloats []float64
	keptInts   []int64
}

// Observe adds the batch's non-null values of the column.
func (a *SummaryAccumulator) Observe(b *source.Batch) error {
	arr, err := a.check.col.in(b)
	if err != nil {
		return err
	}
	switch a.check.col.class {
	case classNumber:
		a.observeFloats(float64s(arr, &a.scratch.floats), validOf(arr))
	case classInteger, classTime:
		a.observeInts(int64s(arr, &a.scratch.ints), validOf(arr))
	case classString:
		a.Count += int64(arr.Len() - arr.NullN())
		if a.Distinct != nil {
			eachString(arr, func(_ int, s string) {
				a.Distinct[maphash.String(a.check.seed, s)] = struct{}{}
			})
		}
	case classBoolean:
		a.Count += int64(arr.Len() - arr.NullN())
		if a.Distinct != nil {
			bs := arr.(*array.Boolean)
			v := validOf(arr)
			for i := range bs.Len() {
				if v.at(i) {
					a.Distinct[uint64(boolIndex(bs.Value(i)))] = struct{}{}
				}
			}
		}
	default:
		a.Count += int64(arr.Len() - arr.NullN())
	}
	return nil
}

// observeFloats adds the values of xs that v says are valid; nulls of
// them are not. Only what the statistic is computed from is updated
// (summaryCheck.needs): each of the moments, the sum and the kept values
// is a chain of work per value that the others need not wait for. A
// batch without NaN, as most are, takes observeNumbers: as it is when it
// has no nulls, else with its values gathered first when they are kept
// (the loop below, which skips nulls, would copy them too).
func (a *SummaryAccumulator) observeFloats(xs []float64, v valid) {
	if a.Distinct == nil && (v.bits == nil || a.check.needs().values) {
		vals := xs
		if v.bits != nil {
			vals = appendValid(a.keptFloats[:0], xs, v)
			a.keptFloats = vals
		}
		if !hasNaN(vals) {
			a.observeNumbers(vals)
			return
		}
	}
	var (
		w          welford
		n, nan     int64
		lo, hi     = math.Inf(1), math.Inf(-1)
		sum        = a.FloatSum
		need       = a.check.needs()
		kept       = a.keptFloats[:0]
		collectSet = a.Distinct != nil
	)
	for i, x := range xs {
		if !v.at(i) {
			continue
		}
		if collectSet {
			a.Distinct[floatKey(x)] = struct{}{}
		}
		if math.IsNaN(x) {
			nan++
			continue
		}
		n++
		if need.moments {
			w.add(x)
		}
		if need.extent {
			lo, hi = min(lo, x), max(hi, x)
		}
		if need.sum {
			sum.Add(x)
		}
		if need.values {
			kept = append(kept, x)
		}
	}
	a.Floats.Add(kept)
	a.keptFloats = kept
	a.FloatSum = sum
	w.n = n
	a.pool(w, lo, hi)
	a.Count += n + nan
	a.NaN += nan
}

// observeNumbers adds xs, none of them NaN, to what the statistic needs,
// as observeFloats does, in one loop per part of the state without a
// test per value; the tally counts xs where they are.
func (a *SummaryAccumulator) observeNumbers(xs []float64) {
	var (
		w      welford
		lo, hi = math.Inf(1), math.Inf(-1)
		need   = a.check.needs()
	)
	if need.moments {
		for _, x := range xs {
			w.add(x)
		}
	}
	if need.extent && len(xs) > 0 {
		lo, hi = boundsOf(xs)
	}
	if need.sum {
		sum := a.FloatSum
		for _, x := range xs {
			sum.Add(x)
		}
		a.FloatSum = sum
	}
	if need.values {
		a.Floats.Add(xs)
	}
	n := int64(len(xs))
	w.n = n
	a.pool(w, lo, hi)
	a.Count += n
}

// hasNaN reports whether some value of xs is NaN.
func hasNaN(xs []float64) bool {
	for _, x := range xs {
		if x != x {
			return true
		}
	}
	return false
}

// observeInts adds the values of xs that v says are valid; nulls of them
// are not. As observeFloats, it updates only what the statistic needs.
func (a *SummaryAccumulator) observeInts(xs []int64, v valid) {
	var (
		w          welford
		n          int64
		lo, hi     int64 = math.MaxInt64, math.MinInt64
		sum              = a.Sum
		need             = a.check.needs()
		kept             = a.keptInts[:0]
		collectSet       = a.Distinct != nil
	)
	for i, x := range xs {
		if !v.at(i) {
			continue
		}
		n++
		if need.moments {
			w.add(float64(x))
		}
		if need.extent {
			lo, hi = min(lo, x), max(hi, x)
		}
		if need.sum {
			sum.Add(x)
		}
		if need.values {
			kept = append(kept, x)
		}
		if collectSet {
			a.Distinct[uint64(x)] = struct{}{}
		}
	}
	a.Ints.Add(kept)
	a.keptInts = kept
	a.Sum = sum
	if n > 0 {
		w.n = n
		flo, fhi := math.Inf(1), math.Inf(-1)
		if need.extent {
			flo, fhi = float64(lo), float64(hi)
		}
		a.pool(w, flo, fhi)
	}
	a.Count += n
}

// floatKey is x's bits for counting distinct values: -0 as 0, every NaN
// as one.
func floatKey(x float64) uint64 {
	switch {
	case x == 0:
		return 0
	case math.IsNaN(x):
		return math.Float64bits(math.NaN())
	}
	return math.Float64bits(x)
}

// welford is the count, mean and M2 of some values, updated one value at a
// time (Welford 1962; see summaryCheck).
type welford struct {
	n        int64
	mean, m2 float64
}

func (w *welford) add(x float64) {
	w.n++
	d := x - w.mean
	w.mean += d / float64(w.n)
	w.m2 += d * (x - w.mean)
}

// pool folds the moments of w's values, whose least and greatest are lo
// and hi, into a's (Chan, Golub & LeVeque; see summaryCheck). It does not
// change Count.
func (a *SummaryAccumulator) pool(w welford, lo, hi float64) {
	if w.n == 0 {
		return
	}
	had := a.Count - a.NaN
	a.Min, a.Max = min(a.Min, lo), max(a.Max, hi)
	if had == 0 {
		a.Mean, a.M2 = w.mean, w.m2
		return
	}
	total := float64(had + w.n)
	d := w.mean - a.Mean
	a.Mean += d * float64(w.n) / total
	a.M2 += w.m2 + d*d*float64(had)*float64(w.n)/total
}

// Merge folds other's values into a; other's kept values are moved, not
// copied, and other is left without them.
func (a *SummaryAccumulator) Merge(other Accumulator) error {
	o, ok := other.(*SummaryAccumulator)
	if !ok || o.check != a.check {
		return errMerge(a.check.rule, a, other)
	}
	a.pool(welford{n: o.Count - o.NaN, mean: o.Mean, m2: o.M2}, o.Min, o.Max)
	a.Count += o.Count
	a.NaN += o.NaN
	a.Sum.AddInt128(o.Sum)
	a.FloatSum.Merge(o.FloatSum)
	a.Floats.Merge(&o.Floats)
	a.Ints.Merge(&o.Ints)
	for k := range o.Distinct {
		a.Distinct[k] = struct{}{}
	}
	return nil
}

// Finish computes the statistic from the state and judges it. It
// reorders the kept values.
func (a *SummaryAccumulator) Finish() report.Result {
	v, why := a.value()
	res := NewResult(a.check.rule, v)
	name := a.check.rule.Measure.Name
	if name == "" {
		name = string(a.check.stat)
	}
	var shown string
	switch {
	case why != "":
		res.Message = fmt.Sprintf("%s is undefined: %s", name, why)
		return res
	case a.check.stat == rules.StatCount || a.check.stat == rules.StatDistinct:
		res.Message = fmt.Sprintf("%s is %s", name, thousands(int64(v)))
		return res
	case a.check.stat == rules.StatStd && a.check.col.class == classTime:
		shown = number(round7(v)) + " s"
	case a.check.stat == rules.StatMin || a.check.stat == rules.StatMax || a.check.col.class == classTime:
		shown = quantity(a.check.env, a.check.col, v) // a value of the data, or a time
	default: // computed: 7 significant digits
		shown = quantity(a.check.env, a.check.col, round7(v))
	}
	res.Message = fmt.Sprintf("%s is %s over %s values", name, shown, thousands(a.Count))
	return res
}

// round7 rounds v to 7 significant digits, for messages.
func round7(v float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 7, 64), 64)
	return r
}

// value is the statistic, in seconds for time columns, or NaN and why it
// is undefined.
func (a *SummaryAccumulator) value() (float64, string) {
	switch a.check.stat {
	case rules.StatCount:
		return float64(a.Count), ""
	case rules.StatDistinct:
		return float64(len(a.Distinct)), ""
	}
	n := a.Count - a.NaN
	switch {
	case a.NaN > 0:
		return math.NaN(), fmt.Sprintf("%s of %s values are NaN", thousands(a.NaN), thousands(a.Count))
	case n == 0:
		return math.NaN(), "the column has no values"
	case n == 1 && a.check.stat == rules.StatStd:
		return math.NaN(), "the standard deviation needs two values, the column has one"
	}
	per := a.check.col.perSecond
	switch a.check.stat {
	case rules.StatMean:
		if a.check.col.class == classNumber {
			return a.FloatSum.Value() / float64(n), ""
		}
		// Both operands are exact; the quotient is rounded once, to float64.
		m := new(big.Float).SetPrec(53).Quo(new(big.Float).SetInt(a.Sum.Big()), new(big.Float).SetInt64(n))
		f, _ := m.Float64()
		return f / per, ""
	case rules.StatStd:
		return math.Sqrt(a.M2/float64(n-1)) / per, ""
	case rules.StatMin:
		return a.Min / per, ""
	case rules.StatMax:
		return a.Max / per, ""
	}
	if a.check.col.class == classNumber {
		return a.Floats.Quantiles7(a.check.q)[0], ""
	}
	return a.Ints.Quantiles7(a.check.q)[0] / per, ""
}
