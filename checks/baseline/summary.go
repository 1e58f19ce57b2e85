// Package baseline keeps a compact, mergeable, deterministic summary of
// trusted data — per column: counts, moments, a quantile sketch, a
// histogram at the sketch's quantiles and the most frequent categories —
// written as JSON so that it can live in git, and the measures that
// compare new data with it (drift.go). Its size does not grow with the
// number of rows.
package baseline

import (
	"fmt"
	"math"
	"strconv"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// Format and Version name the file format; Version changes whenever a
// reader of the previous version would misread a file.
const (
	Format  = "assay-baseline"
	Version = 1
)

// Sizes of a baseline (own choices).
const (
	// Bins is the number of histogram bins, at the i/Bins quantiles: 20
	// bins of 5% each resolve shifts finer than the deciles PSI is often
	// computed on (common practice) and keep the file small.
	Bins = 20
	// CategoryCap is how many distinct values a category summary counts
	// exactly (Misra-Gries counters).
	CategoryCap = 1024
	// TopCategories is how many of them the file lists; the rest are
	// summed as "other".
	TopCategories = 100
)

// File is a baseline file.
type File struct {
	Format  string   `json:"format"`
	Version int      `json:"version"`
	Tool    string   `json:"tool"`
	Sources []Source `json:"sources"`
	Rows    int64    `json:"rows"`
	Columns []Column `json:"columns"`
}

// Source is one input a baseline was made from.
type Source struct {
	Path   string `json:"path"`
	Bytes  int64  `json:"bytes"`
	SHA256 string `json:"sha256"`
}

// Column is the summary of one column.
type Column struct {
	Name  string `json:"name"`
	Type  string `json:"type"` // number, string, boolean (numbers include integers, timestamps, dates)
	Rows  int64  `json:"rows"`
	Nulls int64  `json:"nulls"`
	// Numbers is set for number, integer, timestamp and date columns
	// (timestamps as seconds since the Unix epoch, dates as days).
	Numbers *Numbers `json:"numbers,omitempty"`
	// Categories is set for string and boolean columns.
	Categories *CategoryCounts `json:"categories,omitempty"`
}

// Numbers summarises the finite values of a numeric column.
type Numbers struct {
	Count int64   `json:"count"`
	Mean  float64 `json:"mean"`
	Std   float64 `json:"std"` // sample standard deviation (n-1); 0 below two values
	Min   float64 `json:"min"`
	Max   float64 `json:"max"`
	// NonFinite counts NaN and infinite values, kept out of the rest.
	NonFinite int64 `json:"non_finite"`
	// Bins is a histogram whose upper edges are the sketch's i/Bins
	// quantiles (repeated edges merged); the last bin is open above.
	Bins   []Bin   `json:"bins"`
	Sketch *Sketch `json:"sketch"`
}

// Bin is a histogram bin (previous Upper, Upper] and its share of Count
// as the sketch estimates it. The first bin starts at -Inf, and the last
// has Upper = Max.
type Bin struct {
	Upper float64 `json:"upper"`
	Share float64 `json:"share"`
}

// CategoryCounts holds a text column's most frequent values.
type CategoryCounts struct {
	Top []Category `json:"top"`
	// Other counts the values not listed in Top.
	Other int64 `json:"other"`
	// Exact says Top's counts are exact and every value not listed has
	// a count at most the smallest listed; false when more than
	// CategoryCap distinct values were seen (counts then low by at most
	// the Misra-Gries bound).
	Exact bool `json:"exact"`
}

// Accumulator summarises one column from Arrow arrays. Accumulators of
// the same column that saw disjoint rows merge.
type Accumulator struct {
	Name  string
	Type  string
	Rows  int64
	Nulls int64
	// numeric state: Welford's running mean and sum of squares
	count, nonFinite int64
	mean, m2         float64
	lo, hi           float64
	sketch           *Sketch
	cats             *Categories
}

// NewAccumulator returns an empty summary of the column name of Arrow
// type dt, or an error for a type a baseline does not summarise.
func NewAccumulator(name string, dt arrow.DataType) (*Accumulator, error) {
	a := &Accumulator{Name: name, lo: math.Inf(1), hi: math.Inf(-1)}
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64, arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64,
		arrow.FLOAT32, arrow.FLOAT64, arrow.TIMESTAMP, arrow.DATE32:
		a.Type = "number"
		a.sketch, _ = NewSketch(SketchK)
	case arrow.STRING, arrow.LARGE_STRING:
		a.Type = "string"
		a.cats = NewCategories(CategoryCap)
	case arrow.BOOL:
		a.Type = "boolean"
		a.cats = NewCategories(CategoryCap)
	default:
		return nil, fmt.Errorf("column %s: a baseline does not summarise values of type %s", name, dt)
	}
	return a, nil
}

