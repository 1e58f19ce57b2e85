package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// chart is one inline SVG chart of the HTML report: a gonum/plot drawing
// with the title and description a screen reader announces in its place.
type chart struct {
	ID     string // unique in the page; set by the page
	Title  string
	Desc   string
	Width  float64 // the drawing's size in SVG user units (points)
	Height float64
	// Body is the drawing's SVG elements as vgsvg writes them, which
	// escapes every text it draws (tick labels, axis labels holding column
	// names) with html.EscapeString.
	Body template.HTML
}

// Chart sizes, in points. Fonts are sized for a chart shown between about
// 350 and 600 pixels wide.
const (
	chartW   = 330
	chartH   = 225
	boxH     = 130
	tickSize = 10.5
	textSize = 11.5
)

// The palette of Okabe and Ito (2008), "Color Universal Design (CUD): how
// to make figures and presentations that are friendly to colorblind
// people", https://jfly.uni-koeln.de/color/: hues told apart with every
// common form of colour blindness. The charts also set each mark apart by
// shape or line style, so that they read in grayscale.
var (
	colInk     = color.RGBA{0x22, 0x22, 0x22, 0xff}
	colBlue    = color.RGBA{0x00, 0x72, 0xb2, 0xff}
	colVermil  = color.RGBA{0xd5, 0x5e, 0x00, 0xff}
	colBarFill = color.RGBA{0xbf, 0xe1, 0xf6, 0xff} // sky blue (0x56b4e9) lightened
	colBarLine = color.RGBA{0x4d, 0x4d, 0x4d, 0xff}
	colFlagged = color.RGBA{0xe6, 0x9f, 0x00, 0xff} // orange: darker than colBarFill in grayscale
	colGrid    = color.RGBA{0xdd, 0xdd, 0xdd, 0xff}
)

// Line styles: solid for what is fitted, dashed for thresholds and
// reference lines; flagged bars have a heavier outline.
var (
	styleFit         = draw.LineStyle{Color: colBlue, Width: 2}
	styleReference   = draw.LineStyle{Color: colInk, Width: 1, Dashes: []vg.Length{4, 3}}
	styleThreshold   = draw.LineStyle{Color: colVermil, Width: 1.5, Dashes: []vg.Length{6, 3}}
	styleBars        = draw.LineStyle{Color: colBarLine, Width: 0.5}
	styleFlaggedBars = draw.LineStyle{Color: colInk, Width: 1.2}
)

// Point glyphs: hollow circles for ordinary values, filled triangles for
// flagged ones.
var (
	glyphPoint   = draw.GlyphStyle{Color: colBlue, Radius: 2.2, Shape: draw.RingGlyph{}}
	glyphFlagged = draw.GlyphStyle{Color: colVermil, Radius: 3.5, Shape: draw.PyramidGlyph{}}
)

// sans is the charts' typeface. Its metrics match Arial and Helvetica, the
// fallbacks the page's style sheet names for browsers without it.
var sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// newPlot returns an empty plot with the report's fonts, axis labels and a
// light grid.
func newPlot(xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.TextStyle.Font = font.From(sans, textSize)
	for _, ax := range []*plot.Axis{&p.X, &p.Y} {
		ax.Label.TextStyle.Font = font.From(sans, textSize)
		ax.Label.TextStyle.Color = colInk
		ax.Tick.Label.Font = font.From(sans, tickSize)
		ax.Tick.Label.Color = colInk
		ax.Color = colInk
		ax.Tick.Color = colInk
		ax.Tick.Marker = tidyTicks{}
	}
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.Legend.TextStyle.Font = font.From(sans, tickSize)
	p.Legend.TextStyle.Color = colInk
	p.Legend.Top = true
	p.Legend.ThumbnailWidth = 18
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = colGrid, colGrid
	p.Add(g)
	return p
}

