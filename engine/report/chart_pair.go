package report

import (
	"fmt"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg/draw"
)

// glyphSample is the glyph of the plotted sample of a pair rule's rows,
// smaller than glyphPoint: up to 500 of them share the plot.
var glyphSample = draw.GlyphStyle{Color: colBlue, Radius: 1.8, Shape: draw.RingGlyph{}}

// pairChart draws a pair rule's scatter plot: the sample of rows the
// result keeps as hollow circles, its listed offending rows as filled
// triangles, the fitted line (solid) with, for standardized residuals, the
// band within cutoff × scale of it (dashed), and for ordered columns the
// diagonal where the two are equal (dashed).
func pairChart(res Result, units map[string]string) (*chart, error) {
	pr := res.Pair
	if pr.Points == nil || len(res.Columns) < 2 || len(pr.Points.X) != len(pr.Points.Y) {
		return nil, nil
	}
	xc, yc := res.Columns[0], res.Columns[1]
	var pts plotter.XYs
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := range pr.Points.X {
		x, y := float64(pr.Points.X[i]), float64(pr.Points.Y[i])
		if finite(x, y) {
			pts = append(pts, plotter.XY{X: x, Y: y})
			lo, hi = min(lo, x), max(hi, x)
		}
	}
	var flagged plotter.XYs
	if res.Offending != nil {
		for _, row := range res.Offending.Rows {
			x, okx := number(row.Values[xc])
			y, oky := number(row.Values[yc])
			if okx && oky {
				flagged = append(flagged, plotter.XY{X: x, Y: y})
				lo, hi = min(lo, x), max(hi, x)
			}
		}
	}
	if len(pts)+len(flagged) == 0 {
		return nil, nil
	}
	p := newPlot(axisLabel(xc, units), axisLabel(yc, units))
	entries := 0
	what := "rows"
	if int64(len(pts)) < pr.N {
		what = fmt.Sprintf("a sample of %d of %s rows", len(pts), groupDigits(pr.N))
	}
	desc := fmt.Sprintf("Scatter plot of %s against %s: %s as hollow circles.", yc, xc, what)
	if len(pts) > 0 {
		s := &plotter.Scatter{XYs: pts, GlyphStyle: glyphSample}
		p.Add(s)
		p.Legend.Add(what, s)
		entries++
	}
	if l := pr.Line; l != nil && finite(float64(l.Intercept), float64(l.Slope), lo, hi) {
		a, b := float64(l.Intercept), float64(l.Slope)
		at := func(x, off float64) plotter.XY { return plotter.XY{X: x, Y: a + b*x + off} }
		line := &plotter.Line{XYs: plotter.XYs{at(lo, 0), at(hi, 0)}, LineStyle: styleFit}
		p.Add(line)
		p.Legend.Add(l.Fit+" line", line)
		entries++
		desc += fmt.Sprintf(" A solid line is the fitted %s line %s = %s + %s × %s.", l.Fit, yc, sig4(a), sig4(b), xc)
		if l.Rule == "standardized" && l.Cutoff != nil && finite(float64(*l.Cutoff), float64(l.Scale)) {
			w := float64(*l.Cutoff) * float64(l.Scale)
			band := plotter.XYs{at(lo, w), at(hi, w)}
			up := &plotter.Line{XYs: band, LineStyle: styleThreshold}
			down := &plotter.Line{XYs: plotter.XYs{at(lo, -w), at(hi, -w)}, LineStyle: styleThreshold}
			p.Add(up, down)
			p.Legend.Add("cutoff × scale from the line", up)
			entries++
			desc += fmt.Sprintf(" Dashed lines run %s above and below it (cutoff %s times the residual scale %s).",
				sig4(w), sig4(float64(*l.Cutoff)), sig4(float64(l.Scale)))
		}
	}
	if pr.Relation == "ordered" && finite(lo, hi) {
		eq := &plotter.Line{XYs: plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}}, LineStyle: styleReference}
		p.Add(eq)
		p.Legend.Add(yc+" = "+xc, eq)
		entries++
		desc += fmt.Sprintf(" A dashed diagonal marks %s = %s; rows below it break the order.", yc, xc)
	}
	if len(flagged) > 0 {
		s := &plotter.Scatter{XYs: flagged, GlyphStyle: glyphFlagged}
		p.Add(s)
		p.Legend.Add("listed offending rows", s)
		entries++
		desc += fmt.Sprintf(" Filled triangles mark the %d offending rows listed below.", len(flagged))
	}
	p.Legend.Left = true
	headroom(p, entries)
	return render(p, fmt.Sprintf("Scatter plot of %s against %s (%s)", yc, xc, pr.Relation), desc, chartW, chartH)
}
