// Package rules is the policy language of assay: it reads a YAML policy with
// positions, validates it, and resolves it into an immutable Policy whose
// Rules the engine evaluates. This package never looks at data values; the
// engine depends on it, never the reverse.
package rules

import (
	"fmt"
	"math"
	"regexp"
)

// Pos is a position in a policy file. Line and Col are 1-based; a zero Pos
// means "no position" (a rule made by default rather than written), and a
// zero Col with a Line means the column is unknown (some YAML syntax errors).
type Pos struct {
	File string
	Line int
	Col  int
}

func (p Pos) String() string {
	switch {
	case p.Line == 0:
		return p.File
	case p.Col == 0 && p.File == "":
		return fmt.Sprintf("%d", p.Line)
	case p.Col == 0:
		return fmt.Sprintf("%s:%d", p.File, p.Line)
	case p.File == "":
		return fmt.Sprintf("%d:%d", p.Line, p.Col)
	}
	return fmt.Sprintf("%s:%d:%d", p.File, p.Line, p.Col)
}

// Type is a declared column type.
type Type int

// Column types a policy can declare. TypeAny means the policy left the type
// to the data (inferred for CSV, physical for Parquet and Arrow).
const (
	TypeAny Type = iota
	TypeInteger
	TypeNumber
	TypeString
	TypeBoolean
	TypeTimestamp
	TypeDate
)

var typeNames = [...]string{"any", "integer", "number", "string", "boolean", "timestamp", "date"}

func (t Type) String() string {
	if t < 0 || int(t) >= len(typeNames) {
		return fmt.Sprintf("Type(%d)", int(t))
	}
	return typeNames[t]
}

// ParseType returns the Type named s, or false.
func ParseType(s string) (Type, bool) {
	for i, n := range typeNames[1:] {
		if n == s {
			return Type(i + 1), true
		}
	}
	return TypeAny, false
}

// TypeNames lists the names a policy may use for `type`.
func TypeNames() []string { return append([]string(nil), typeNames[1:]...) }

// Kind names a kind of check. Every Kind declared here is implemented in
// package checks; a test there keeps the two lists in step.
type Kind string

// The kinds of check of the foundation.
const (
	KindType      Kind = "type"      // share of values that do not parse as the declared type
	KindNulls     Kind = "nulls"     // share of missing values
	KindUnique    Kind = "unique"    // share of rows whose value occurs more than once
	KindMinimum   Kind = "minimum"   // share of values below (or at, if exclusive) a bound
	KindMaximum   Kind = "maximum"   // share of values above (or at, if exclusive) a bound
	KindEnum      Kind = "enum"      // share of values outside a set
	KindPattern   Kind = "pattern"   // share of strings that do not match an RE2 pattern
	KindMinLength Kind = "minLength" // share of strings shorter than a length, in characters
	KindMaxLength Kind = "maxLength" // share of strings longer than a length, in characters
	KindSummary   Kind = "summary"   // one summary statistic of a column, bounded
	KindRow       Kind = "row"       // share of rows for which an expression is false
	KindRowCount  Kind = "row_count" // number of data rows, bounded
	KindKey       Kind = "key"       // share of rows whose key combination occurs more than once
	KindClosed    Kind = "closed"    // data columns the policy does not declare
	KindRequired  Kind = "required"  // required columns absent from the data

	KindDistribution Kind = "distribution" // how far a column's values are from a distribution family
	KindExtremes     Kind = "extremes"     // share of a column's values that a univariate rule or test finds extreme
	KindJoint        Kind = "joint"        // share of rows far from the joint pattern of several columns
)

// Kinds lists every declared kind, in the order reports list them.
func Kinds() []Kind {
	return []Kind{KindRequired, KindClosed, KindRowCount, KindKey, KindType, KindNulls, KindUnique,
		KindMinimum, KindMaximum, KindEnum, KindPattern, KindMinLength, KindMaxLength, KindSummary, KindDistribution, KindExtremes, KindDrift, KindRow, KindJoint,
		KindLinear, KindMonotonic, KindOrdered, KindAssociation, KindDetermines}
}

// Limit is the closed interval of measure values a threshold allows. An open
// side is ±Inf.
type Limit struct {
	Lo, Hi float64
}