// render draws p as SVG and returns the chart. The drawing's own <svg>
// element is dropped: the page writes one with a viewBox, a title and a
// description, so the chart scales to its box.
func render(p *plot.Plot, title, desc string, w, h float64) (*chart, error) {
	c := vgsvg.New(vg.Length(w), vg.Length(h))
	p.Draw(draw.New(c))
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("drawing chart %q: %w", title, err)
	}
	s := b.String()
	i := strings.Index(s, "<svg")
	if i < 0 {
		return nil, fmt.Errorf("drawing chart %q: no <svg> element in the drawing", title)
	}
	j := strings.IndexByte(s[i:], '>')
	body, ok := strings.CutSuffix(strings.TrimRight(s[i+j+1:], "\n"), "</svg>")
	if j < 0 || !ok {
		return nil, fmt.Errorf("drawing chart %q: unexpected SVG layout", title)
	}
	return &chart{Title: title, Desc: desc, Width: w, Height: h, Body: template.HTML(body)}, nil
}

// axisLabel is a column's name with its unit: "weight_kg (kg)".
func axisLabel(col string, units map[string]string) string {
	if u := units[col]; u != "" {
		return col + " (" + u + ")"
	}
	return col
}

// withUnit writes a value of col with its unit: "33.44 °C".
func withUnit(v float64, col string, units map[string]string) string {
	s := sig4(v)
	if u := units[col]; u != "" {
		if u == "%" {
			return s + u
		}
		return s + " " + u
	}
	return s
}

