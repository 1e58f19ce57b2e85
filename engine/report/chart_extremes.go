package report

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// extremesCharts draws the charts of an extremes rule: the column's
// histogram with the thresholds and, when the rule kept the quartiles, a
// box plot with the thresholds and the listed extreme values.
func extremesCharts(res Result, units map[string]string) ([]*chart, error) {
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	var out []*chart
	if c, err := extremesHistogram(res, col, units); err != nil {
		return nil, err
	} else if c != nil {
		out = append(out, c)
	}
	if c, err := boxChart(res, col, units); err != nil {
		return nil, err
	} else if c != nil {
		out = append(out, c)
	}
	return out, nil
}

// fences returns the finite thresholds of an extremes rule as vertical
// lines (from y = lo to hi when they differ), and their description.
func fences(e *Extremes, col string, units map[string]string, lo, hi float64) ([]plot.Plotter, []string) {
	var lines []plot.Plotter
	var words []string
	for _, f := range []struct {
		at   *Number
		side string
	}{{e.Lower, "lower"}, {e.Upper, "upper"}} {
		if f.at == nil || !finite(float64(*f.at)) {
			continue
		}
		lines = append(lines, &vline{x: float64(*f.at), lo: lo, hi: hi, style: styleThreshold})
		words = append(words, f.side+" threshold "+withUnit(float64(*f.at), col, units))
	}
	return lines, words
}

// extremesHistogram draws the histogram of an extremes rule's column with
// its thresholds as dashed lines and the bins beyond them set apart.
func extremesHistogram(res Result, col string, units map[string]string) (*chart, error) {
	e := res.Extremes
	bins := histBins(e.Histogram)
	if bins == nil {
		return nil, nil
	}
	lo, hi := math.Inf(-1), math.Inf(1)
	if e.Lower != nil {
		lo = float64(*e.Lower)
	}
	if e.Upper != nil {
		hi = float64(*e.Upper)
	}
	flagged := map[int]bool{}
	for i, b := range bins {
		if b.Weight > 0 && (b.Max <= lo || b.Min >= hi) {
			flagged[i] = true
		}
	}
	p, entries := histogramPlot(e.Histogram, bins, axisLabel(col, units), "fitted family", flagged, "bins beyond a threshold")
	var tallest float64
	for _, b := range bins {
		tallest = max(tallest, b.Weight)
	}
	// The lines stop above the tallest bar, below the legend.
	lines, words := fences(e, col, units, 0, 1.08*tallest)
	p.Add(lines...)
	if len(lines) > 0 {
		p.Legend.Add("threshold ("+e.Method+")", lines[0].(*vline))
		entries++
	}
	// The listed extreme values, in the strip under the bars: a bin of one
	// value is too low to see beside the bulk of the column.
	if pts := listedValues(res, col); len(pts) > 0 {
		s := &strip{pts: pts, glyph: glyphFlagged}
		p.Add(s)
		p.Legend.Add("listed extreme values", s)
		entries++
		underStrip(p)
	}
	headroom(p, entries)
	desc := fmt.Sprintf("%s values of %s in %d bins from %s to %s.", groupDigits(histTotal(bins)), col, len(bins),
		withUnit(bins[0].Min, col, units), withUnit(bins[len(bins)-1].Max, col, units))
	if len(words) > 0 {
		desc += " Dashed lines mark the " + strings.Join(words, " and ") + "."
	}
	if len(flagged) > 0 {
		desc += fmt.Sprintf(" Darker bars with a heavier outline hold values beyond them: %s below, %s above.",
			groupDigits(e.Below), groupDigits(e.Above))
	}
	return render(p, fmt.Sprintf("Histogram of %s with the %s thresholds", col, e.Method), desc, chartW, chartH)
}