// AtMost is the Limit that allows values up to hi.
func AtMost(hi float64) *Limit { return &Limit{Lo: math.Inf(-1), Hi: hi} }

// AtLeast is the Limit that allows values down to lo.
func AtLeast(lo float64) *Limit { return &Limit{Lo: lo, Hi: math.Inf(1)} }

// Allows reports whether v lies inside the limit. NaN is never allowed.
func (l Limit) Allows(v float64) bool { return v >= l.Lo && v <= l.Hi }

// Direction says which way a measure gets worse.
type Direction int

// Directions of a measure.
const (
	HigherIsWorse  Direction = iota // a share of bad rows, a distance
	LowerIsWorse                    // a p-value, a row count with a minimum
	OutsideIsWorse                  // a statistic bounded on both sides
)

func (d Direction) String() string {
	switch d {
	case HigherIsWorse:
		return "at most"
	case LowerIsWorse:
		return "at least"
	case OutsideIsWorse:
		return "within"
	}
	return fmt.Sprintf("Direction(%d)", int(d))
}

// Tolerance holds the thresholds a rule's measure is judged against. The
// verdict is fail when Fail is set and does not allow the measure, else warn
// when Warn is set and does not allow it, else pass. A nil threshold is never
// crossed.
type Tolerance struct {
	Direction Direction
	Warn      *Limit
	Fail      *Limit
	Pos       Pos // where the tolerance was written; zero when defaulted
}

// Measure names what a rule measures and its unit.
type Measure struct {
	Name string // e.g. "null share", "mean", "rows"
	Unit Unit
}

// Unit says how a measure's value is written.
type Unit int

// Units of a measure.
const (
	UnitShare Unit = iota // a fraction of rows in [0,1], shown as a percentage
	UnitCount             // a whole number
	UnitValue             // a value in the column's own unit
)

// Rule is one resolved check: what a report shows as one line.
type Rule struct {
	// ID is stable across runs and edits elsewhere in the policy, e.g.
	// "columns.air_temp_c.maximum", "rows.dew-point-below-air-temperature",
	// "table.key".
	ID        string
	Kind      Kind
	Columns   []string // data columns read, in the order written
	Spec      Spec     // kind-specific parameters
	Measure   Measure
	Tolerance Tolerance
	Pos       Pos // where the rule was written
	// Segment narrows the rule to some rows and runs it per group; nil
	// judges every row together.
	Segment *Segment
}

// Spec holds a kind's parameters. Each kind has exactly one Spec type.
type Spec interface {
	Kind() Kind
}

// TypeSpec: values of the column must parse as Type.
type TypeSpec struct{ Type Type }

// NullsSpec: the share of missing values is bounded.
type NullsSpec struct{}

// UniqueSpec: the column's non-null values are unique.
type UniqueSpec struct{}

// BoundSpec: values are >= Value (KindMinimum) or <= Value (KindMaximum);
// strictly when Exclusive. For timestamp and date columns Value is seconds
// since the Unix epoch and Text keeps what the policy wrote.
type BoundSpec struct {
	Bound     Kind // KindMinimum or KindMaximum
	Value     float64
	Exclusive bool
	Text      string
}

// EnumSpec: values are members of Values. Values are compared as text for
// string columns and numerically for number columns (Numbers holds them).
type EnumSpec struct {
	Values  []string
	Numbers []float64 // parallel to Values when every value is a number
}

// PatternSpec: strings match an RE2 pattern (unanchored, like JSON Schema).
type PatternSpec struct {
	Pattern string
	Regexp  *regexp.Regexp
}

// LengthSpec: string length in Unicode characters is >= Length
// (KindMinLength) or <= Length (KindMaxLength).
type LengthSpec struct {
	Bound  Kind
	Length int
}

// Stat names a summary statistic.
type Stat string

// Summary statistics.
const (
	StatCount    Stat = "count"    // non-null values
	StatMean     Stat = "mean"     // arithmetic mean
	StatStd      Stat = "std"      // sample standard deviation (n-1)
	StatMedian   Stat = "median"   // quantile 0.5
	StatQuantile Stat = "quantile" // quantile Q (R type 7)
	StatMin      Stat = "min"
	StatMax      Stat = "max"
	StatDistinct Stat = "distinct" // distinct non-null values
)

