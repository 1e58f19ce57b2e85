package checks

import (
	"sort"

	"github.com/assay-project/assay/engine/report"
)

// driftHistogramBins bounds the bins of a drift result's histogram; a
// baseline file with more bins has adjacent ones merged (own choice: the
// baseline command writes 20).
const driftHistogramBins = 50

// driftHistogram returns the histogram of the base and of the data's
// values cur (sorted ascending) at the base's edges, as
// report.DriftHistogram describes it: the first edge is the base's
// smallest value, the last its largest, the others the upper edges of its
// quantile bins. b.bins must not be empty.
func driftHistogram(b *driftBase, cur []float64) *report.DriftHistogram {
	n := len(b.bins)
	k := (n + driftHistogramBins - 1) / driftHistogramBins
	h := &report.DriftHistogram{Edges: []report.Number{report.Number(min(b.lo, b.bins[0].Upper))}}
	for i := 0; i < n; i += k {
		j := min(i+k, n)
		var share float64
		for _, bin := range b.bins[i:j] {
			share += bin.Share
		}
		upper := b.bins[j-1].Upper
		if j == n {
			upper = max(upper, b.hi)
		}
		h.Edges = append(h.Edges, report.Number(upper))
		h.BaseShares = append(h.BaseShares, report.Number(share))
	}
	if len(cur) == 0 {
		return h
	}
	total := float64(len(cur))
	atMost := func(x float64) int { return sort.Search(len(cur), func(i int) bool { return cur[i] > x }) }
	prev := sort.SearchFloat64s(cur, float64(h.Edges[0]))
	h.Below = report.Number(float64(prev) / total)
	for _, e := range h.Edges[1:] {
		c := atMost(float64(e))
		h.Shares = append(h.Shares, report.Number(float64(c-prev)/total))
		prev = c
	}
	h.Above = report.Number(float64(len(cur)-prev) / total)
	return h
}
