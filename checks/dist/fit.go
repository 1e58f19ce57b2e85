package dist

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// SupportError reports sample values that a family cannot produce:
// negative values for a lognormal, fractions for a Poisson, values outside
// [0, 1] for a beta, or values that are not finite numbers. Callers add the
// column or file; Index lets them point at the rows.
type SupportError struct {
	Family string // the family, with any given parameters, e.g. "binomial(n=12)"
	Need   string // what the family needs, e.g. "values above 0"
	Count  int    // how many values are outside
	N      int    // how many values the sample has
	// Values holds the first values outside (at most 5) in sample order,
	// and Index their 0-based positions in the sample.
	Values []float64
	Index  []int
}

// maxShown is how many offending values a SupportError keeps.
const maxShown = 5

func (e *SupportError) Error() string {
	shown := make([]string, len(e.Values))
	for i, v := range e.Values {
		shown[i] = num(v)
	}
	lead := ":"
	if e.Count > len(e.Values) {
		lead = ", for example"
	}
	return fmt.Sprintf("%s needs %s, but %d of %d values are not%s %s",
		e.Family, e.Need, e.Count, e.N, lead, strings.Join(shown, ", "))
}

// checkValues returns a SupportError for the values of x failing ok. A
// value identical, bit for bit, to the one before it that passed passes
// too without asking ok again (samples arrive sorted, with long runs of
// equal values).
func checkValues(x []float64, family, need string, ok func(float64) bool) error {
	var e *SupportError
	var passed uint64
	havePassed := false
	for i, v := range x {
		if b := math.Float64bits(v); havePassed && b == passed {
			continue
		}
		if ok(v) {
			passed, havePassed = math.Float64bits(v), true
			continue
		}
		havePassed = false
		if e == nil {
			e = &SupportError{Family: family, Need: need, N: len(x)}
		}
		e.Count++
		if len(e.Values) < maxShown {
			e.Values = append(e.Values, v)
			e.Index = append(e.Index, i)
		}
	}
	if e == nil {
		return nil
	}
	return e
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// Check reports why sample cannot come from f, or nil: values that are not
// finite numbers or outside the support (a *SupportError), or fewer values
// than MinN when parameters are left to estimate.
func (f Family) Check(sample []float64) error {
	if f.spec == nil {
		return fmt.Errorf("no distribution family")
	}
	s := f.spec
	if s.kind == Categorical {
		return fmt.Errorf("%s: fit category counts with FitShares, not numbers", s.name)
	}
	for i, p := range s.params {
		if p.Required && !f.has[i] {
			return fmt.Errorf("%s: %s must be given (%s)", s.name, p.Name, p.About)
		}
	}
	minN := 1
	if f.free() > 0 {
		minN = s.minN
	}
	if len(sample) < minN {
		unit := "values"
		if minN == 1 {
			unit = "value"
		}
		return fmt.Errorf("%s needs at least %d %s, got %d", f, minN, unit, len(sample))
	}
	if err := checkValues(sample, f.String(), "finite numbers", finite); err != nil {
		return err
	}
	in, need := f.interval()
	if need == "" {
		return nil
	}
	return checkValues(sample, f.String(), need, in.Contains)
}

// interval returns the values f can produce with the parameters fixed so
// far, and what it needs beyond finite numbers ("" when nothing).
func (f Family) interval() (Interval, string) {
	s := f.spec
	if s.inSupport == nil {
		return Finite, ""
	}
	fixed := make([]float64, len(s.params))
	for i := range fixed {
		fixed[i] = math.NaN()
		if f.has[i] {
			fixed[i] = f.given[i]
		}
	}
	return s.inSupport(fixed)
}

// InSupport returns the test Check applies to each value, for callers that
// see a sample a piece at a time and must count every value outside:
// ok(x) reports whether x is a finite number f can produce with the
// parameters given so far, and need says what the family needs, in the
// words of a SupportError ("values above 0"). Check adds the size of the
// sample to this. For the categorical family, whose values are labels, ok
// is nil.
func (f Family) InSupport() (ok func(x float64) bool, need string) {
	in, need, isNumeric := f.Within()
	if !isNumeric {
		return nil, ""
	}
	return in.Contains, need
}

// Within is InSupport as an Interval, for callers that test millions of
// values inline: in.Contains(x) is ok(x). isNumeric is false, and in the
// zero Interval, for the categorical family.
func (f Family) Within() (in Interval, need string, isNumeric bool) {
	if f.spec == nil || f.spec.kind == Categorical {
		return Interval{}, "", false
	}
	if in, need = f.interval(); need == "" {
		need = "finite numbers"
	}
	return in, need, true
}

// Fit is a family fitted to a sample.
type Fit struct {
	// Family is the family as given to Fit or Rank, with any given
	// parameters.
	Family Family
	// Dist is the family with every parameter set, given or estimated.
	Dist Dist
	// N is the number of values fitted.
	N int
	// K is the number of parameters estimated from the sample; given
	// parameters do not count.
	K int
	// LogLik is Σ ln f(x_i) at Dist: log-density for a continuous family,
	// log-mass for a discrete one, over the leading digits for Benford.
	LogLik float64
	// AIC = 2K − 2 LogLik (Akaike 1974, IEEE Trans. Automatic Control
	// 19(6)); BIC = K ln N − 2 LogLik (Schwarz 1978, Ann. Statist. 6(2)).
	// Lower is better; only fits to the same values are comparable.
	AIC, BIC float64
	// Err is set by Rank for a family it could not fit, saying why; Dist
	// and the numbers are then zero.
	Err error
}

// Fit estimates the parameters of f that are not given by maximum
// likelihood (see Method) and returns the fitted distribution with its
// log-likelihood, AIC and BIC. With every parameter given it only checks
// the sample and computes those numbers (K = 0). For the Benford families
// each value is first reduced to its leading digits.
//
// Errors: the sample is too small, holds values outside the support (a
// *SupportError naming how many and showing some), or is degenerate for
// the family (all values equal, a Poisson sample of zeros, a negative
// binomial sample less spread than a Poisson one); or the numerical
// maximisation did not converge.
func (f Family) Fit(sample []float64) (Fit, error) {
	if err := f.Check(sample); err != nil {
		return Fit{}, err
	}
	s := f.spec
	x := sample
	if s.digits > 0 {
		x = make([]float64, len(sample))
		for i, v := range sample {
			d, _ := LeadingDigits(v, s.digits)
			x[i] = float64(d)
		}
	}
	theta := f.given
	k := f.free()
	if k > 0 {
		free := make([]bool, len(s.params))
		var names []string
		for i, p := range s.params {
			free[i] = !f.has[i]
			if free[i] {
				names = append(names, p.Name)
			}
		}
		if err := s.estimate(x, theta[:len(s.params)], free); err != nil {
			return Fit{}, fmt.Errorf("%s: cannot estimate %s: %w", f, strings.Join(names, ", "), err)
		}
		for i, p := range s.params {
			if !p.accepts(theta[i]) {
				return Fit{}, fmt.Errorf("%s: the estimate of %s is %s, outside its domain (%s)", f, p.Name, num(theta[i]), p.Domain())
			}
		}
	}
	d := f.dist(theta)
	ll := d.LogLik(x)
	if math.IsNaN(ll) || math.IsInf(ll, 0) {
		return Fit{}, fmt.Errorf("%s: the log-likelihood at %v is %s", f, d, num(ll))
	}
	n := float64(len(x))
	return Fit{
		Family: f,
		Dist:   d,
		N:      len(x),
		K:      k,
		LogLik: ll,
		AIC:    2*float64(k) - 2*ll,
		BIC:    float64(k)*math.Log(n) - 2*ll,
	}, nil
}

// Rank fits every family to sample and returns the fits, best first: by
// AIC, then, where the AICs agree to 1e-9 relative, by BIC, then by name.
// Families that could not be fitted follow in their given order, with Err
// saying why: the data cannot come from the family (a *SupportError),
// there are too few values, the sample is degenerate, or the family's
// likelihood is not comparable with the first candidate's (a continuous
// density against a discrete mass, or Benford digits against the values
// themselves).
func Rank(sample []float64, families []Family) []Fit {
	var fitted, skipped []Fit
	var first Family
	for i, f := range families {
		if i == 0 {
			first = f
		}
		if f.spec != nil && first.spec != nil && (f.Kind() != first.Kind() || f.Digits() != first.Digits()) {
			skipped = append(skipped, Fit{Family: f, Err: fmt.Errorf(
				"%s is not comparable with %s, the first candidate: their likelihoods are over different values (%s, %s)",
				f, first, f.Support(), first.Support())})
			continue
		}
		fit, err := f.Fit(sample)
		if err != nil {
			skipped = append(skipped, Fit{Family: f, Err: err})
			continue
		}
		fitted = append(fitted, fit)
	}
	sort.SliceStable(fitted, func(i, j int) bool {
		a, b := fitted[i], fitted[j]
		if math.Abs(a.AIC-b.AIC) > 1e-9*math.Max(1, math.Abs(a.AIC)) {
			return a.AIC < b.AIC
		}
		if a.BIC != b.BIC {
			return a.BIC < b.BIC
		}
		return a.Family.Name() < b.Family.Name()
	})
	return append(fitted, skipped...)
}
