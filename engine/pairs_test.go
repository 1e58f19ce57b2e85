package engine_test

import (
	"bufio"
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestNorrisThroughPairRule fits the NIST StRD Norris problem
// (itl.nist.gov/div898/strd/lls/, lower difficulty) with a linear pair
// rule, end to end: CSV in batches of 5 rows, the moments streamed and
// merged batch by batch (relate.Moments) within each of the engine's
// lanes and then across lanes, the line from them. The slope, intercept,
// R² and residual sd the result reports are compared with NIST's certified
// values (checks/relate/testdata) by the log relative error
// LRE = -log10(|got - certified| / |certified|). Measured on linux/amd64:
// b1 14.4, b0 12.8, R² 15 or more, s 10.8 (b0 ≈ -0.26 is the difference
// of ȳ ≈ 429 and b1 x̄; s comes from SSE = Syy - Sxy²/Sxx, a difference of
// two numbers near 4.3e6 whose relative rounding error is magnified by
// 1/(1 - R²) ≈ 1.6e5, so s moves in its 11th digit with the order of the
// merges: 11.7 when one accumulator saw every batch); the test asserts
// 10.5 for each. McCullough (1998) expects about 9 of good software on
// the lower-difficulty sets.
func TestNorrisThroughPairRule(t *testing.T) {
	dir := t.TempDir()
	x, y := norris(t)
	var b strings.Builder
	b.WriteString("x,y\n")
	for i := range x {
		b.WriteString(strconv.FormatFloat(x[i], 'g', -1, 64) + "," + strconv.FormatFloat(y[i], 'g', -1, 64) + "\n")
	}
	data := filepath.Join(dir, "norris.csv")
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	pol, err := rules.Parse(filepath.Join(dir, "policy.yaml"), []byte(`policy: norris
columns:
  x: {type: number}
  y: {type: number}
pairs:
  - name: calibration
    columns: [x, y]
    relation: linear
    slope: {minimum: 0.99, maximum: 1.01}
    intercept: {minimum: -1, maximum: 1}
    r2: {minimum: 0.9999}
`))
	if err != nil {
		t.Fatal(err)
	}
	rep, err := engine.Run(context.Background(), pol, []string{data}, engine.Options{Source: source.Options{BatchRows: 5}})
	if err != nil {
		t.Fatal(err)
	}
	cert := norrisCertified(t)
	for _, r := range rep.Results {
		if !strings.HasPrefix(r.ID, "pairs.") {
			continue
		}
		if r.Verdict.String() != "pass" || r.Pair == nil || r.Pair.N != 36 || r.Pair.Line == nil {
			t.Fatalf("%s: %s %+v (%s)", r.ID, r.Verdict, r.Pair, r.Message)
		}
		got := map[string]float64{
			"B1_estimate": r.Estimates["slope"],
			"B0_estimate": r.Estimates["intercept"],
			"r_squared":   r.Estimates["r2"],
			"residual_sd": float64(r.Pair.Line.Scale),
		}
		for q, v := range got {
			c := cert[q]
			lre := -math.Log10(math.Abs(v-c) / math.Abs(c))
			if math.IsNaN(lre) || lre < 10.5 {
				t.Errorf("%s %s: %.15g, certified %.15g, LRE %.1f, want 10.5 or more", r.ID, q, v, c, lre)
			}
			t.Logf("%s %s LRE %.1f", r.ID, q, min(lre, 15))
		}
	}
}

// norris reads the Norris data: x and y.
func norris(t *testing.T) (x, y []float64) {
	t.Helper()
	for _, cells := range csvRows(t, "nist_strd_norris.csv") {
		yv, err1 := strconv.ParseFloat(cells[0], 64)
		xv, err2 := strconv.ParseFloat(cells[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("norris row %v", cells)
		}
		x, y = append(x, xv), append(y, yv)
	}
	if len(x) != 36 {
		t.Fatalf("norris has %d rows, want 36", len(x))
	}
	return x, y
}

// norrisCertified reads NIST's certified values for Norris.
func norrisCertified(t *testing.T) map[string]float64 {
	t.Helper()
	out := map[string]float64{}
	for _, cells := range csvRows(t, "nist_strd_lls_certified.csv") {
		if cells[0] != "Norris" {
			continue
		}
		v, err := strconv.ParseFloat(cells[2], 64)
		if err != nil {
			t.Fatal(err)
		}
		out[cells[1]] = v
	}
	return out
}

// csvRows reads the data rows of a file of checks/relate/testdata: its
// comment line and header skipped.
func csvRows(t *testing.T, name string) [][]string {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "checks", "relate", "testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows [][]string
	header := false
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		if !header {
			header = true
			continue
		}
		rows = append(rows, strings.Split(line, ","))
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return rows
}

// TestWherePositions: a where expression that does not type-check against
// the data is reported at the character it fails on, in the policy file,
// for a column's rules and a pair's alike, with every other problem.
func TestWherePositions(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "d.csv")
	if err := os.WriteFile(data, []byte("a,b,site\n1,2,x\n2,4,y\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "p.yaml")
	pol, err := rules.Parse(path, []byte(`policy: where-positions
columns:
  a:
    nulls: 0
    where: "site > 3 and b < 1"
pairs:
  - columns: [a, b]
    relation: ordered
    where: b < "x"
`))
	if err != nil {
		t.Fatal(err)
	}
	_, err = engine.Run(context.Background(), pol, []string{data}, engine.Options{})
	var mis *engine.MismatchError
	if !errors.As(err, &mis) || len(mis.Problems) != 2 {
		t.Fatalf("Run: %v, want two problems", err)
	}
	for i, want := range []string{
		path + ":4:5: rule columns.a.nulls: where: expression, at " + path + ":5:18: invalid operation: > (mismatched types string and int)",
		path + ":7:5: rule pairs.a+b.ordered: where: expression, at " + path + ":9:14: invalid operation: < (mismatched types integer and string)",
	} {
		if mis.Problems[i] != want {
			t.Errorf("problem %d:\ngot  %s\nwant %s", i, mis.Problems[i], want)
		}
	}
}
