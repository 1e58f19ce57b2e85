package report

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// drift adds what a drift rule compared the column with and where it
// moved: the ranges whose share changed most, and the categories new to
// the data or gone from it.
func (v *ruleView) drift(res Result, units map[string]string) {
	d := res.Drift
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	against := d.Against
	if d.Source != "" {
		against += " " + d.Source
	}
	v.Facts = append(v.Facts, fact{"compared with", fmt.Sprintf("%s: %s rows there, %s rows here", against,
		groupDigits(d.BaseRows), groupDigits(d.Rows))})
	if !d.Exact {
		v.Facts = append(v.Facts, fact{"exact", "no: one side is a sketch or a sample"})
	}
	if d.Units != "" {
		v.Facts = append(v.Facts, fact{"likely change of units", d.Units + " (the ratio of the standard deviations is near a power of ten)"})
	}
	if len(d.Moves) > 0 {
		t := &table{
			Caption: "Value ranges whose share changed most",
			Head:    []string{"values", d.Against + " share", "share now", "change"},
			Num:     []bool{false, true, true, true},
		}
		for _, m := range d.Moves {
			change := float64(m.Share) - float64(m.BaseShare)
			sign := "+"
			if change < 0 {
				sign = ""
			}
			t.Rows = append(t.Rows, []string{moveText(m, col, units), formatPercent(float64(m.BaseShare)),
				formatPercent(float64(m.Share)), sign + formatPercent(change)})
		}
		v.Tables = append(v.Tables, t)
	}
	for _, list := range []struct {
		caption string
		cats    []DriftCategory
	}{
		{"Values new to the data", d.NewCategories},
		{"Values of the " + d.Against + " absent from the data (" + d.Against + " counts)", d.Vanished},
	} {
		if len(list.cats) == 0 {
			continue
		}
		t := &table{Caption: list.caption, Head: []string{"value", "rows"}, Num: []bool{false, true}}
		for _, c := range list.cats {
			t.Rows = append(t.Rows, []string{c.Value, groupDigits(c.Count)})
		}
		v.Tables = append(v.Tables, t)
	}
}

// moveText writes a drift range (Lower, Upper]: "45.55 to 46.87 kg",
// "above 66.91 kg", "up to 33.79 kg".
func moveText(m DriftMove, col string, units map[string]string) string {
	lo, hi := float64(m.Lower), float64(m.Upper)
	switch {
	case finite(lo, hi):
		return sig4(lo) + " to " + withUnit(hi, col, units)
	case finite(lo):
		return "above " + withUnit(lo, col, units)
	case finite(hi):
		return "up to " + withUnit(hi, col, units)
	}
	return "all values"
}