// finite reports whether every value is a finite number.
func finite(vs ...float64) bool {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// fitCharts draws the charts of a distribution rule: a histogram with the
// fitted density and the regions where the data exceed it, and a Q-Q
// plot, for numeric families; observed against expected shares for
// categories and leading digits.
func fitCharts(res Result, units map[string]string) ([]*chart, error) {
	f := res.Fit
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	var out []*chart
	add := func(c *chart, err error) error {
		if c != nil {
			out = append(out, c)
		}
		return err
	}
	if err := add(fitHistogram(f, col, units)); err != nil {
		return nil, err
	}
	if err := add(qqChart(f, col, units)); err != nil {
		return nil, err
	}
	if err := add(cellsChart(f, col)); err != nil {
		return nil, err
	}
	return out, nil
}

// histBins turns a report histogram into plot bins, or nil when its edges
// are not finite and increasing or its counts do not match them.
func histBins(h *Histogram) []plotter.HistogramBin {
	if h == nil || len(h.Edges) < 2 || len(h.Counts) != len(h.Edges)-1 {
		return nil
	}
	bins := make([]plotter.HistogramBin, len(h.Counts))
	for i, c := range h.Counts {
		lo, hi := float64(h.Edges[i]), float64(h.Edges[i+1])
		if !finite(lo, hi) || hi < lo || c < 0 {
			return nil
		}
		bins[i] = plotter.HistogramBin{Min: lo, Max: hi, Weight: float64(c)}
	}
	if bins[len(bins)-1].Max == bins[0].Min {
		// one value: give the single bin a width so that it shows
		bins[0].Min, bins[0].Max = bins[0].Min-0.5, bins[0].Max+0.5
	}
	return bins
}

// histogramPlot starts a histogram chart of bins: the plotters under,
// drawn behind the bars; the bars, those whose index flagged holds drawn
// apart under the legend entry flagLabel; and the fitted density as the
// count it expects in each bin, under the entry fitLabel, when the report
// holds one. It returns the plot and the number of legend entries.
func histogramPlot(h *Histogram, bins []plotter.HistogramBin, xLabel, fitLabel string, flagged map[int]bool, flagLabel string,
	under ...plot.Plotter) (*plot.Plot, int) {
	p := newPlot(xLabel, "values per bin")
	p.Add(under...)
	var plain, marked []plotter.HistogramBin
	for i, b := range bins {
		if flagged[i] {
			marked = append(marked, b)
		} else {
			plain = append(plain, b)
		}
	}
	entries := 0
	if len(plain) > 0 {
		b := &bars{bins: plain, fill: colBarFill, line: styleBars}
		p.Add(b)
		p.Legend.Add("values", b)
		entries++
	}
	if len(marked) > 0 {
		b := &bars{bins: marked, fill: colFlagged, line: styleFlaggedBars}
		p.Add(b)
		p.Legend.Add(flagLabel, b)
		entries++
	}
	legendAway(p, bins)
	if len(h.Density) != len(bins) {
		return p, entries
	}
	var n float64
	for _, b := range bins {
		n += b.Weight
	}
	var pts plotter.XYs
	for i, b := range bins {
		d := float64(h.Density[i])
		if !finite(d) {
			continue
		}
		pts = append(pts, plotter.XY{X: (b.Min + b.Max) / 2, Y: d * n * (b.Max - b.Min)})
	}
	if len(pts) > 1 {
		l := &plotter.Line{XYs: pts, LineStyle: styleFit}
		p.Add(l)
		p.Legend.Add(fitLabel, l)
		entries++
	}
	return p, entries
}

// legendAway puts the legend in the top corner above the lower bars: on
// the left when the tallest bar of the left half is lower than that of the
// right half.
func legendAway(p *plot.Plot, bins []plotter.HistogramBin) {
	var left, right float64
	for i, b := range bins {
		if 2*i < len(bins) {
			left = max(left, b.Weight)
		} else {
			right = max(right, b.Weight)
		}
	}
	p.Legend.Left = left < right
}

// fitHistogram draws the histogram of a distribution rule's values.
func fitHistogram(f *Fit, col string, units map[string]string) (*chart, error) {
	bins := histBins(f.Histogram)
	if bins == nil {
		return nil, nil
	}
	var marks []plot.Plotter
	var regions []string
	for _, g := range f.Regions {
		if g.Label != "" || g.Lo == nil && g.Hi == nil {
			continue
		}
		m := &rangeMark{lo: bins[0].Min, hi: bins[len(bins)-1].Max}
		if g.Lo != nil {
			m.lo = max(m.lo, float64(*g.Lo))
		}
		if g.Hi != nil {
			m.hi = min(m.hi, float64(*g.Hi))
		}
		marks = append(marks, m)
		regions = append(regions, fmt.Sprintf("%s (%s of values, %s expected)", regionText(g),
			formatPercent(float64(g.Observed)), formatPercent(float64(g.Expected))))
	}
	p, entries := histogramPlot(f.Histogram, bins, axisLabel(col, units), "fitted "+f.Family, nil, "", marks...)
	if len(marks) > 0 {
		p.Legend.Add("where the data exceed the fit", marks[0].(*rangeMark))
		entries++
		underStrip(p)
	}
	headroom(p, entries)
	what := "values"
	if f.Sampled {
		what = "sampled values"
	}
	desc := fmt.Sprintf("%s %s of %s in %d bins from %s to %s.", groupDigits(histTotal(bins)), what, col, len(bins),
		withUnit(bins[0].Min, col, units), withUnit(bins[len(bins)-1].Max, col, units))
	if len(f.Histogram.Density) == len(bins) {
		desc += fmt.Sprintf(" A solid line gives the count the fitted %s expects in each bin.", f.Family)
	}
	if len(regions) > 0 {
		desc += " Thick bars under the axis mark the ranges where the data exceed the fit most: " + strings.Join(regions, "; ") + "."
	}
	return render(p, fmt.Sprintf("Histogram of %s with the fitted %s", col, f.Family), desc, chartW, chartH)
}

func histTotal(bins []plotter.HistogramBin) int64 {
	var n int64
	for _, b := range bins {
		n += int64(b.Weight)
	}
	return n
}

// headroom raises the top of the y axis so that a legend of entries lines
// at the top of the plot does not cover the data.
func headroom(p *plot.Plot, entries int) {
	if entries == 0 || !finite(p.Y.Min, p.Y.Max) {
		return
	}
	p.Y.Max += (p.Y.Max - p.Y.Min) * (0.12 + 0.1*float64(entries))
}

// qqChart draws the Q-Q plot of a distribution rule against its family.
func qqChart(f *Fit, col string, units map[string]string) (*chart, error) {
	pts, lo, hi := qqPoints(f.QQ)
	if pts == nil {
		return nil, nil
	}
	unit := ""
	if u := units[col]; u != "" {
		unit = " (" + u + ")"
	}
	p := newPlot("quantiles of the fitted "+f.Family+unit, "quantiles of "+axisLabel(col, units))
	ref := &plotter.Line{XYs: plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}}, LineStyle: styleReference}
	s := &plotter.Scatter{XYs: pts, GlyphStyle: glyphPoint}
	p.Add(ref, s)
	p.Legend.Add("values", s)
	p.Legend.Add("where they would lie", ref)
	p.Legend.Left = true
	headroom(p, 2)
	desc := fmt.Sprintf("%d quantiles of %s (hollow circles) against the same quantiles of the fitted %s; "+
		"a dashed diagonal marks where they would lie if the values followed it exactly, "+
		"fitted quantiles from %s to %s.", len(pts), col, f.Family, withUnit(lo, col, units), withUnit(hi, col, units))
	return render(p, fmt.Sprintf("Q-Q plot of %s against the fitted %s", col, f.Family), desc, chartW, chartH)
}