// boxChart draws a horizontal box plot of an extremes rule's column: the
// box from the first to the third quartile with the median, whiskers to
// the least and greatest values that are not extreme, the thresholds as
// dashed lines, and the listed extreme values as filled triangles.
func boxChart(res Result, col string, units map[string]string) (*chart, error) {
	e := res.Extremes
	b := e.Box
	if b == nil || !finite(float64(b.Min), float64(b.Q1), float64(b.Median), float64(b.Q3), float64(b.Max),
		float64(b.WhiskerLo), float64(b.WhiskerHi)) {
		return nil, nil
	}
	p := newPlot(axisLabel(col, units), "")
	p.HideY()
	bx := &box{b: *b}
	p.Add(bx)
	p.Legend.Add("quartiles, median, whiskers", bx)
	entries := 1
	lines, words := fences(e, col, units, -1, 1)
	p.Add(lines...)
	if len(lines) > 0 {
		p.Legend.Add("threshold ("+e.Method+")", lines[0].(*vline))
		entries++
	}
	pts := listedValues(res, col)
	if len(pts) > 0 {
		s := &plotter.Scatter{XYs: pts, GlyphStyle: glyphFlagged}
		p.Add(s)
		p.Legend.Add("listed extreme values", s)
		entries++
	}
	p.Y.Min, p.Y.Max = -1, 1+0.6*float64(entries)
	p.Legend.Left = true
	desc := fmt.Sprintf("Box plot of %s: quartiles %s and %s around the median %s; whiskers from %s to %s; values from %s to %s.",
		col, withUnit(float64(b.Q1), col, units), withUnit(float64(b.Q3), col, units), withUnit(float64(b.Median), col, units),
		withUnit(float64(b.WhiskerLo), col, units), withUnit(float64(b.WhiskerHi), col, units),
		withUnit(float64(b.Min), col, units), withUnit(float64(b.Max), col, units))
	if len(words) > 0 {
		desc += " Dashed lines mark the " + strings.Join(words, " and ") + "."
	}
	if len(pts) > 0 {
		desc += fmt.Sprintf(" Filled triangles mark the %d extreme values listed below.", len(pts))
	}
	return render(p, fmt.Sprintf("Box plot of %s with the %s thresholds", col, e.Method), desc, chartW, boxH)
}

// jointChart plots the squared Mahalanobis distances of a joint rule's
// rows against the chi-square quantiles they would follow were the rows
// multivariate normal, with the cutoff; points beyond it are filled
// triangles.
func jointChart(res Result) (*chart, error) {
	j := res.Joint
	pts, lo, hi := qqPoints(j.QQ)
	if pts == nil {
		return nil, nil
	}
	cut := float64(j.Cutoff)
	var inside, beyond plotter.XYs
	for _, pt := range pts {
		if finite(cut) && pt.Y > cut {
			beyond = append(beyond, pt)
		} else {
			inside = append(inside, pt)
		}
	}
	p := newPlot(fmt.Sprintf("chi-square quantiles, %d degrees of freedom", j.DF), "squared distance")
	ref := &plotter.Line{XYs: plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}}, LineStyle: styleReference}
	p.Add(ref)
	entries := 1
	if len(inside) > 0 {
		s := &plotter.Scatter{XYs: inside, GlyphStyle: glyphPoint}
		p.Add(s)
		p.Legend.Add("rows", s)
		entries++
	}
	if len(beyond) > 0 {
		s := &plotter.Scatter{XYs: beyond, GlyphStyle: glyphFlagged}
		p.Add(s)
		p.Legend.Add("rows beyond the cutoff", s)
		entries++
	}
	p.Legend.Add("where they would lie", ref)
	if finite(cut) {
		c := &hline{y: cut, style: styleThreshold}
		p.Add(c)
		p.Legend.Add("cutoff "+sig4(cut), c)
		entries++
	}
	p.Legend.Left = true
	headroom(p, entries)
	cols := strings.Join(res.Columns, ", ")
	desc := fmt.Sprintf("%d quantiles of the rows' squared Mahalanobis distances over %s against the chi-square "+
		"quantiles with %d degrees of freedom; a dashed diagonal marks where they would lie for multivariate normal rows.",
		len(pts), cols, j.DF)
	if finite(cut) {
		desc += fmt.Sprintf(" A dashed horizontal line marks the cutoff %s (the chi-square %s quantile); %d of the plotted "+
			"quantiles lie above it, as filled triangles.", sig4(cut), sig4(float64(j.Quantile)), len(beyond))
	}
	return render(p, "Squared Mahalanobis distances of "+cols+" against chi-square quantiles", desc, chartW, chartH)
}

// listedValues returns the numbers of col in a result's listed offending
// rows, as points at y = 0.
func listedValues(res Result, col string) plotter.XYs {
	var pts plotter.XYs
	if res.Offending != nil {
		for _, row := range res.Offending.Rows {
			if v, ok := number(row.Values[col]); ok {
				pts = append(pts, plotter.XY{X: v})
			}
		}
	}
	return pts
}

// strip draws glyphs at the x of its points in the strip that underStrip
// keeps below y = 0.
type strip struct {
	pts   plotter.XYs
	glyph draw.GlyphStyle
}

// Plot implements plot.Plotter.
func (s *strip) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	y := (c.Min.Y + trY(0)) / 2
	for _, pt := range s.pts {
		c.DrawGlyph(s.glyph, vg.Point{X: trX(pt.X), Y: y})
	}
}

// DataRange implements plot.DataRanger: the points' x range.
func (s *strip) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = math.Inf(1), math.Inf(-1)
	for _, pt := range s.pts {
		xmin, xmax = min(xmin, pt.X), max(xmax, pt.X)
	}
	return xmin, xmax, math.Inf(1), math.Inf(-1)
}

