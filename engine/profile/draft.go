package profile

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/assay-project/assay/checks/dist"
	"github.com/assay-project/assay/checks/gof"
	"github.com/assay-project/assay/checks/relate"
)

// Draft reads the data at paths once (files, globs, or "-") and returns a
// drafted policy as commented YAML. The same data and options give the
// same bytes.
func Draft(ctx context.Context, paths []string, opts Options) ([]byte, error) {
	st, err := scan(ctx, paths, opts)
	if err != nil {
		return nil, err
	}
	if st.rows == 0 {
		return nil, fmt.Errorf("no data rows to profile in %s", describeFiles(st))
	}
	d := &drafter{st: st, opts: opts}
	for _, c := range st.cols {
		d.cols = append(d.cols, d.column(c))
	}
	d.pairs = d.relations()
	d.key = d.tableKey()
	return d.write(), nil
}

// drafter turns statistics into drafted rules.
type drafter struct {
	st    *stats
	opts  Options
	cols  []colDraft
	pairs []pairDraft
	key   []string // a two-column key, when no column is one alone
}

// tableKey returns the first two columns, in data order, whose value
// pairs were all distinct with no nulls, when no single column is a key.
func (d *drafter) tableKey() []string {
	for _, cd := range d.cols {
		if cd.unique {
			return nil
		}
	}
	if d.st.rows < MinKeyRows {
		return nil
	}
	for _, k := range d.st.combos {
		if k.state == keyTracking && listable(k.a.name) && listable(k.b.name) {
			return []string{k.a.name, k.b.name}
		}
	}
	return nil
}

// colDraft is what the policy says about one column.
type colDraft struct {
	c       *column
	seen    []string // comment lines on what was observed
	nulls   string   // the nulls threshold as written
	lo, hi  string   // minimum and maximum, "" for none
	enum    []string // as written
	unique  bool
	fam     *famDraft
	skipped string // why no distribution was drafted, "" when one was or none applies
}

// famDraft is a drafted distribution rule.
type famDraft struct {
	family     string
	params     []param
	distance   float64
	warn, fail float64
	ranked     []string // "name AIC" of the candidates, best first
}

type param struct {
	name  string
	value float64
}

// pairDraft is a drafted pair rule.
type pairDraft struct {
	x, y     string
	relation string // linear or monotonic
	r, rho   float64
	n        int64
	bound    float64 // the correlation's minimum (positive) or maximum (negative)
	residual float64 // linear: share of sampled rows the default residual rule flags
	resWarn  float64
	resFail  float64
}

// nullsThreshold is the drafted fail threshold of the null share: 0 when
// none were seen, else 1.5 times the observed share plus one percentage
// point, rounded up to a tenth of a percent (our own choice: a batch with
// half as many nulls again as the trusted data, plus a point, is off).
func nullsThreshold(nulls, rows int64) float64 {
	if nulls == 0 {
		return 0
	}
	s := float64(nulls) / float64(rows)
	return math.Min(1, ceilTo(1.5*s+0.01, 0.001))
}

// bounds widens [lo, hi] by RangeMargin of its width on each side, then
// rounds outward to a multiple of the step 10^(floor(log10(width)) - 1), a
// tenth of the width's order of magnitude (at least 1 for integers). A
// lower bound of non-negative data stays at 0 or above. A constant column
// keeps its value as both bounds, and a range too wide for a margin
// (beyond the largest float) its own ends.
func bounds(lo, hi float64, integer bool) (float64, float64) {
	w := hi - lo
	if w == 0 {
		return lo, hi
	}
	step := math.Pow(10, math.Floor(math.Log10(w))-1)
	if integer {
		step = math.Max(step, 1)
	}
	// 1e-9 keeps a bound that is a multiple of step up to rounding
	// error (0.3/0.1 = 2.9999999999999996) on that multiple.
	a := math.Floor((lo-RangeMargin*w)/step+1e-9) * step
	b := math.Ceil((hi+RangeMargin*w)/step-1e-9) * step
	if lo >= 0 && a < 0 {
		a = 0
	}
	a, b = round(a, step), round(b, step)
	if !finite(a) || !finite(b) {
		// The margin overflows near the largest float: keep what was seen.
		return lo, hi
	}
	return a, b
}

