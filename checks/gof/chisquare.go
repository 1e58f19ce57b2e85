package gof

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

// Cell is one cell of a chi-square test after pooling: the input cells
// First..Last (inclusive, counted from 0), their observed count and their
// expected count under the reference.
type Cell struct {
	First, Last int
	Observed    int64
	Expected    float64
}

// ChiSquareResult is the outcome of ChiSquare: the common Result plus the
// degrees of freedom and the cells after pooling, which show where the
// observed counts depart from the expected ones.
type ChiSquareResult struct {
	Result
	DF    int
	Cells []Cell
}

// ChiSquareOptions sets the pooling and the degrees of freedom.
type ChiSquareOptions struct {
	// Estimated is the number of reference parameters estimated from the
	// same data; each removes one degree of freedom.
	Estimated int
	// MinExpected is the smallest expected count a cell may have; adjacent
	// cells are pooled until every cell reaches it. Zero means 5.
	MinExpected float64
}

// ChiSquare is Pearson's (1900) chi-square goodness-of-fit test of observed
// counts in k ordered cells against cell probabilities probs:
//
//	X² = sum_i (O_i - E_i)² / E_i,  E_i = n p_i,  n = sum_i O_i
//
// compared with the chi-square distribution with
// df = cells - 1 - Estimated degrees of freedom (gonum's ChiSquared).
//
// Before that, adjacent cells are pooled from the left until each pooled
// cell expects at least MinExpected counts; a remainder at the right end
// below it joins the cell before it. An expected count of at least 5 per
// cell is the rule of thumb attributed to Cochran (1954), "Some methods for
// strengthening the common chi-square tests", Biometrics 10:417-451 (common
// practice; Cochran himself allowed some smaller cells). Pooling runs in
// the given order, so pass ordered cells (integers, bins) in order; for
// categories the order of the list decides which ones are pooled.
//
// probs must be non-negative and sum to 1 within 1e-6 (they are
// rescaled to sum exactly 1). The effect size is the total variation
// distance (1/2) sum_i |O_i/n - p_i| over the cells as given, before pooling:
// the largest difference between the observed and the expected share of any
// set of cells, which does not grow with n.
func ChiSquare(observed []int64, probs []float64, opt ChiSquareOptions) (ChiSquareResult, error) {
	if len(observed) != len(probs) {
		return ChiSquareResult{}, fmt.Errorf("chi-square has %d observed counts but %d probabilities", len(observed), len(probs))
	}
	var n int64
	var psum float64
	for i, o := range observed {
		p := probs[i]
		if o < 0 {
			return ChiSquareResult{}, fmt.Errorf("chi-square cell %d has a negative count %d", i+1, o)
		}
		if !(p >= 0) || math.IsInf(p, 0) {
			return ChiSquareResult{}, fmt.Errorf("chi-square cell %d has probability %v; probabilities must be finite and >= 0", i+1, p)
		}
		n += o
		psum += p
	}
	if n == 0 {
		return ChiSquareResult{}, errors.New("chi-square needs at least one counted value")
	}
	if math.Abs(psum-1) > 1e-6 {
		return ChiSquareResult{}, fmt.Errorf("chi-square cell probabilities sum to %v, not 1", psum)
	}
	minExp := opt.MinExpected
	if minExp <= 0 {
		minExp = 5
	}
	nf := float64(n)
	var tv float64
	for i, o := range observed {
		tv += math.Abs(float64(o)/nf - probs[i]/psum)
	}
	cells := poolCells(observed, probs, nf/psum, minExp)
	df := len(cells) - 1 - opt.Estimated
	if df < 1 {
		return ChiSquareResult{}, fmt.Errorf("chi-square has %d cells after pooling to expected counts of at least %g and %d estimated parameters, which leaves %d degrees of freedom; it needs at least 1 (more data or fewer, wider cells)",
			len(cells), minExp, opt.Estimated, df)
	}
	var x2 float64
	for _, c := range cells {
		d := float64(c.Observed) - c.Expected
		if c.Expected == 0 {
			if c.Observed > 0 {
				x2 = math.Inf(1)
			}
			continue
		}
		x2 += d * d / c.Expected
	}
	res := Result{
		Test:      ChiSq,
		Statistic: Statistic{Name: "X2", Value: x2},
		PValue:    clamp01(distuv.ChiSquared{K: float64(df)}.Survival(x2)),
		N:         int(n),
		Method:    Method{Kind: Asymptotic, Source: "Pearson (1900), chi-square distribution"},
		Effect:    Statistic{Name: "total variation", Value: tv / 2},
	}
	return ChiSquareResult{Result: res, DF: df, Cells: cells}, nil
}