// driftChart overlays the histogram of a numeric drift rule's base
// (baseline or reference) and of the data at the base's edges: the data's
// share of the values in each bin as filled bars, the base's as a dashed
// step; the data's shares below and above the base's range as orange bars
// beside it. Shares, not counts, so that sides of any size compare.
func driftChart(res Result, units map[string]string) (*chart, error) {
	d := res.Drift
	h := d.Histogram
	if h == nil || len(h.Edges) < 2 || len(h.BaseShares) != len(h.Edges)-1 || len(h.Shares) != len(h.BaseShares) {
		return nil, nil
	}
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	lo, hi := float64(h.Edges[0]), float64(h.Edges[len(h.Edges)-1])
	if !finite(lo, hi) || hi < lo {
		return nil, nil
	}
	span := hi - lo
	if span == 0 {
		span = max(1, math.Abs(lo))
	}
	// a first bin narrower than minWidth (of no width when the base's
	// smallest value holds 5% of it or more) is drawn that wide, so that
	// it shows
	minWidth := span / 40
	now := make([]plotter.HistogramBin, len(h.Shares))
	step := plotter.XYs{{X: lo, Y: 0}}
	weights := make([]plotter.HistogramBin, len(h.Shares)) // the taller side, for the legend's place
	for i := range h.Shares {
		x0, x1 := float64(h.Edges[i]), float64(h.Edges[i+1])
		if x1-x0 < minWidth && i == 0 {
			x0 = x1 - minWidth
			step[0].X = x0
		}
		b, c := float64(h.BaseShares[i]), float64(h.Shares[i])
		now[i] = plotter.HistogramBin{Min: x0, Max: x1, Weight: c}
		weights[i] = plotter.HistogramBin{Min: x0, Max: x1, Weight: max(b, c)}
		step = append(step, plotter.XY{X: x0, Y: b}, plotter.XY{X: x1, Y: b})
	}
	step = append(step, plotter.XY{X: hi, Y: 0})
	p := newPlot(axisLabel(col, units), "share of values in the bin")
	cur := &bars{bins: now, fill: colBarFill, line: styleBars}
	p.Add(cur)
	p.Legend.Add("now", cur)
	entries := 2
	// the shares outside the base's range, as bars a twentieth of it wide
	// beside it (their x position is not to scale)
	w, gap := span/20, span/80
	var outside []plotter.HistogramBin
	var words []string
	if v := float64(h.Below); v > 0 {
		outside = append(outside, plotter.HistogramBin{Min: step[0].X - gap - w, Max: step[0].X - gap, Weight: v})
		words = append(words, fmt.Sprintf("%s lie below %s", formatPercent(v), withUnit(lo, col, units)))
	}
	if v := float64(h.Above); v > 0 {
		outside = append(outside, plotter.HistogramBin{Min: hi + gap, Max: hi + gap + w, Weight: v})
		words = append(words, fmt.Sprintf("%s lie above %s", formatPercent(v), withUnit(hi, col, units)))
	}
	if len(outside) > 0 {
		o := &bars{bins: outside, fill: colFlagged, line: styleFlaggedBars}
		p.Add(o)
		p.Legend.Add("now, outside the "+d.Against+"'s range", o)
		weights = append(weights, outside...)
		entries++
	}
	ref := &plotter.Line{XYs: step, LineStyle: styleBaseStep}
	p.Add(ref)
	p.Legend.Add("in the "+d.Against, ref)
	legendAway(p, weights)
	headroom(p, entries)
	p.X.Min, p.X.Max = p.X.Min-gap, p.X.Max+gap
	desc := fmt.Sprintf("Share of the values of %s in each of %d bins from %s to %s, the %s's quantile bins: now as filled bars, "+
		"in the %s as a dashed step.", col, len(now), withUnit(lo, col, units), withUnit(hi, col, units), d.Against, d.Against)
	if len(words) > 0 {
		desc += " Outside the " + d.Against + "'s range (orange bars beside it, not to scale): " + strings.Join(words, "; ") + "."
	}
	if g := largestGain(h); g >= 0 {
		desc += fmt.Sprintf(" The bin that gained most, %s to %s, holds %s now and %s in the %s.", sig4(float64(h.Edges[g])),
			withUnit(float64(h.Edges[g+1]), col, units), formatPercent(float64(h.Shares[g])), formatPercent(float64(h.BaseShares[g])), d.Against)
	}
	if d.Units != "" {
		desc += " The spread changed by about " + d.Units + ": a likely change of units."
	}
	return render(p, fmt.Sprintf("Histograms of %s now and in the %s", col, d.Against), desc, chartW, chartH)
}

// styleBaseStep is the outline of the base's histogram in a drift chart:
// dashed and dark, over the data's filled bars.
var styleBaseStep = draw.LineStyle{Color: colInk, Width: 1.5, Dashes: []vg.Length{5, 2.5}}

// largestGain is the bin whose share grew most from the base to the data,
// or -1 when none grew.
func largestGain(h *DriftHistogram) int {
	best, gain := -1, 0.0
	for i := range h.Shares {
		if g := float64(h.Shares[i]) - float64(h.BaseShares[i]); g > gain {
			best, gain = i, g
		}
	}
	return best
}