// SummarySpec: a summary statistic of the column. Q is set for StatQuantile
// (and 0.5 for StatMedian). The bounds live in the rule's Tolerance.
type SummarySpec struct {
	Stat Stat
	Q    float64
}

// RowSpec: an expr-lang expression that must be true for each row. Rows
// where the expression reads a null are not counted as violations.
type RowSpec struct {
	Name    string
	Expr    string
	ExprPos Pos // position of the expression text, for compile errors

	// at[i] is where rune i of Expr was written in the policy file, and
	// at[len(Expr in runes)] is just past its end; nil when unknown. Read it
	// through PosAt.
	at []Pos
}

// RowCountSpec: the number of data rows; bounds live in the Tolerance.
type RowCountSpec struct{}

// KeySpec: the combination of Columns is unique across rows.
type KeySpec struct{}

// ClosedSpec: the data has no column outside Allowed.
type ClosedSpec struct{ Allowed []string }

// RequiredSpec: every column of Columns is present in the data. Rules on a
// required column that is absent are skipped, not errors.
type RequiredSpec struct{}

func (TypeSpec) Kind() Kind     { return KindType }
func (NullsSpec) Kind() Kind    { return KindNulls }
func (UniqueSpec) Kind() Kind   { return KindUnique }
func (s BoundSpec) Kind() Kind  { return s.Bound }
func (EnumSpec) Kind() Kind     { return KindEnum }
func (PatternSpec) Kind() Kind  { return KindPattern }
func (s LengthSpec) Kind() Kind { return s.Bound }
func (SummarySpec) Kind() Kind  { return KindSummary }
func (RowSpec) Kind() Kind      { return KindRow }
func (RowCountSpec) Kind() Kind { return KindRowCount }
func (KeySpec) Kind() Kind      { return KindKey }
func (ClosedSpec) Kind() Kind   { return KindClosed }
func (RequiredSpec) Kind() Kind { return KindRequired }

// DistTest names a goodness-of-fit test of a distribution rule.
type DistTest string

// The tests a distribution rule may name.
const (
	TestKS        DistTest = "ks"               // Kolmogorov-Smirnov
	TestAD        DistTest = "anderson-darling" // Anderson-Darling
	TestCvM       DistTest = "cramer-von-mises" // Cramér-von Mises
	TestSW        DistTest = "shapiro-wilk"     // Shapiro-Wilk, normal family only
	TestChiSquare DistTest = "chi-square"       // Pearson's chi-square
)

// DistMeasure names what a distribution rule is judged on.
type DistMeasure string

// The measures of a distribution rule.
const (
	// MeasureDistance is an effect size that does not grow with n: the
	// Kolmogorov-Smirnov distance between the empirical and the fitted CDF,
	// or for chi-square the total variation distance between the observed
	// and the expected shares of its cells. Higher is worse.
	MeasureDistance DistMeasure = "distance"
	// MeasurePValue is the test's p-value. Lower is worse.
	MeasurePValue DistMeasure = "p-value"
)

// DistributionSpec: the column's values follow a distribution family (of
// package checks/dist), or the best of several candidates ranked by AIC then
// BIC; the measure says how far they are from it.
type DistributionSpec struct {
	// Families are the candidate families by name, in the order written;
	// one for a rule on a single family.
	Families []string
	// Parameters are given values of a single family's parameters; the
	// others (all of them when nil) are estimated by maximum likelihood.
	Parameters map[string]float64
	// Categories and Weights are the categorical family's categories, in
	// the order written, and their expected shares or weights (divided by
	// their sum).
	Categories []string
	Weights    []float64
	Test       DistTest
	Measure    DistMeasure
	// AutoResolution asks to detect the step values are recorded at;
	// otherwise Resolution is that step, 0 for none. The continuous family
	// is then compared at the step's cell boundaries, which rounding
	// cannot move.
	AutoResolution bool
	Resolution     float64
	// Sample is how many values are kept: beyond it the fit and the test
	// run on a seeded random sample of that size.
	Sample int
	// Seed seeds the sample and any bootstrap.
	Seed uint64
}

func (DistributionSpec) Kind() Kind { return KindDistribution }

