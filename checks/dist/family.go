package dist

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"
)

// Kind says what values a family describes.
type Kind int

// The kinds of family.
const (
	// Continuous families have a density over an interval of real numbers.
	Continuous Kind = iota + 1
	// Discrete families have a mass over whole numbers.
	Discrete
	// Categorical families have expected shares over named categories; see
	// Shares.
	Categorical
)

// String returns the kind in lower case.
func (k Kind) String() string {
	switch k {
	case Continuous:
		return "continuous"
	case Discrete:
		return "discrete"
	case Categorical:
		return "categorical"
	}
	return "kind(" + strconv.Itoa(int(k)) + ")"
}

// maxParams is the most parameters a family has (Student t).
const maxParams = 3

// Param describes one parameter of a family and the values it may take.
type Param struct {
	Name string
	// Min and Max bound the values; MinOpen and MaxOpen exclude the bound
	// itself.
	Min, Max         float64
	MinOpen, MaxOpen bool
	// Whole parameters take whole numbers only (binomial n).
	Whole bool
	// Required parameters are never estimated: a policy must give them
	// (binomial n).
	Required bool
	// Alone parameters may be given while the family's other parameters
	// are estimated (Student t df, negative binomial size, binomial n).
	// Other parameters are given all together or not at all.
	Alone bool
	// About says what the parameter is, for documentation.
	About string
}

// Domain describes the values p accepts, e.g. "above 0", "in (0, 1)".
func (p Param) Domain() string {
	num := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	var s string
	switch {
	case math.IsInf(p.Min, -1) && math.IsInf(p.Max, 1):
		s = "a finite number"
	case math.IsInf(p.Max, 1) && p.MinOpen:
		s = "above " + num(p.Min)
	case math.IsInf(p.Max, 1):
		s = "at least " + num(p.Min)
	default:
		l, r := "[", "]"
		if p.MinOpen {
			l = "("
		}
		if p.MaxOpen {
			r = ")"
		}
		s = "in " + l + num(p.Min) + ", " + num(p.Max) + r
	}
	if p.Whole {
		s = "a whole number " + s
	}
	return s
}

// accepts reports whether v is in p's domain.
func (p Param) accepts(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	if v < p.Min || (p.MinOpen && v == p.Min) || v > p.Max || (p.MaxOpen && v == p.Max) {
		return false
	}
	return !p.Whole || isWhole(v)
}

// spec is the immutable description and implementation of one family.
type spec struct {
	name    string
	kind    Kind
	about   string
	support string // the support in words, for messages and documentation
	params  []Param
	minN    int
	digits  int    // Benford families: leading digits the values reduce to
	method  string // how the free parameters are estimated
	// build makes the model from a complete, valid parameter vector.
	build func(theta []float64) model
	// relate checks relations between complete parameters (uniform min <
	// max); nil when there are none.
	relate func(theta []float64) error
	// inSupport returns the values a sample may hold, given the
	// parameters fixed so far (NaN where free), and says what is needed
	// ("" when any finite value will do); nil for the families whose
	// support is every real number.
	inSupport func(fixed []float64) (in Interval, need string)
	// estimate fills the free entries of theta (marked in free) from the
	// sample, whose values have passed inSupport; it reports degenerate
	// samples (all values equal, ...) as errors.
	estimate func(x []float64, theta []float64, free []bool) error
}

// Family is a probability family with some, all or none of its parameters
// given. It is a small comparable value; the families are listed by
// Families and found by name with Lookup; Fix gives parameters. The zero
// Family is not a family: get one from Lookup or Families.
type Family struct {
	spec  *spec
	given [maxParams]float64
	has   [maxParams]bool
}

// Name returns the family's name as a policy spells it, e.g. "lognormal".
func (f Family) Name() string { return f.spec.name }

// Kind returns whether the family is continuous, discrete or categorical.
func (f Family) Kind() Kind { return f.spec.kind }

// About describes the family in a sentence.
func (f Family) About() string { return f.spec.about }

// Support describes in words the values the family can produce.
func (f Family) Support() string { return f.spec.support }

// Params returns the family's parameters in their fixed order.
func (f Family) Params() []Param { return slices.Clone(f.spec.params) }

// MinN returns the smallest sample the family can be fitted to: the size
// below which the maximum-likelihood estimate does not exist or is not
// unique, not a recommended size.
func (f Family) MinN() int { return f.spec.minN }

// Digits returns, for the Benford families, how many leading digits each
// value is reduced to (1 or 2); 0 for the other families.
func (f Family) Digits() int { return f.spec.digits }

// Method says how Fit estimates the parameters that are not given.
func (f Family) Method() string { return f.spec.method }

