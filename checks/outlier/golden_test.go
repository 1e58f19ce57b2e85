package outlier

import (
	"compress/gzip"
	"encoding/csv"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// Golden values from R 4.2.2 and robustbase 0.95.0 (Debian's r-base-core and
// r-cran-robustbase), written by testdata/golden.R on seeded data sets it
// also writes (see testdata/README.md). Tolerances:
//
//   - quantile(type = 7): exact, bit for bit (same arithmetic);
//   - classical mahalanobis(): 1e-9 relative;
//   - covMcd(use.correction = FALSE): FAST-MCD is randomised, in R by its own
//     random numbers and here by a seeded PCG, so the two need not visit the
//     same subsets. On these data sets (clear outlier structure) both reach
//     the same best h-subset, which the test asserts exactly; everything after
//     it is deterministic, so the criterion, the raw and the reweighted
//     center and covariance, the factors and the distances then agree to
//     1e-9 relative, and the flagged rows exactly.

// readCSV reads testdata/golden/name (gzip when it ends in .gz), skipping
// '#' comment lines and the header.
func readCSV(t *testing.T, name string) [][]string {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "golden", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var r io.Reader = f
	if strings.HasSuffix(name, ".gz") {
		gz, err := gzip.NewReader(f)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		defer gz.Close()
		r = gz
	}
	cr := csv.NewReader(r)
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return recs[1:]
}

func parseF(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func parseI(t *testing.T, s string) int {
	t.Helper()
	v, err := strconv.Atoi(s)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// goldenColumns reads a data set written by golden.R as columns.
func goldenColumns(t *testing.T, set string) [][]float64 {
	t.Helper()
	recs := readCSV(t, "data_"+set+".csv.gz")
	cols := make([][]float64, len(recs[0]))
	for _, r := range recs {
		for j, s := range r {
			cols[j] = append(cols[j], parseF(t, s))
		}
	}
	return cols
}

// newRand is the seeded random source of the tests.
func newRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 2)) }

func relErr(got, want float64) float64 {
	if got == want {
		return 0
	}
	return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300)
}

// dataSet is the data set a golden set name refers to (shift3_a75 reuses
// shift3's data with another alpha).
func dataSet(set string) string {
	if i := strings.Index(set, "_a"); i > 0 {
		return set[:i]
	}
	return set
}

var goldenSets = []string{"corr2", "shift3", "wide2000", "small4", "stackloss"}

func TestQuantile7Golden(t *testing.T) {
	vectors := map[string][]float64{}
	for _, r := range readCSV(t, "vectors.csv") {
		vectors[r[0]] = append(vectors[r[0]], parseF(t, r[1]))
	}
	data := map[string][][]float64{}
	for _, s := range goldenSets {
		data[s] = goldenColumns(t, s)
	}
	count := 0
	for _, r := range readCSV(t, "quantile.csv") {
		var x []float64
		if v, ok := vectors[r[0]]; ok {
			x = v
		} else {
			x = data[r[0]][parseI(t, r[1])-1]
		}
		s := slices.Clone(x)
		slices.Sort(s)
		p, want := parseF(t, r[2]), parseF(t, r[3])
		if got := Quantile7(s, p); got != want {
			t.Errorf("%s column %s: Quantile7(%v) = %.17g, R %.17g", r[0], r[1], p, got, want)
		}
		count++
	}
	if count < 200 {
		t.Fatalf("compared %d quantiles, want at least 200", count)
	}
}

