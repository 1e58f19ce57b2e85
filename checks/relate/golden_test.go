package relate

import (
	"math"
	"strconv"
	"testing"
)

// Golden values from R 4.2.2 (stats; MASS 7.3.58.2) and SciPy 1.10.1, made
// by testdata/golden.R and testdata/golden_theilsen.py on 23 seeded cases
// and Anscombe's quartet (n = 5 .. 1291, with and without ties, gross
// outliers, leverage points) and 5 contingency tables; see
// testdata/README.md. Tolerances: statistics 1e-9 relative, p-values 1e-6
// absolute; the largest differences measured are logged with -v (all
// below 3e-11, p-values below 2e-14).

type pairCase struct{ x, y []float64 }

func loadPairs(t *testing.T) map[string]*pairCase {
	t.Helper()
	_, rows := readTable(t, "golden/pairs.csv")
	cases := map[string]*pairCase{}
	for _, r := range rows {
		c := cases[r[0]]
		if c == nil {
			c = &pairCase{}
			cases[r[0]] = c
		}
		c.x = append(c.x, parseFloat(t, r[1]))
		c.y = append(c.y, parseFloat(t, r[2]))
	}
	if len(cases) < 23 {
		t.Fatalf("golden/pairs.csv holds %d cases, want at least 23", len(cases))
	}
	return cases
}

func relDiff(got, want float64) float64 {
	if got == want {
		return 0
	}
	return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300)
}

// worst tracks the largest difference of one kind of comparison and fails
// those beyond the tolerance.
type worst struct {
	name     string
	tol      float64
	relative bool
	max      float64
	count    int
	// floor, when set, is the smallest magnitude a relative difference is
	// taken against.
	floor float64
}

func (w *worst) check(t *testing.T, what string, got, want float64) {
	t.Helper()
	w.count++
	if math.IsNaN(want) || math.IsNaN(got) {
		if !math.IsNaN(got) || !math.IsNaN(want) {
			t.Errorf("%s %s = %v, want %v", w.name, what, got, want)
		}
		return
	}
	d := math.Abs(got - want)
	if w.relative {
		d = relDiff(got, want)
		if w.floor > math.Abs(want) {
			d = math.Abs(got-want) / w.floor
		}
	}
	w.max = math.Max(w.max, d)
	if !(d <= w.tol) {
		t.Errorf("%s %s = %.15g, want %.15g (difference %.2g, tolerance %.0g)", w.name, what, got, want, d, w.tol)
	}
}

func (w *worst) log(t *testing.T) {
	t.Helper()
	if w.count == 0 {
		t.Errorf("%s: nothing compared", w.name)
	}
	kind := "absolute"
	if w.relative {
		kind = "relative"
	}
	t.Logf("%-28s %4d values, largest %s difference %.2g", w.name, w.count, kind, w.max)
}

func TestGoldenLine(t *testing.T) {
	cases := loadPairs(t)
	_, rows := readTable(t, "golden/lm.csv")
	stream := &worst{name: "lm (streaming moments)", tol: 1e-9, relative: true}
	qr := &worst{name: "lm (QR)", tol: 1e-9, relative: true}
	for _, r := range rows {
		c := cases[r[0]]
		want := parseFloat(t, r[2])
		var welford, batch Moments
		for i := range c.x {
			welford.Add(c.x[i], c.y[i])
		}
		batch.AddAll(c.x, c.y)
		reg, err := LeastSquares(c.y, [][]float64{c.x}, true)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range []Moments{welford, batch} {
			l, err := m.Line()
			if err != nil {
				t.Fatal(err)
			}
			got := map[string]float64{"b0": l.Intercept, "b1": l.Slope, "se_b0": l.SEIntercept, "se_b1": l.SESlope,
				"sigma": l.ResidualSD, "r_squared": l.RSquared, "f": l.Slope * l.Slope / (l.SESlope * l.SESlope)}
			stream.check(t, r[0]+" "+r[1], got[r[1]], want)
		}
		got := map[string]float64{"b0": reg.Coef[0], "b1": reg.Coef[1], "se_b0": reg.SE[0], "se_b1": reg.SE[1],
			"sigma": reg.ResidualSD, "r_squared": reg.RSquared, "f": reg.F}
		qr.check(t, r[0]+" "+r[1], got[r[1]], want)
	}
	stream.log(t)
	qr.log(t)
}

// TestGoldenPoints diagnoses every row in a second pass over the data with
// the line fitted from streaming moments, as the engine will.
func TestGoldenPoints(t *testing.T) {
	cases := loadPairs(t)
	_, rows := readTable(t, "golden/points.csv")
	lines := map[string]Line{}
	for id, c := range cases {
		var m Moments
		m.AddAll(c.x, c.y)
		l, err := m.Line()
		if err != nil {
			t.Fatal(err)
		}
		lines[id] = l
	}
	ws := []*worst{
		{name: "rstudent", tol: 1e-9, relative: true},
		{name: "cooks.distance", tol: 1e-9, relative: true},
		{name: "hatvalues", tol: 1e-9, relative: true},
	}
	for _, r := range rows {
		c := cases[r[0]]
		i, err := strconv.Atoi(r[1])
		if err != nil {
			t.Fatal(err)
		}
		p := lines[r[0]].Diagnose(c.x[i-1], c.y[i-1])
		what := r[0] + " row " + r[1]
		ws[0].check(t, what, p.Studentized, parseFloat(t, r[2]))
		ws[1].check(t, what, p.Cooks, parseFloat(t, r[3]))
		ws[2].check(t, what, p.Leverage, parseFloat(t, r[4]))
	}
	for _, w := range ws {
		w.log(t)
	}
}