// round removes the rounding error of a multiple of step (0.30000000000000004).
func round(v, step float64) float64 {
	if step >= 1 {
		return v
	}
	digits := int(math.Ceil(-math.Log10(step)))
	f, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'f', digits, 64), 64)
	return f
}

func ceilTo(v, step float64) float64 { return round(math.Ceil(v/step-1e-9)*step, step) }

// sig rounds v to 6 significant digits, the precision of drafted parameters.
func sig(v float64) float64 {
	f, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 6, 64), 64)
	return f
}

// sigOut rounds v to 6 significant digits in the direction of to
// (math.Floor or math.Ceil).
func sigOut(v float64, to func(float64) float64) float64 {
	if v == 0 {
		return 0
	}
	step := math.Pow(10, math.Floor(math.Log10(math.Abs(v)))-5)
	return sig(to(v/step) * step)
}

func (d *drafter) column(c *column) colDraft {
	cd := colDraft{c: c}
	rows := d.st.rows
	cd.nulls = share(nullsThreshold(c.nulls, rows))
	if c.nulls == 0 {
		cd.seen = append(cd.seen, "no nulls")
	} else {
		cd.seen = append(cd.seen, fmt.Sprintf("%s nulls (%d of %d rows)", pct(float64(c.nulls)/float64(rows)), c.nulls, rows))
	}
	if c.typ == "" {
		cd.seen = append(cd.seen, fmt.Sprintf("stored as %s, which no policy type reads: no type or value rules drafted", c.stored))
	}
	if c.counts != nil && c.n > 0 {
		cd.seen = append(cd.seen, fmt.Sprintf("%d distinct values", len(c.counts)))
	} else if c.keyState == keyTracking && c.n > 0 {
		cd.seen = append(cd.seen, "every value distinct")
	}
	// A column whose every value is distinct, without nulls, is a
	// candidate key; an integer one is taken as an identifier, whose
	// range and spread say nothing about the next batch.
	cd.unique = c.keyState == keyTracking && c.nulls == 0 && c.n >= MinKeyRows
	switch {
	case cd.unique && c.typ == "integer":
		cd.seen = append(cd.seen, fmt.Sprintf("from %s to %s (an identifier: not bounded)", num(c.min), num(c.max)))
	case c.typ == "integer" || c.typ == "number":
		d.numeric(&cd)
	}
	switch c.typ {
	case "timestamp", "date":
		if c.n > 0 {
			cd.seen = append(cd.seen, fmt.Sprintf("from %s to %s (not bounded: time columns move on)", when(c.min, c.typ), when(c.max, c.typ)))
		}
	case "string":
		if c.n > 0 {
			cd.seen = append(cd.seen, fmt.Sprintf("lengths %d to %d characters", c.minLen, c.maxLen))
		}
	}
	if c.typ == "string" || c.typ == "integer" {
		cd.enum = enum(c)
	}
	if len(cd.enum) > 0 {
		var parts []string
		for _, k := range c.sortedCounts() {
			parts = append(parts, fmt.Sprintf("%s %d", k, c.counts[k]))
		}
		cd.seen = append(cd.seen, "counts: "+strings.Join(parts, ", "))
		cd.fam, cd.skipped = nil, ""
	}
	return cd
}

// cmpInt orders two integers written in decimal.
func cmpInt(a, b string) int {
	x, _ := strconv.ParseInt(a, 10, 64)
	y, _ := strconv.ParseInt(b, 10, 64)
	return cmp.Compare(x, y)
}

// enum returns the drafted categories of c in order of text (of value for
// integers), so that other counts draft the same list; nil when they are
// too many, one is seen fewer than MinEnumCount times, or every value is
// seen once.
func enum(c *column) []string {
	if len(c.counts) == 0 || int64(len(c.counts)) >= c.n {
		return nil
	}
	var out []string
	for k, n := range c.counts {
		if n < MinEnumCount {
			return nil
		}
		out = append(out, k)
	}
	if c.typ == "integer" {
		slices.SortFunc(out, cmpInt)
	} else {
		slices.Sort(out)
	}
	return out
}

