package dist

import (
	"bufio"
	"compress/gzip"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// The golden values come from testdata/golden.py (SciPy, Debian's
// python3-scipy; versions in testdata/golden.json): seeded samples of every
// parametric family at sizes 20 to 5000, their maximum-likelihood
// estimates and log-likelihoods, and CDF, survival, log-density and
// quantile values at the estimates.

type goldenPoint struct {
	X       float64 `json:"x"`
	CDF     float64 `json:"cdf"`
	SF      float64 `json:"sf"`
	LogProb float64 `json:"logprob"`
}

type goldenQuantile struct {
	P float64 `json:"p"`
	Q float64 `json:"q"`
}

type goldenCase struct {
	ID        string             `json:"id"`
	Family    string             `json:"family"`
	N         int                `json:"n"`
	Truth     map[string]float64 `json:"truth"`
	Given     map[string]float64 `json:"given"`
	Estimates map[string]float64 `json:"estimates"`
	LogLik    float64            `json:"loglik"`
	Points    []goldenPoint      `json:"points"`
	Quantiles []goldenQuantile   `json:"quantiles"`
}

type goldenFile struct {
	Generator string            `json:"generator"`
	Libraries map[string]string `json:"libraries"`
	Samples   string            `json:"samples"`
	Cases     []goldenCase      `json:"cases"`
	Trigamma  []struct {
		X     float64 `json:"x"`
		Value float64 `json:"value"`
	} `json:"trigamma"`
	Multinomial []struct {
		Counts []float64 `json:"counts"`
		Probs  []float64 `json:"probs"`
		LogPMF float64   `json:"logpmf"`
	} `json:"multinomial"`
}

// loadGolden reads testdata/golden.json and the samples it names.
func loadGolden(t testing.TB) (goldenFile, map[string][]float64) {
	t.Helper()
	raw, err := os.ReadFile("testdata/golden.json")
	if err != nil {
		t.Fatal(err)
	}
	var g goldenFile
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatalf("testdata/golden.json: %v", err)
	}
	if g.Libraries["scipy"] == "" || len(g.Cases) < 40 {
		t.Fatalf("testdata/golden.json: want scipy's version and at least 40 cases, got %v and %d", g.Libraries, len(g.Cases))
	}
	f, err := os.Open("testdata/" + g.Samples)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatalf("testdata/%s: %v", g.Samples, err)
	}
	samples := map[string][]float64{}
	br := bufio.NewReader(zr)
	for line := 1; ; line++ {
		text, err := br.ReadString('\n')
		if text == "" && err != nil {
			break
		}
		fields := strings.Split(strings.TrimSpace(text), ",")
		xs := make([]float64, len(fields)-1)
		for i, s := range fields[1:] {
			if xs[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("testdata/%s:%d: %v", g.Samples, line, err)
			}
		}
		samples[fields[0]] = xs
	}
	return g, samples
}

// closeRel reports whether got is within tol of want relative to
// max(|want|, floor).
func closeRel(got, want, tol, floor float64) bool {
	if got == want {
		return true
	}
	return math.Abs(got-want) <= tol*math.Max(math.Abs(want), floor)
}

func goldenFamily(t *testing.T, c goldenCase) Family {
	t.Helper()
	f, err := Lookup(c.Family)
	if err != nil {
		t.Fatal(err)
	}
	f, err = f.Fix(c.Given)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestGoldenFunctions compares CDF, survival, log-density and quantile at
// SciPy's estimates with SciPy's values, to 1e-9 relative (quantiles near
// 0 relative to the interquartile range; discrete quantiles exactly).
func TestGoldenFunctions(t *testing.T) {
	g, _ := loadGolden(t)
	for _, c := range g.Cases {
		t.Run(c.ID, func(t *testing.T) {
			f := goldenFamily(t, c)
			params := map[string]float64{}
			for k, v := range c.Estimates {
				if _, given := c.Given[k]; !given {
					params[k] = v
				}
			}
			d, err := f.New(params)
			if err != nil {
				t.Fatal(err)
			}
			const tol = 1e-9
			for _, p := range c.Points {
				if got := d.CDF(p.X); !closeRel(got, p.CDF, tol, 0) {
					t.Errorf("CDF(%v) = %v, want %v", p.X, got, p.CDF)
				}
				if got := d.Survival(p.X); !closeRel(got, p.SF, tol, 0) {
					t.Errorf("Survival(%v) = %v, want %v", p.X, got, p.SF)
				}
				if got := d.LogProb(p.X); !closeRel(got, p.LogProb, tol, 0) {
					t.Errorf("LogProb(%v) = %v, want %v", p.X, got, p.LogProb)
				}
			}
			iqr := d.Quantile(0.75) - d.Quantile(0.25)
			for _, q := range c.Quantiles {
				got := d.Quantile(q.P)
				ok := closeRel(got, q.Q, tol, iqr)
				if f.Kind() == Discrete {
					ok = got == q.Q
				}
				if !ok {
					t.Errorf("Quantile(%v) = %v, want %v", q.P, got, q.Q)
				}
			}
		})
	}
}

// TestGoldenFits compares Fit's estimates with SciPy's maximum-likelihood
// estimates to 1e-4 relative and the log-likelihood to 1e-6 relative.
func TestGoldenFits(t *testing.T) {
	g, samples := loadGolden(t)
	for _, c := range g.Cases {
		t.Run(c.ID, func(t *testing.T) {
			x := samples[c.ID]
			if len(x) != c.N {
				t.Fatalf("sample has %d values, want %d", len(x), c.N)
			}
			fit, err := goldenFamily(t, c).Fit(x)
			if err != nil {
				t.Fatal(err)
			}
			for k, want := range c.Estimates {
				if got := fit.Dist.Param(k); !closeRel(got, want, 1e-4, 0) {
					t.Errorf("%s = %v, want %v (rel. error %.2g)", k, got, want, math.Abs(got-want)/math.Abs(want))
				}
			}
			if !closeRel(fit.LogLik, c.LogLik, 1e-6, 0) {
				t.Errorf("log-likelihood %v, want %v", fit.LogLik, c.LogLik)
			}
			if fit.LogLik < c.LogLik-1e-9*math.Abs(c.LogLik) {
				t.Logf("note: SciPy's maximum is higher by %.3g", c.LogLik-fit.LogLik)
			}
		})
	}
}
