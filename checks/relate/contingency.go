package relate

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// Cell is one combination of the values of two categorical columns.
type Cell struct{ A, B string }

// Table is the contingency table of two categorical columns: how many rows
// hold each combination of values. Tables of disjoint rows merge by adding
// counts. The zero value is an empty table.
type Table struct {
	Counts map[Cell]int64
}

// Add counts one row with values a and b.
func (t *Table) Add(a, b string) { t.AddCount(a, b, 1) }

// AddCount counts n rows with values a and b.
func (t *Table) AddCount(a, b string, n int64) {
	if t.Counts == nil {
		t.Counts = map[Cell]int64{}
	}
	t.Counts[Cell{a, b}] += n
}

// Merge adds the counts of o to t.
func (t *Table) Merge(o Table) {
	for c, n := range o.Counts {
		t.AddCount(c.A, c.B, n)
	}
}

// Association is Pearson's chi-square test of independence of two
// categorical columns with Cramér's V.
type Association struct {
	N int64
	// Rows and Cols are the numbers of distinct values of A and B.
	Rows, Cols int
	// ChiSquare is X² = Σ (O - E)²/E over all Rows×Cols cells, empty
	// cells included, with E = (row total)(column total)/n.
	ChiSquare float64
	DF        int
	// PValue is P(χ²_DF >= X²), the chi-square limit.
	PValue float64
	// V is Cramér's V = sqrt(X² / (n (min(r, c) - 1))) in [0, 1]: 0 for
	// independence in the sample, 1 when either column determines the
	// other. It is the measure to bound.
	V float64
	// VCorrected is Bergsma's bias-corrected V, which is nearer 0 for
	// independent columns at small n (see Independence).
	VCorrected float64
	// MinExpected is the smallest expected count; below 5 the chi-square
	// p-value is rough (Cochran 1954; common practice).
	MinExpected float64
}

// Independence tests whether the two columns are independent with
// Pearson's chi-square (Pearson 1900; (r-1)(c-1) degrees of freedom,
// Fisher 1922), without continuity correction (R's chisq.test with
// correct = FALSE), and measures the strength of association with
// Cramér's V (Cramér 1946, Mathematical Methods of Statistics).
// Rows and columns are the values that occur (with a positive count). V grows with the sample's
// chance association at small n; Bergsma (2013, "A bias-correction for
// Cramér's V and Tschuprow's T", Journal of the Korean Statistical Society
// 42(3):323-328) corrects it:
//
//	φ² = X²/n;  φ̃² = max(0, φ² - (r-1)(c-1)/(n-1))
//	r̃ = r - (r-1)²/(n-1);  c̃ = c - (c-1)²/(n-1)
//	Ṽ = sqrt(φ̃² / min(r̃-1, c̃-1))
//
// Both columns need at least two values.
func (t Table) Independence() (Association, error) {
	rowTot, colTot := map[string]int64{}, map[string]int64{}
	var n int64
	for c, k := range t.Counts {
		if k < 0 {
			return Association{}, fmt.Errorf("contingency table: negative count %d for (%q, %q)", k, c.A, c.B)
		}
		if k == 0 {
			continue
		}
		rowTot[c.A] += k
		colTot[c.B] += k
		n += k
	}
	r, c := len(rowTot), len(colTot)
	if r < 2 || c < 2 {
		return Association{}, fmt.Errorf("chi-square test of independence needs at least two values in each column, got %d and %d", r, c)
	}
	rows := sortedKeys(rowTot)
	cols := sortedKeys(colTot)
	nf := float64(n)
	x2, minE := 0.0, math.Inf(1)
	for _, a := range rows {
		for _, b := range cols {
			e := float64(rowTot[a]) * float64(colTot[b]) / nf
			d := float64(t.Counts[Cell{a, b}]) - e
			x2 += d * d / e
			minE = math.Min(minE, e)
		}
	}
	df := (r - 1) * (c - 1)
	as := Association{
		N:           n,
		Rows:        r,
		Cols:        c,
		ChiSquare:   x2,
		DF:          df,
		PValue:      distuv.ChiSquared{K: float64(df)}.Survival(x2),
		V:           math.Min(1, math.Sqrt(x2/(nf*float64(min(r, c)-1)))),
		MinExpected: minE,
	}
	if n > 1 {
		rf, cf := float64(r), float64(c)
		phi2 := math.Max(0, x2/nf-(rf-1)*(cf-1)/(nf-1))
		rt, ct := rf-(rf-1)*(rf-1)/(nf-1), cf-(cf-1)*(cf-1)/(nf-1)
		if d := math.Min(rt-1, ct-1); d > 0 {
			as.VCorrected = math.Min(1, math.Sqrt(phi2/d))
		}
	}
	return as, nil
}

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}