func (d *drafter) numeric(cd *colDraft) {
	c := cd.c
	if c.n == 0 {
		return
	}
	if c.nonFinite > 0 {
		cd.seen = append(cd.seen, fmt.Sprintf("%d values not finite: no range drafted", c.nonFinite))
		return
	}
	if c.typ == "integer" && math.Max(math.Abs(c.min), math.Abs(c.max)) >= 1<<53 {
		// A bound is read as a float, which cannot hold every integer
		// beyond 2^53: the seen extremes could fall outside their own
		// rounding.
		cd.seen = append(cd.seen, "values beyond 2^53: no range drafted")
		return
	}
	lo, hi := bounds(c.min, c.max, c.typ == "integer")
	cd.lo, cd.hi = num(lo), num(hi)
	cd.seen = append(cd.seen, fmt.Sprintf("min %s, max %s", num(sig(c.min)), num(sig(c.max))))
	if c.counts != nil {
		cd.skipped = fmt.Sprintf("%d distinct values, too few for a continuous family", len(c.counts))
		return
	}
	cd.fam, cd.skipped = d.family(c)
}

// family ranks the continuous families on the column's sample by AIC then
// BIC (dist.Rank) and drafts the best one whose support holds every value
// seen, with its parameters rounded to 6 significant digits (a uniform
// family takes the observed minimum and maximum, rounded outward) and a
// tolerance on the KS distance: the distance D of the sample from the
// drafted family, measured as the check does (at the recording resolution
// when one is detected), plus 0.02 for warn and 0.05 for fail, rounded up
// to 0.01 (our own margins: the sample's D differs from the whole column's
// by about 1/sqrt(n), under 0.01 at the default sample).
func (d *drafter) family(c *column) (*famDraft, string) {
	var x []float64
	for _, v := range c.sample.Values(0) {
		if !math.IsNaN(v) {
			x = append(x, v)
		}
	}
	if len(x) < 50 {
		return nil, fmt.Sprintf("%d values, too few to fit a family", len(x))
	}
	var cands []dist.Family
	for _, f := range dist.Families() {
		if f.Kind() == dist.Continuous {
			cands = append(cands, f)
		}
	}
	sorted, err := gof.SortInPlace(x)
	if err != nil {
		return nil, err.Error()
	}
	fits := dist.Rank(sorted.Values(), cands)
	fd := &famDraft{}
	for _, ft := range fits {
		if ft.Err == nil {
			fd.ranked = append(fd.ranked, fmt.Sprintf("%s %s", ft.Family.Name(), num(sig(ft.AIC))))
		}
	}
	for _, ft := range fits {
		if ft.Err != nil {
			continue
		}
		ps := map[string]float64{}
		var list []param
		for _, p := range ft.Family.Params() {
			v := sig(ft.Dist.Param(p.Name))
			if ft.Family.Name() == "uniform" {
				// The sample's extremes are inside the column's: take
				// the column's, rounded outward.
				if p.Name == "min" {
					v = sigOut(c.min, math.Floor)
				} else {
					v = sigOut(c.max, math.Ceil)
				}
			}
			ps[p.Name] = v
			list = append(list, param{p.Name, v})
		}
		fixed, err := ft.Family.Fix(ps)
		if err != nil {
			continue
		}
		ok, _ := fixed.InSupport()
		if ok != nil && !(ok(c.min) && ok(c.max)) {
			continue
		}
		dd, err := ft.Family.New(ps)
		if err != nil {
			continue
		}
		D, err := distance(sorted, dd)
		if err != nil {
			continue
		}
		fd.family, fd.params, fd.distance = ft.Family.Name(), list, D
		fd.warn = ceilTo(D+0.02, 0.01)
		fd.fail = ceilTo(D+0.05, 0.01)
		return fd, ""
	}
	return nil, "no continuous family fits every value"
}