// GlyphBoxes implements plot.GlyphBoxer, so that the plot leaves room
// for the glyphs at its edges.
func (s *strip) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	bs := make([]plot.GlyphBox, len(s.pts))
	for i, pt := range s.pts {
		bs[i] = plot.GlyphBox{X: p.X.Norm(pt.X), Y: 0, Rectangle: s.glyph.Rectangle()}
	}
	return bs
}

// Thumbnail implements plot.Thumbnailer.
func (s *strip) Thumbnail(c *draw.Canvas) {
	c.DrawGlyph(s.glyph, c.Center())
}

// number reads a listed value as a float64.
func number(v any) (float64, bool) {
	var f float64
	switch x := v.(type) {
	case float64:
		f = x
	case int64:
		f = float64(x)
	case int:
		f = float64(x)
	default:
		return 0, false
	}
	return f, finite(f)
}

// vline is a vertical line at x over the plot's height, or from y = lo to
// hi when they differ; its x counts in the plot's range, so that a
// threshold beyond the data still shows.
type vline struct {
	x      float64
	lo, hi float64
	style  draw.LineStyle
}

// Plot implements plot.Plotter.
func (l *vline) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	x := trX(l.x)
	y0, y1 := c.Min.Y, c.Max.Y
	if l.lo < l.hi {
		y0, y1 = trY(l.lo), trY(l.hi)
	}
	c.StrokeLine2(l.style, x, y0, x, y1)
}

// DataRange implements plot.DataRanger; the empty y range leaves the
// plot's alone.
func (l *vline) DataRange() (xmin, xmax, ymin, ymax float64) {
	return l.x, l.x, math.Inf(1), math.Inf(-1)
}

// Thumbnail implements plot.Thumbnailer.
func (l *vline) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(l.style, c.Min.X, y, c.Max.X, y)
}

// hline is a horizontal line at y across the plot.
type hline struct {
	y     float64
	style draw.LineStyle
}

// Plot implements plot.Plotter.
func (l *hline) Plot(c draw.Canvas, p *plot.Plot) {
	_, trY := p.Transforms(&c)
	y := trY(l.y)
	c.StrokeLine2(l.style, c.Min.X, y, c.Max.X, y)
}

// DataRange implements plot.DataRanger.
func (l *hline) DataRange() (xmin, xmax, ymin, ymax float64) {
	return math.Inf(1), math.Inf(-1), l.y, l.y
}

// Thumbnail implements plot.Thumbnailer.
func (l *hline) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(l.style, c.Min.X, y, c.Max.X, y)
}

// box draws a horizontal box plot at y = 0 from a five-number summary.
type box struct{ b Box }

// boxHalf is half the box's height, in points.
const boxHalf = 12

// Plot implements plot.Plotter.
func (bx *box) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	b := bx.b
	y := trY(0)
	q1, q3, med := trX(float64(b.Q1)), trX(float64(b.Q3)), trX(float64(b.Median))
	wlo, whi := trX(float64(b.WhiskerLo)), trX(float64(b.WhiskerHi))
	c.FillPolygon(colBarFill, []vg.Point{{X: q1, Y: y - boxHalf}, {X: q3, Y: y - boxHalf}, {X: q3, Y: y + boxHalf}, {X: q1, Y: y + boxHalf}})
	edge := draw.LineStyle{Color: colInk, Width: 1}
	c.StrokeLines(edge, []vg.Point{{X: q1, Y: y - boxHalf}, {X: q3, Y: y - boxHalf}, {X: q3, Y: y + boxHalf},
		{X: q1, Y: y + boxHalf}, {X: q1, Y: y - boxHalf}})
	c.StrokeLine2(draw.LineStyle{Color: colInk, Width: 2.5}, med, y-boxHalf, med, y+boxHalf)
	c.StrokeLine2(edge, wlo, y, q1, y)
	c.StrokeLine2(edge, q3, y, whi, y)
	c.StrokeLine2(edge, wlo, y-boxHalf/2, wlo, y+boxHalf/2)
	c.StrokeLine2(edge, whi, y-boxHalf/2, whi, y+boxHalf/2)
}

// DataRange implements plot.DataRanger.
func (bx *box) DataRange() (xmin, xmax, ymin, ymax float64) {
	return float64(bx.b.Min), float64(bx.b.Max), 0, 0
}

// Thumbnail implements plot.Thumbnailer.
func (bx *box) Thumbnail(c *draw.Canvas) {
	pts := []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}}
	c.FillPolygon(colBarFill, pts)
	c.StrokeLines(draw.LineStyle{Color: colInk, Width: 1}, append(pts, pts[0]))
	mid := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(draw.LineStyle{Color: colInk, Width: 2.5}, mid, c.Min.Y, mid, c.Max.Y)
}