// qqPoints returns the finite pairs of q, fitted quantile as x, and the
// range of x.
func qqPoints(q *QQ) (pts plotter.XYs, lo, hi float64) {
	if q == nil || len(q.Fitted) != len(q.Sample) {
		return nil, 0, 0
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for i := range q.Fitted {
		x, y := float64(q.Fitted[i]), float64(q.Sample[i])
		if !finite(x, y) {
			continue
		}
		pts = append(pts, plotter.XY{X: x, Y: y})
		lo, hi = min(lo, x), max(hi, x)
	}
	return pts, lo, hi
}

// maxCellLabels is how many category labels a shares chart writes under
// its bars; with more categories it labels every k-th. Beyond
// maxLabelChars characters in all (two more per label for the gaps) the
// labels no longer fit side by side, and are turned 45 degrees.
const (
	maxCellLabels = 20
	maxLabelChars = 40
)

// cellsChart draws the observed and expected shares of the categories (or
// leading digits) of a distribution rule.
func cellsChart(f *Fit, col string) (*chart, error) {
	if len(f.Cells) == 0 {
		return nil, nil
	}
	var total float64
	for _, c := range f.Cells {
		total += float64(c.Count)
	}
	if total == 0 {
		return nil, nil
	}
	labels := make([]string, len(f.Cells))
	observed := make([]float64, len(f.Cells))
	expected := make([]float64, len(f.Cells))
	var worst Cell
	var worstGap float64
	for i, c := range f.Cells {
		labels[i], observed[i], expected[i] = c.Label, float64(c.Count)/total, float64(c.Expected)
		if gap := observed[i] - expected[i]; gap > worstGap {
			worst, worstGap = c, gap
		}
	}
	desc := fmt.Sprintf("Observed share of each of %d categories of %s as bars, the share the %s expects as a dashed step.",
		len(f.Cells), col, f.Family)
	if worstGap > 0 {
		desc += fmt.Sprintf(" The largest excess is %q: %s observed, %s expected.", worst.Label,
			formatPercent(float64(worst.Count)/total), formatPercent(float64(worst.Expected)))
	}
	p := sharesPlot(col, labels, observed, expected, "observed", "expected")
	return render(p, fmt.Sprintf("Observed and expected shares of %s (%s)", col, f.Family), desc, chartW, chartH)
}

// sharesPlot plots a share per labelled cell as bars (legend entry
// barName) against a share to compare it with as a dashed step (entry
// stepName; NaN leaves a cell's step out).
func sharesPlot(xLabel string, labels []string, shares, compare []float64, barName, stepName string) *plot.Plot {
	p := newPlot(xLabel, "share of values")
	bins := make([]plotter.HistogramBin, len(labels))
	var step plotter.XYs
	var ticks []plot.Tick
	every := (len(labels) + maxCellLabels - 1) / maxCellLabels
	for i, label := range labels {
		x := float64(i)
		bins[i] = plotter.HistogramBin{Min: x - 0.35, Max: x + 0.35, Weight: shares[i]}
		if e := compare[i]; finite(e) {
			step = append(step, plotter.XY{X: x - 0.5, Y: e}, plotter.XY{X: x + 0.5, Y: e})
		}
		if i%every != 0 {
			label = ""
		}
		ticks = append(ticks, plot.Tick{Value: x, Label: label})
	}
	b := &bars{bins: bins, fill: colBarFill, line: styleBars}
	p.Add(b)
	p.Legend.Add(barName, b)
	if len(step) > 0 {
		l := &plotter.Line{XYs: step, LineStyle: styleThreshold}
		p.Add(l)
		p.Legend.Add(stepName, l)
	}
	p.X.Tick.Marker = plot.ConstantTicks(ticks)
	chars := 0
	for _, t := range ticks {
		chars += utf8.RuneCountInString(t.Label) + 2
	}
	if chars > maxLabelChars {
		p.X.Tick.Label.Rotation = math.Pi / 4
		p.X.Tick.Label.XAlign = draw.XRight
		p.X.Tick.Label.YAlign = draw.YCenter
	}
	p.X.Min, p.X.Max = -0.6, float64(len(labels))-0.4
	headroom(p, 2)
	return p
}

// rangeMark marks the x range [lo, hi] with a thick bar in the strip
// that underStrip keeps below y = 0, under the histogram's bars.
type rangeMark struct{ lo, hi float64 }

// styleMark is a range mark's bar; its ends get short upright ticks.
var styleMark = draw.LineStyle{Color: colVermil, Width: 5}

// stripShare is the share of the y range underStrip adds below 0.
const stripShare = 0.07

// underStrip lowers the y axis below 0 to make room for range marks, and
// keeps the ticks of the values below 0 off the axis.
func underStrip(p *plot.Plot) {
	p.Y.Min = -stripShare * (p.Y.Max - p.Y.Min) / (1 - stripShare)
	p.Y.Tick.Marker = tidyTicks{nonNegative: true}
}

// tidyTicks are gonum's default ticks with the trailing zeros of their
// labels dropped ("2500", not "2500.00"); with nonNegative, only those at
// or above 0.
type tidyTicks struct{ nonNegative bool }

// Ticks implements plot.Ticker.
func (tt tidyTicks) Ticks(lo, hi float64) []plot.Tick {
	if tt.nonNegative {
		lo = max(lo, 0)
	}
	if !(lo < hi) {
		return nil
	}
	ts := (plot.DefaultTicks{}).Ticks(lo, hi)
	out := ts[:0]
	for _, t := range ts {
		if tt.nonNegative && t.Value < 0 {
			continue
		}
		if strings.Contains(t.Label, ".") && !strings.ContainsAny(t.Label, "eE") {
			t.Label = strings.TrimSuffix(strings.TrimRight(t.Label, "0"), ".")
		}
		out = append(out, t)
	}
	return out
}

// Plot draws the mark, implementing plot.Plotter.
func (m *rangeMark) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	lo, hi := max(m.lo, p.X.Min), min(m.hi, p.X.Max)
	if !(lo <= hi) {
		return
	}
	y := (c.Min.Y + trY(0)) / 2
	x0, x1 := trX(lo), trX(hi)
	if x1-x0 < 2 {
		x0, x1 = x0-1, x1+1 // a narrow range still shows
	}
	c.StrokeLine2(styleMark, x0, y, x1, y)
}