func TestGoldenCorrelation(t *testing.T) {
	cases := loadPairs(t)
	_, rows := readTable(t, "golden/cor.csv")
	ws := map[string][3]*worst{}
	methods := map[PMethod]int{}
	for _, m := range []string{"pearson", "spearman", "kendall"} {
		ws[m] = [3]*worst{
			{name: m + " estimate", tol: 1e-9, relative: true},
			{name: m + " statistic", tol: 1e-9, relative: true},
			{name: m + " p-value", tol: 1e-6},
		}
	}
	for _, r := range rows {
		c := cases[r[0]]
		var res Correlation
		var err error
		switch r[1] {
		case "pearson":
			var m Moments
			m.AddAll(c.x, c.y)
			res, err = m.PearsonTest()
		case "spearman":
			res, err = SpearmanTest(c.x, c.y)
		case "kendall":
			res, err = KendallTest(c.x, c.y)
		default:
			t.Fatalf("unknown method %q", r[1])
		}
		if err != nil {
			t.Fatal(err)
		}
		methods[res.PMethod]++
		w := ws[r[1]]
		what := r[0]
		w[0].check(t, what, res.Estimate, parseFloat(t, r[2]))
		if res.Statistic.Name != r[4] {
			t.Errorf("%s %s: statistic %s, R gives %s", r[0], r[1], res.Statistic.Name, r[4])
		}
		w[1].check(t, what, res.Statistic.Value, parseFloat(t, r[3]))
		w[2].check(t, what+" ("+res.PMethod.String()+")", res.PValue, parseFloat(t, r[5]))
	}
	for _, m := range []string{"pearson", "spearman", "kendall"} {
		for _, w := range ws[m] {
			w.log(t)
		}
	}
	// Every p-value method of R's choice is exercised.
	for _, m := range []PMethod{Exact, Edgeworth, StudentT, Normal} {
		if methods[m] == 0 {
			t.Errorf("no golden case uses the %v p-value", m)
		}
	}
}

func TestGoldenHuber(t *testing.T) {
	cases := loadPairs(t)
	_, rows := readTable(t, "golden/huber.csv")
	// rlm stops on a relative change of the residuals (acc = 1e-13 in
	// golden.R), which fixes the coefficients to about 1e-11 in units of
	// the residual scale: an intercept near 0 (cont50: 0.0065) is compared
	// relative to the scale.
	w := &worst{name: "rlm huber", tol: 1e-9, relative: true}
	for _, r := range rows {
		c := cases[r[0]]
		w.floor = parseFloat(t, r[3])
		h, err := Huber(c.x, c.y, HuberOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if !h.Converged {
			t.Errorf("%s: huber did not converge in %d iterations", r[0], h.Iterations)
		}
		w.check(t, r[0]+" intercept", h.Intercept, parseFloat(t, r[1]))
		w.check(t, r[0]+" slope", h.Slope, parseFloat(t, r[2]))
		w.check(t, r[0]+" scale", h.Scale, parseFloat(t, r[3]))
	}
	w.log(t)
}

func TestGoldenTheilSen(t *testing.T) {
	cases := loadPairs(t)
	_, rows := readTable(t, "golden/theilsen.csv")
	w := &worst{name: "scipy theilslopes", tol: 1e-12, relative: true}
	for _, r := range rows {
		c := cases[r[0]]
		ts, err := TheilSen(c.x, c.y, TheilSenOptions{})
		if err != nil {
			t.Fatal(err)
		}
		if ts.Sampled {
			t.Errorf("%s: n = %d was sampled, want exact", r[0], ts.N)
		}
		w.check(t, r[0]+" slope", ts.Slope, parseFloat(t, r[1]))
		w.check(t, r[0]+" intercept", ts.Intercept, parseFloat(t, r[2]))
	}
	w.log(t)
}

func TestGoldenChiSquare(t *testing.T) {
	_, rows := readTable(t, "golden/tables.csv")
	tables := map[string]*Table{}
	for _, r := range rows {
		if tables[r[0]] == nil {
			tables[r[0]] = &Table{}
		}
		n, err := strconv.ParseInt(r[3], 10, 64)
		if err != nil {
			t.Fatal(err)
		}
		tables[r[0]].AddCount(r[1], r[2], n)
	}
	_, rows = readTable(t, "golden/chisq.csv")
	stat := &worst{name: "chisq.test statistic", tol: 1e-9, relative: true}
	pv := &worst{name: "chisq.test p-value", tol: 1e-6}
	pvRel := &worst{name: "chisq.test p-value", tol: 1e-9, relative: true}
	v := &worst{name: "cramer's V (both)", tol: 1e-9, relative: true}
	for _, r := range rows {
		as, err := tables[r[0]].Independence()
		if err != nil {
			t.Fatal(err)
		}
		stat.check(t, r[0], as.ChiSquare, parseFloat(t, r[1]))
		if df, _ := strconv.Atoi(r[2]); as.DF != df {
			t.Errorf("%s: df %d, want %d", r[0], as.DF, df)
		}
		pv.check(t, r[0], as.PValue, parseFloat(t, r[3]))
		pvRel.check(t, r[0], as.PValue, parseFloat(t, r[3]))
		v.check(t, r[0]+" V", as.V, parseFloat(t, r[4]))
		if want := parseFloat(t, r[5]); want == 0 {
			if as.VCorrected != 0 {
				t.Errorf("%s: corrected V = %g, want 0", r[0], as.VCorrected)
			}
		} else {
			v.check(t, r[0]+" corrected V", as.VCorrected, want)
		}
	}
	for _, w := range []*worst{stat, pv, pvRel, v} {
		w.log(t)
	}
}