// Given returns the parameters fixed so far.
func (f Family) Given() map[string]float64 {
	out := map[string]float64{}
	for i, p := range f.spec.params {
		if f.has[i] {
			out[p.Name] = f.given[i]
		}
	}
	return out
}

// String returns the name, followed by the given parameters if any.
func (f Family) String() string {
	var parts []string
	for i, p := range f.spec.params {
		if f.has[i] {
			parts = append(parts, p.Name+"="+strconv.FormatFloat(f.given[i], 'g', -1, 64))
		}
	}
	if len(parts) == 0 {
		return f.spec.name
	}
	return f.spec.name + "(" + strings.Join(parts, ", ") + ")"
}

// free reports whether f has parameters left to estimate.
func (f Family) free() int {
	n := 0
	for i := range f.spec.params {
		if !f.has[i] {
			n++
		}
	}
	return n
}

// Families returns every family in documentation order.
func Families() []Family {
	out := make([]Family, len(specs))
	for i, s := range specs {
		out[i] = Family{spec: s}
	}
	return out
}

// Names returns the family names in documentation order, for suggestions.
func Names() []string {
	out := make([]string, len(specs))
	for i, s := range specs {
		out[i] = s.name
	}
	return out
}

// Lookup returns the family called name (exact, lower case).
func Lookup(name string) (Family, error) {
	for _, s := range specs {
		if s.name == name {
			return Family{spec: s}, nil
		}
	}
	return Family{}, fmt.Errorf("unknown distribution family %q (known: %s)", name, strings.Join(Names(), ", "))
}

// Fix returns f with the parameters in given held at their values; Fit
// then estimates only the others, and New needs no more. Names must be the
// family's own, values in their domain, and either every parameter is
// given, or only those marked Alone; a Required parameter must be given
// before Fit. Errors name the family and the parameter.
func (f Family) Fix(given map[string]float64) (Family, error) {
	if f.spec == nil {
		return f, fmt.Errorf("no distribution family")
	}
	s := f.spec
	if s.kind == Categorical {
		return f, fmt.Errorf("%s: shares are given as categories and weights, not parameters", s.name)
	}
	names := make([]string, 0, len(given))
	for k := range given {
		names = append(names, k)
	}
	sort.Strings(names)
	for _, k := range names {
		i := s.index(k)
		if i < 0 {
			if len(s.params) == 0 {
				return f, fmt.Errorf("%s: unknown parameter %q (the family has no parameters)", s.name, k)
			}
			return f, fmt.Errorf("%s: unknown parameter %q (parameters: %s)", s.name, k, s.paramNames())
		}
		p := s.params[i]
		v := given[k]
		if !p.accepts(v) {
			return f, fmt.Errorf("%s: %s must be %s, got %s", s.name, k, p.Domain(), strconv.FormatFloat(v, 'g', -1, 64))
		}
		f.given[i], f.has[i] = v, true
	}
	if f.free() > 0 {
		var partial []string
		for i, p := range s.params {
			if f.has[i] && !p.Alone {
				partial = append(partial, p.Name)
			}
		}
		if len(partial) > 0 {
			return f, fmt.Errorf("%s: give all of %s or none of them; %s cannot be given while the others are estimated",
				s.name, s.paramNames(), strings.Join(partial, ", "))
		}
	} else if s.relate != nil {
		if err := s.relate(f.given[:len(s.params)]); err != nil {
			return f, fmt.Errorf("%s: %w", s.name, err)
		}
	}
	return f, nil
}

// New returns the distribution of the family with exactly the parameters
// in params (added to any already given with Fix).
func (f Family) New(params map[string]float64) (Dist, error) {
	g, err := f.Fix(params)
	if err != nil {
		return Dist{}, err
	}
	if g.free() > 0 {
		var missing []string
		for i, p := range g.spec.params {
			if !g.has[i] {
				missing = append(missing, p.Name)
			}
		}
		return Dist{}, fmt.Errorf("%s: missing parameter %s", g.spec.name, strings.Join(missing, ", "))
	}
	return g.dist(g.given), nil
}

// dist builds the Dist for a complete, valid parameter vector.
func (f Family) dist(theta [maxParams]float64) Dist {
	return Dist{spec: f.spec, theta: theta, m: f.spec.build(theta[:len(f.spec.params)])}
}

func (s *spec) index(name string) int {
	for i, p := range s.params {
		if p.Name == name {
			return i
		}
	}
	return -1
}

func (s *spec) paramNames() string {
	names := make([]string, len(s.params))
	for i, p := range s.params {
		names[i] = p.Name
	}
	return strings.Join(names, ", ")
}