func TestClassicalGolden(t *testing.T) {
	want := map[string][]float64{}
	for _, r := range readCSV(t, "classical.csv.gz") {
		want[r[0]] = append(want[r[0]], parseF(t, r[2]))
	}
	flagged := goldenRowSets(t, "classical_flagged")
	for _, set := range goldenSets {
		cols := goldenColumns(t, set)
		s, err := Classical(cols)
		if err != nil {
			t.Fatalf("%s: %v", set, err)
		}
		d2, err := s.Distances(cols, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(d2) != len(want[set]) || len(d2) == 0 {
			t.Fatalf("%s: %d distances, R has %d", set, len(d2), len(want[set]))
		}
		worst := 0.0
		for i, d := range d2 {
			worst = max(worst, relErr(d, want[set][i]))
		}
		if worst > 1e-9 {
			t.Errorf("%s: classical d² differ from R's mahalanobis() by up to %.3g relative", set, worst)
		}
		cut := Cutoff(len(cols), DefaultJointQuantile)
		got, err := s.Flag(cols, cut)
		if err != nil {
			t.Fatal(err)
		}
		if rows := extremeRows(got); !slices.Equal(rows, flagged[set]) {
			t.Errorf("%s: classical flags rows %v, R %v", set, rows, flagged[set])
		}
	}
}

// extremeRows returns the 1-based rows of flagged rows, ascending.
func extremeRows(e []RowExtreme) []int {
	rows := make([]int, len(e))
	for i, r := range e {
		rows[i] = r.Index + 1
	}
	slices.Sort(rows)
	return rows
}

// goldenRowSets reads the row lists (1-based, ascending) under key in mcd.csv.gz.
func goldenRowSets(t *testing.T, key string) map[string][]int {
	t.Helper()
	out := map[string][]int{}
	for _, r := range readCSV(t, "mcd.csv.gz") {
		if r[1] == key {
			out[r[0]] = append(out[r[0]], parseI(t, r[2]))
		}
	}
	return out
}

type goldenMCD struct {
	alpha, h, crit, rawFactor, factor float64
	rawCenter, center                 []float64
	rawCov, cov                       map[[2]int]float64
	best, rawKept, flagged            []int
	rawMah, mah                       []float64
}

func loadGoldenMCD(t *testing.T) map[string]*goldenMCD {
	t.Helper()
	out := map[string]*goldenMCD{}
	get := func(set string) *goldenMCD {
		if out[set] == nil {
			out[set] = &goldenMCD{rawCov: map[[2]int]float64{}, cov: map[[2]int]float64{}}
		}
		return out[set]
	}
	for _, r := range readCSV(t, "mcd.csv.gz") {
		g := get(r[0])
		i, j, v := parseI(t, r[2]), parseI(t, r[3]), parseF(t, r[4])
		switch r[1] {
		case "alpha":
			g.alpha = v
		case "h":
			g.h = v
		case "crit":
			g.crit = v
		case "raw_factor":
			g.rawFactor = v
		case "factor":
			g.factor = v
		case "raw_center":
			g.rawCenter = append(g.rawCenter, v)
		case "center":
			g.center = append(g.center, v)
		case "raw_cov":
			g.rawCov[[2]int{i - 1, j - 1}] = v
		case "cov":
			g.cov[[2]int{i - 1, j - 1}] = v
		case "best":
			g.best = append(g.best, i)
		case "raw_kept":
			g.rawKept = append(g.rawKept, i)
		case "flagged":
			g.flagged = append(g.flagged, i)
		case "classical_flagged":
		default:
			t.Fatalf("mcd.csv.gz: unknown key %q", r[1])
		}
	}
	for _, r := range readCSV(t, "mcdrows.csv.gz") {
		g := get(r[0])
		g.rawMah = append(g.rawMah, parseF(t, r[2]))
		g.mah = append(g.mah, parseF(t, r[3]))
	}
	return out
}

// TestMCDFinishGolden starts from R's best h-subset and checks everything
// FastMCD computes from it (criterion, consistency factors, raw and
// reweighted center and covariance, distances, flagged rows) against
// covMcd to 1e-9 relative: the deterministic part of the estimate.
func TestMCDFinishGolden(t *testing.T) {
	golden := loadGoldenMCD(t)
	if len(golden) != 6 {
		t.Fatalf("golden files hold %d MCD sets, want 6", len(golden))
	}
	for set, g := range golden {
		t.Run(set, func(t *testing.T) {
			cols := goldenColumns(t, dataSet(set))
			if h := SubsetSize(len(cols[0]), len(cols), g.alpha); float64(h) != g.h || len(g.best) != h {
				t.Fatalf("SubsetSize = %d, R h = %v with %d rows in best", h, g.h, len(g.best))
			}
			best := make([]int, len(g.best))
			for i, r := range g.best {
				best[i] = r - 1
			}
			m, err := newMCDRun(cols, len(cols[0]), nil).finish(best, 0.975)
			if err != nil {
				t.Fatal(err)
			}
			compareMCD(t, m, g, cols, 1e-9, 1e-9)
		})
	}
}

// compareMCD compares an estimate with R's: the criterion, factors, centers
// and covariances within tol relative, distances within dtol relative, and
// the kept and flagged rows exactly.
func compareMCD(t *testing.T, m MCD, g *goldenMCD, cols [][]float64, tol, dtol float64) {
	t.Helper()
	type cmp struct {
		name      string
		got, want float64
	}
	checks := []cmp{
		{"crit (ln det)", m.LogDet, g.crit},
		{"raw factor", m.RawFactor, g.rawFactor},
		{"factor", m.Factor, g.factor},
	}
	p := len(cols)
	for i := range p {
		checks = append(checks,
			cmp{"raw center " + strconv.Itoa(i+1), m.Raw.Center[i], g.rawCenter[i]},
			cmp{"center " + strconv.Itoa(i+1), m.Final.Center[i], g.center[i]})
		for j := range p {
			ij := strconv.Itoa(i+1) + "," + strconv.Itoa(j+1)
			checks = append(checks,
				cmp{"raw cov " + ij, m.Raw.Cov.At(i, j), g.rawCov[[2]int{i, j}]},
				cmp{"cov " + ij, m.Final.Cov.At(i, j), g.cov[[2]int{i, j}]})
		}
	}
	for _, c := range checks {
		if relErr(c.got, c.want) > tol {
			t.Errorf("%s = %.15g, R %.15g", c.name, c.got, c.want)
		}
	}
	if m.Kept != len(g.rawKept) {
		t.Errorf("kept %d rows, R %d", m.Kept, len(g.rawKept))
	}
	rawD, _ := m.Raw.Distances(cols, nil)
	finalD, _ := m.Final.Distances(cols, nil)
	worst := 0.0
	for i := range rawD {
		worst = max(worst, relErr(rawD[i], g.rawMah[i]), relErr(finalD[i], g.mah[i]))
	}
	if worst > dtol {
		t.Errorf("robust distances differ from R's by up to %.3g relative", worst)
	}
	flagged, err := m.Final.Flag(cols, Cutoff(p, DefaultJointQuantile))
	if err != nil {
		t.Fatal(err)
	}
	if rows := extremeRows(flagged); !slices.Equal(rows, g.flagged) {
		t.Errorf("flags rows %v, R %v", rows, g.flagged)
	}
}

// TestFastMCDGolden runs the whole randomised search for several seeds.
// Both R and FastMCD end in one of several local minima of the determinant
// (over 20 seeds neither always reaches the smallest one either finds; on
// small4, n = 40 and p = 4, two minima 0.026 apart in ln det are each
// reached by both), so the test asks, for every set and seed:
//
//   - the flagged rows are exactly R's;
//   - ln det is at most 0.03 above R's criterion;
//   - in R's minimum (ln det within 0.005 of R's, which every set reaches
//     for at least one seed): the reweighted center within 0.02 standard
//     deviations of R's and each covariance entry within 0.02·sqrt(s_ii s_jj);
//   - with R's very subset: everything to 1e-9 (as TestMCDFinishGolden).
func TestFastMCDGolden(t *testing.T) {
	golden := loadGoldenMCD(t)
	seeds := []uint64{1, 7, 19, 23, 42}
	if testing.Short() {
		seeds = seeds[:2]
	}
	same := 0
	for set, g := range golden {
		cols := goldenColumns(t, dataSet(set))
		p := len(cols)
		inMinimum := 0
		for _, seed := range seeds {
			m, err := FastMCD(cols, MCDOptions{Alpha: g.alpha}, newRand(seed))
			if err != nil {
				t.Fatalf("%s seed %d: %v", set, seed, err)
			}
			if float64(m.H) != g.h {
				t.Fatalf("%s: h = %d, R %v", set, m.H, g.h)
			}
			flagged, err := m.Final.Flag(cols, Cutoff(p, DefaultJointQuantile))
			if err != nil {
				t.Fatal(err)
			}
			if rows := extremeRows(flagged); !slices.Equal(rows, g.flagged) {
				t.Errorf("%s seed %d: flags rows %v, R %v", set, seed, rows, g.flagged)
			}
			d := m.LogDet - g.crit
			if d > 0.03 {
				t.Errorf("%s seed %d: ln det %.9g is %.3g above R's %.9g", set, seed, m.LogDet, d, g.crit)
			}
			if math.Abs(d) > 0.005 {
				continue
			}
			inMinimum++
			for i := range p {
				si := math.Sqrt(g.cov[[2]int{i, i}])
				if d := math.Abs(m.Final.Center[i]-g.center[i]) / si; d > 0.02 {
					t.Errorf("%s seed %d: center %d = %.9g, R %.9g (%.3g sd apart)", set, seed, i+1, m.Final.Center[i], g.center[i], d)
				}
				for j := range p {
					sj := math.Sqrt(g.cov[[2]int{j, j}])
					if d := math.Abs(m.Final.Cov.At(i, j)-g.cov[[2]int{i, j}]) / (si * sj); d > 0.02 {
						t.Errorf("%s seed %d: cov %d,%d = %.9g, R %.9g", set, seed, i+1, j+1, m.Final.Cov.At(i, j), g.cov[[2]int{i, j}])
					}
				}
			}
			best := make([]int, len(m.Best))
			for i, r := range m.Best {
				best[i] = r + 1
			}
			if slices.Equal(best, g.best) {
				same++
				compareMCD(t, m, g, cols, 1e-9, 1e-9)
			}
		}
		if inMinimum == 0 {
			t.Errorf("%s: no seed reached R's minimum", set)
		}
	}
	t.Logf("best subset equal to R's in %d of %d runs", same, len(golden)*len(seeds))
	if same == 0 {
		t.Errorf("no run reached R's best subset")
	}
}

// TestGridGolden compares the consistency factor with robustbase's
// .MCDcons and Cutoff with R's qchisq on grids of p and probabilities, to
// 1e-10 relative.
func TestGridGolden(t *testing.T) {
	for _, c := range []struct {
		file, what string
		f          func(p int, q float64) float64
	}{
		{"consistency.csv", "ConsistencyFactor", ConsistencyFactor},
		{"chisq.csv", "Cutoff", Cutoff},
	} {
		recs := readCSV(t, c.file)
		if len(recs) < 40 {
			t.Fatalf("%s: %d rows, want at least 40", c.file, len(recs))
		}
		for _, r := range recs {
			p, q, want := parseI(t, r[0]), parseF(t, r[1]), parseF(t, r[2])
			if got := c.f(p, q); relErr(got, want) > 1e-10 {
				t.Errorf("%s(%d, %v) = %.15g, R %.15g", c.what, p, q, got, want)
			}
		}
	}
}