// poolCells pools adjacent cells left to right until each expects at least
// minExp (expected count = scale * prob); a short remainder joins the last
// full cell.
func poolCells(observed []int64, probs []float64, scale, minExp float64) []Cell {
	var cells []Cell
	cur := Cell{First: 0, Last: -1}
	for i, o := range observed {
		cur.Last = i
		cur.Observed += o
		cur.Expected += scale * probs[i]
		if cur.Expected >= minExp {
			cells = append(cells, cur)
			cur = Cell{First: i + 1, Last: i}
		}
	}
	if cur.Last >= cur.First {
		if len(cells) == 0 {
			return []Cell{cur}
		}
		last := &cells[len(cells)-1]
		last.Last = cur.Last
		last.Observed += cur.Observed
		last.Expected += cur.Expected
	}
	return cells
}

// maxIntegerCells bounds the number of unit cells IntegerCells makes.
const maxIntegerCells = 1 << 20

// IntegerCells counts an integer-valued sample (counts, a discrete family's
// support) in unit cells lo, lo+1, ..., hi, the observed range, and gives
// each cell's probability under the discrete reference ref, the end cells
// taking the tails: P(X <= lo), P(X = k) = F(k) - F(k-1) inside, and
// P(X >= hi) = 1 - F(hi - 1). The probabilities therefore sum to 1 and can
// be passed to ChiSquare with the counts. lo is returned for labelling.
// Non-integer values are an error that says how many there are and shows
// the first.
func IntegerCells(s Sorted, ref CDF) (observed []int64, probs []float64, lo int64, err error) {
	if len(s.x) == 0 {
		return nil, nil, 0, errors.New("integer cells need at least one value")
	}
	bad, first := 0, 0.0
	for _, v := range s.x {
		if v != math.Trunc(v) {
			if bad == 0 {
				first = v
			}
			bad++
		}
	}
	if bad > 0 {
		return nil, nil, 0, fmt.Errorf("%d of %d values are not integers (the first is %v); a discrete family needs whole numbers", bad, len(s.x), first)
	}
	lof, hif := s.x[0], s.x[len(s.x)-1]
	if hif-lof >= maxIntegerCells {
		return nil, nil, 0, fmt.Errorf("integer values span %v to %v, more than %d cells; bin them instead", lof, hif, maxIntegerCells)
	}
	lo = int64(lof)
	k := int(hif-lof) + 1
	observed = make([]int64, k)
	for _, v := range s.x {
		observed[int(v-lof)]++
	}
	probs = make([]float64, k)
	prev := 0.0
	for i := range k - 1 {
		c := ref.CDF(lof + float64(i))
		probs[i] = c - prev
		prev = c
	}
	probs[k-1] = survival(ref, hif-1)
	if k == 1 {
		probs[0] = 1
	}
	return observed, probs, lo, nil
}

// BinCells counts a sample in the cells (-inf, e_1], (e_1, e_2], ...,
// (e_k, inf) given by strictly increasing finite edges, and gives each
// cell's probability under ref: F(e_1), F(e_2) - F(e_1), ..., 1 - F(e_k).
// Pass the result to ChiSquare for binned continuous data. Equal-probability
// bins (edges at reference quantiles) are a common choice (Mann & Wald 1942).
func BinCells(s Sorted, ref CDF, edges []float64) (observed []int64, probs []float64, err error) {
	if len(edges) == 0 {
		return nil, nil, errors.New("bins need at least one edge")
	}
	for i, e := range edges {
		if math.IsNaN(e) || math.IsInf(e, 0) {
			return nil, nil, fmt.Errorf("bin edge %d is %v; edges must be finite", i+1, e)
		}
		if i > 0 && !(e > edges[i-1]) {
			return nil, nil, fmt.Errorf("bin edges must increase strictly: edge %d (%v) follows %v", i+1, e, edges[i-1])
		}
	}
	k := len(edges) + 1
	observed = make([]int64, k)
	probs = make([]float64, k)
	start, prev := 0, 0.0
	for i, e := range edges {
		end := sort.Search(len(s.x), func(j int) bool { return s.x[j] > e })
		observed[i] = int64(end - start)
		start = end
		c := ref.CDF(e)
		probs[i] = c - prev
		prev = c
	}
	observed[k-1] = int64(len(s.x) - start)
	probs[k-1] = survival(ref, edges[len(edges)-1])
	return observed, probs, nil
}
