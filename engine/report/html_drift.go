package report

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"
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

// moveLabel is a short tick label of a drift range: "45.55–46.87",
// ">66.91", "≤33.79".
func moveLabel(m DriftMove) string {
	lo, hi := float64(m.Lower), float64(m.Upper)
	switch {
	case finite(lo, hi):
		return sig4(lo) + "–" + sig4(hi)
	case finite(lo):
		return ">" + sig4(lo)
	case finite(hi):
		return "≤" + sig4(hi)
	}
	return "all"
}

// driftChart plots the share of the values now (bars) against the
// baseline's (dashed step) in the ranges whose share changed most, in
// value order. The report keeps those ranges only, not the whole
// distributions, so the chart shows no more.
func driftChart(res Result, units map[string]string) (*chart, error) {
	d := res.Drift
	if len(d.Moves) == 0 {
		return nil, nil
	}
	col := ""
	if len(res.Columns) > 0 {
		col = res.Columns[0]
	}
	moves := slices.Clone(d.Moves)
	slices.SortStableFunc(moves, func(a, b DriftMove) int {
		return cmp.Compare(orLowest(a.Lower), orLowest(b.Lower))
	})
	labels := make([]string, len(moves))
	now := make([]float64, len(moves))
	base := make([]float64, len(moves))
	parts := make([]string, len(moves))
	for i, m := range moves {
		labels[i], now[i], base[i] = moveLabel(m), float64(m.Share), float64(m.BaseShare)
		parts[i] = fmt.Sprintf("%s: %s now, %s in the %s", moveText(m, col, units), formatPercent(now[i]),
			formatPercent(base[i]), d.Against)
	}
	p := sharesPlot(axisLabel(col, units)+": ranges that changed most", labels, now, base, "share now", "share in the "+d.Against)
	desc := fmt.Sprintf("Share of the values of %s in the %d value ranges whose share changed most, now (bars) and in the %s "+
		"(dashed step), in value order: %s.", col, len(moves), d.Against, strings.Join(parts, "; "))
	if d.Units != "" {
		desc += " The spread changed by about " + d.Units + ": a likely change of units."
	}
	return render(p, fmt.Sprintf("Shares of %s now and in the %s, in the ranges that changed most", col, d.Against), desc, chartW, chartH)
}

// orLowest is a range's lower end, with an open end lowest of all.
func orLowest(n Number) float64 {
	if f := float64(n); finite(f) {
		return f
	}
	return math.Inf(-1)
}