// ExtremesMethod names how an extremes rule finds a column's extreme
// values.
type ExtremesMethod string

// The methods of an extremes rule (package checks/outlier computes them).
const (
	// ExtremesTukey: beyond Tukey's (1977) fences Q1 − k·IQR and
	// Q3 + k·IQR, quartiles by definition 7 of Hyndman & Fan (1996).
	ExtremesTukey ExtremesMethod = "tukey"
	// ExtremesZScore: |x − mean| / sd above k.
	ExtremesZScore ExtremesMethod = "zscore"
	// ExtremesRobustZ: the modified z-score 0.6745 |x − median| / MAD above
	// k (Iglewicz & Hoaglin 1993).
	ExtremesRobustZ ExtremesMethod = "robust-z"
	// ExtremesESD: Rosner's (1983) generalized ESD test for up to
	// MaxOutliers outliers at level Alpha.
	ExtremesESD ExtremesMethod = "esd"
	// ExtremesGrubbs: Grubbs' (1950) test for one outlier at level Alpha.
	ExtremesGrubbs ExtremesMethod = "grubbs"
	// ExtremesTail: a tail probability below Alpha/(2n) under the
	// column's distribution, fitted or given.
	ExtremesTail ExtremesMethod = "tail"
)

// ExtremesSpec: a column's values are not extreme by Method; the measure
// is the share of its values that are.
type ExtremesSpec struct {
	Method ExtremesMethod
	// K is Tukey's fence multiplier, or the cutoff of |z| or of the
	// modified z-score (tukey, zscore, robust-z).
	K float64
	// Alpha is the level of a test (esd, grubbs, tail).
	Alpha float64
	// MaxOutliers is the most outliers the ESD test looks for (r).
	MaxOutliers int
	// Distribution is the column's distribution rule, whose family the
	// tail method fits; zero for the other methods.
	Distribution DistributionSpec
}

func (ExtremesSpec) Kind() Kind { return KindExtremes }

// JointMethod names how a joint rule measures how far a row is from the
// others.
type JointMethod string

// JointMahalanobis is the squared Mahalanobis distance from a center and
// a covariance.
const JointMahalanobis JointMethod = "mahalanobis"

// JointSpec: rows lie near the joint pattern of the rule's columns; the
// measure is the share of rows whose squared distance exceeds the
// chi-square Quantile with one degree of freedom per column. Rows with a
// missing value in any of the columns are not judged.
type JointSpec struct {
	Name   string // as written; "" when the rule has none
	Method JointMethod
	// Robust asks for the minimum covariance determinant estimate
	// (FAST-MCD, reweighted) instead of the mean and sample covariance.
	Robust   bool
	Quantile float64
	// Sample is how many rows FAST-MCD keeps: beyond it the estimate
	// rests on a seeded sample of that size, and still judges every row.
	Sample int
	// Seed seeds FAST-MCD, its sample and the sample of distances a
	// report plots.
	Seed uint64
}

func (JointSpec) Kind() Kind { return KindJoint }

// Column is a column as the policy declares it.
type Column struct {
	Name        string
	Type        Type // TypeAny when not declared
	Unit        string
	Description string
	Pos         Pos
}

// Input holds how the policy asks for its data to be read. Zero values mean
// the reader's defaults.
type Input struct {
	Paths     []string // files or globs, relative to the policy file's folder
	Delimiter rune
	Quote     rune // 0: default '"'
	NoQuote   bool // quoting disabled
	NoHeader  bool
	Nulls     []string // cell texts read as null; nil: the default set
	NullsSet  bool     // Nulls was written (an empty list then means "no null tokens")
}

// Policy is a validated, resolved policy. It is immutable once returned by
// Parse or Load and safe to share between runs.
type Policy struct {
	Name    string
	About   string
	File    string
	Hash    string // "sha256:" and the hex digest of the policy bytes
	Input   Input
	Columns []Column // in the order written
	Rules   []*Rule  // in the order written, table rules first
}

// Column returns the declared column named name, or nil.
func (p *Policy) Column(name string) *Column {
	for i := range p.Columns {
		if p.Columns[i].Name == name {
			return &p.Columns[i]
		}
	}
	return nil
}