// Thumbnail draws the mark's legend sample, implementing plot.Thumbnailer.
func (m *rangeMark) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	c.StrokeLine2(styleMark, c.Min.X, y, c.Max.X, y)
}

// bars draws histogram bars from y = 0 up to each bin's weight (unlike
// plotter.Histogram, which draws them from the bottom of the plot, so that
// the strip below 0 stays free for range marks).
type bars struct {
	bins []plotter.HistogramBin
	fill color.Color
	line draw.LineStyle
}

// Plot draws the bars, implementing plot.Plotter.
func (b *bars) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for _, bin := range b.bins {
		x0, x1, y0, y1 := trX(bin.Min), trX(bin.Max), trY(0), trY(bin.Weight)
		pts := []vg.Point{{X: x0, Y: y0}, {X: x1, Y: y0}, {X: x1, Y: y1}, {X: x0, Y: y1}}
		c.FillPolygon(b.fill, c.ClipPolygonXY(pts))
		c.StrokeLines(b.line, c.ClipLinesXY(append(pts, pts[0]))...)
	}
}

// DataRange implements plot.DataRanger.
func (b *bars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = math.Inf(1), math.Inf(-1)
	for _, bin := range b.bins {
		xmin, xmax, ymax = min(xmin, bin.Min), max(xmax, bin.Max), max(ymax, bin.Weight)
	}
	return xmin, xmax, 0, ymax
}

// Thumbnail draws the legend sample, implementing plot.Thumbnailer.
func (b *bars) Thumbnail(c *draw.Canvas) {
	pts := []vg.Point{{X: c.Min.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Min.Y}, {X: c.Max.X, Y: c.Max.Y}, {X: c.Min.X, Y: c.Max.Y}}
	c.FillPolygon(b.fill, pts)
	c.StrokeLines(b.line, append(pts, pts[0]))
}