// Observe adds the values of a.
func (a *Accumulator) Observe(arr arrow.Array) {
	n := arr.Len()
	a.Rows += int64(n)
	for i := range n {
		if arr.IsNull(i) {
			a.Nulls++
			continue
		}
		if a.cats != nil {
			a.cats.Add(Text(arr, i))
			continue
		}
		a.AddNumber(Number(arr, i))
	}
}

// AddNumber adds one non-null value of a numeric column.
func (a *Accumulator) AddNumber(x float64) {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		a.nonFinite++
		return
	}
	a.count++
	d := x - a.mean
	a.mean += d / float64(a.count)
	a.m2 += d * (x - a.mean)
	a.lo, a.hi = min(a.lo, x), max(a.hi, x)
	a.sketch.Add(x)
}

// Column returns the summary as written to a file.
func (a *Accumulator) Column() Column {
	c := Column{Name: a.Name, Type: a.Type, Rows: a.Rows, Nulls: a.Nulls}
	if a.cats != nil {
		top := a.cats.Top(TopCategories)
		cc := &CategoryCounts{Top: top, Other: a.Rows - a.Nulls, Exact: a.cats.Exact()}
		for _, t := range top {
			cc.Other -= t.Count
		}
		c.Categories = cc
		return c
	}
	num := &Numbers{Count: a.count, Mean: a.mean, NonFinite: a.nonFinite, Sketch: a.sketch, Bins: []Bin{}}
	if a.count > 0 {
		num.Min, num.Max = a.lo, a.hi
		num.Bins = QuantileBins(a.sketch.Weighted(), Bins)
	}
	if a.count > 1 {
		num.Std = math.Sqrt(a.m2 / float64(a.count-1))
	}
	c.Numbers = num
	return c
}

// QuantileBins returns the histogram of d with upper edges at its i/b
// quantiles, i = 1..b, repeated edges merged, and each bin's share of d's
// total weight.
func QuantileBins(d Weighted, b int) []Bin {
	var edges []float64
	for i := 1; i <= b; i++ {
		e := d.Quantile(float64(i) / float64(b))
		if len(edges) == 0 || e > edges[len(edges)-1] {
			edges = append(edges, e)
		}
	}
	total := d.Total()
	bins := make([]Bin, len(edges))
	j := 0
	for i, x := range d.X {
		for x > edges[j] {
			j++
		}
		bins[j].Share += d.W[i] / total
	}
	for i, e := range edges {
		bins[i].Upper = e
	}
	return bins
}

// Number returns value i of a numeric array as a float64: timestamps in
// seconds since the Unix epoch, dates in days.
func Number(arr arrow.Array, i int) float64 {
	switch a := arr.(type) {
	case *array.Float64:
		return a.Value(i)
	case *array.Float32:
		return float64(a.Value(i))
	case *array.Int64:
		return float64(a.Value(i))
	case *array.Int32:
		return float64(a.Value(i))
	case *array.Int16:
		return float64(a.Value(i))
	case *array.Int8:
		return float64(a.Value(i))
	case *array.Uint64:
		return float64(a.Value(i))
	case *array.Uint32:
		return float64(a.Value(i))
	case *array.Uint16:
		return float64(a.Value(i))
	case *array.Uint8:
		return float64(a.Value(i))
	case *array.Timestamp:
		unit := a.DataType().(*arrow.TimestampType).Unit
		return float64(a.Value(i)) * float64(unit.Multiplier()) / float64(time.Second)
	case *array.Date32:
		return float64(a.Value(i))
	}
	return math.NaN()
}

// Text returns value i of a string or boolean array as text.
func Text(arr arrow.Array, i int) string {
	switch a := arr.(type) {
	case *array.String:
		return a.Value(i)
	case *array.LargeString:
		return a.Value(i)
	case *array.Boolean:
		return strconv.FormatBool(a.Value(i))
	}
	return arr.ValueStr(i)
}