// distance is the KS distance of the sorted sample from d as the
// distribution check measures it with `resolution: auto`.
func distance(s gof.Sorted, d dist.Dist) (float64, error) {
	if res, ok := gof.DetectResolution(s); ok {
		r, err := gof.KSAtResolution(s, d, res)
		if err != nil {
			return 0, err
		}
		return r.Statistic.Value, nil
	}
	return gof.Distance(s, d).D, nil
}

// relations drafts a pair rule for each pair of numeric columns whose
// Pearson r (over every row with both values) or Spearman rho (over the
// sampled rows) is at least StrongCorrelation in absolute value: linear
// when r is, else monotonic. The correlation is bounded 0.1 nearer zero
// than observed (our own margin). A linear pair also bounds the share of
// rows the default residual rule (externally studentized residuals beyond
// the Bonferroni cutoff at level 0.05) flags: measured on the sample, plus
// half a percentage point for warn and twice it plus one point for fail.
func (d *drafter) relations() []pairDraft {
	var out []pairDraft
	num := d.st.num
	// A pair rule's id joins its columns with "+": columns whose names
	// hold a "+" could give two pairs one id, and the later is left out.
	ids := map[string]bool{}
	for i := range num {
		for j := i + 1; j < len(num); j++ {
			m := d.st.pairs[i][j]
			if m.N < MinKeyRows || !listable(num[i].name) || !listable(num[j].name) {
				continue
			}
			r := m.Correlation()
			xs, ys := aligned(num[i].sample.Values(0), num[j].sample.Values(0))
			rho := math.NaN()
			if sp, err := relate.SpearmanTest(xs, ys); err == nil {
				rho = sp.Estimate
			}
			p := pairDraft{x: num[i].name, y: num[j].name, r: r, rho: rho, n: m.N}
			switch {
			case math.Abs(r) >= StrongCorrelation:
				p.relation = "linear"
				p.bound = shrink(r)
				line, err := m.Line()
				if err != nil {
					continue
				}
				cut := relate.Cutoffs{Studentized: relate.BonferroniCutoff(0.05, m.N)}
				flagged := 0
				for k := range xs {
					if s, _ := cut.Flags(line.Diagnose(xs[k], ys[k])); s {
						flagged++
					}
				}
				p.residual = float64(flagged) / float64(max(1, len(xs)))
				p.resWarn = ceilTo(p.residual+0.005, 0.001)
				p.resFail = ceilTo(2*p.residual+0.01, 0.001)
			case math.Abs(rho) >= StrongCorrelation:
				p.relation = "monotonic"
				p.bound = shrink(rho)
			default:
				continue
			}
			if id := p.x + "+" + p.y; !ids[id] {
				ids[id] = true
				out = append(out, p)
			}
		}
	}
	return out
}

// shrink moves a correlation 0.1 towards zero, rounded towards zero to two
// decimals.
func shrink(r float64) float64 {
	if r < 0 {
		return -shrink(-r)
	}
	return math.Floor((r-0.1)*100+1e-9) / 100
}

// aligned keeps the positions where both samples hold a value.
func aligned(x, y []float64) ([]float64, []float64) {
	var a, b []float64
	for k := range min(len(x), len(y)) {
		if finite(x[k]) && finite(y[k]) {
			a, b = append(a, x[k]), append(b, y[k])
		}
	}
	return a, b
}

// when formats seconds since the epoch as a date or an RFC 3339 time.
func when(sec float64, typ string) string {
	whole := math.Floor(sec)
	t := time.Unix(int64(whole), int64((sec-whole)*1e9)).UTC()
	if typ == "date" {
		return t.Format(time.DateOnly)
	}
	return t.Format(time.RFC3339Nano)
}

func describeFiles(st *stats) string {
	if len(st.files) == 1 {
		if st.files[0].Path == st.stdin {
			return "standard input"
		}
		return filepath.Base(st.files[0].Path)
	}
	return fmt.Sprintf("%d files", len(st.files))
}
