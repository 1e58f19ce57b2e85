package dist

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

func TestResolution(t *testing.T) {
	cases := []struct {
		x    []float64
		want float64 // 0: none
	}{
		{[]float64{0.01, 0.02, 1.57}, 0.01},
		{[]float64{20.25, 19.5, 21.75}, 0.05},
		{[]float64{0.1 + 0.2, 0.7}, 0.1}, // 0.30000000000000004
		{[]float64{0.07, 0.14, 0.21}, 0.07 / 7},
		{[]float64{12, 7, 3}, 1},
		{[]float64{10, 20, 30}, 10},
		{[]float64{0, 5, 15}, 5},
		{[]float64{0, 4, -6}, 2},
		{[]float64{100, 300}, 100},
		{[]float64{1e12, 2e12}, 1e12},
		{[]float64{123456789.5}, 0.5},
		{[]float64{1e-3, 2e-3, -7e-3}, 1e-3},
		{[]float64{3.14159}, 1e-5},
		{[]float64{-36.6, 0}, 0.2},
		{[]float64{math.Pi}, 0},
		{[]float64{1, math.Sqrt2}, 0},
		{[]float64{0, 0}, 0},
		{[]float64{1, math.NaN()}, 0},
		{[]float64{1, math.Inf(1)}, 0},
		{nil, 0},
	}
	for _, c := range cases {
		h, ok := Resolution(c.x)
		if ok != (c.want > 0) || h != c.want {
			t.Errorf("Resolution(%v) = %v, %v; want %v", c.x, h, ok, c.want)
		}
	}
}

// TestResolutionOfRoundedSample rounds a seeded normal sample to 0.01 as
// a logger would (printing and reading back two decimals) and recovers
// the step.
func TestResolutionOfRoundedSample(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	x := make([]float64, 100000)
	for i := range x {
		x[i] = math.Round((20+5*r.NormFloat64())*100) / 100
	}
	if h, ok := Resolution(x); !ok || h != 0.01 {
		t.Errorf("got %v, %v; want 0.01", h, ok)
	}
}

// TestRounded checks the rounded distribution: its CDF is the continuous
// CDF at the cell's upper edge and is flat between grid points, its masses
// are the cells and sum to 1, and its quantile inverts its CDF.
func TestRounded(t *testing.T) {
	d, err := mustLookup(t, "normal").New(map[string]float64{"mean": 20, "sd": 0.05})
	if err != nil {
		t.Fatal(err)
	}
	rd := d.Rounded(0.01)
	if got, want := rd.CDF(20.01), d.CDF(20.015); got != want {
		t.Errorf("CDF(20.01) = %v, want F(20.015) = %v", got, want)
	}
	if rd.CDF(20.0149) != rd.CDF(20.01) {
		t.Error("the rounded CDF moves between grid points")
	}
	if rd.Prob(20.005) != 0 {
		t.Error("mass off the grid")
	}
	var sum float64
	for k := 1900; k <= 2100; k++ {
		y := float64(k) / 100
		p := rd.Prob(y)
		if want := d.Cell(y, 0.01); !closeRel(p, want, 1e-9, 0) {
			t.Errorf("Prob(%v) = %v, cell %v", y, p, want)
		}
		sum += p
		if c := rd.CDF(y); math.Abs(c-d.CDF(y+0.005)) > 1e-12 {
			t.Errorf("CDF(%v) = %v, want F(%v)", y, c, y+0.005)
		}
	}
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("masses sum to %v", sum)
	}
	for _, p := range probGrid {
		q := rd.Quantile(p)
		below := q - 0.01
		if rd.CDF(q) < p || rd.CDF(below) >= p {
			t.Errorf("Quantile(%v) = %v: CDF %v there, %v one step below", p, q, rd.CDF(q), rd.CDF(below))
		}
		if k := q * 100; math.Abs(k-math.Round(k)) > 1e-6 {
			t.Errorf("Quantile(%v) = %v is off the grid", p, q)
		}
	}
}

// TestRoundedRemovesTieMisfit shows why Rounded exists: a large normal
// sample recorded to 0.1 sd is far from the continuous normal in the
// Kolmogorov distance (its empirical CDF jumps a whole cell at each
// recorded value), and as close to the rounded normal as sampling allows,
// below the 1% critical value 1.63/√n (Massey 1951, as in VALUES.md §2.1).
func TestRoundedRemovesTieMisfit(t *testing.T) {
	const n = 200000
	d, err := mustLookup(t, "normal").New(map[string]float64{"mean": 0, "sd": 1})
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(5, 6))
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Round(d.Rand(r)*10) / 10
	}
	h, ok := Resolution(x)
	if !ok || h != 0.1 {
		t.Fatalf("resolution %v, %v; want 0.1", h, ok)
	}
	crit := 1.63 / math.Sqrt(float64(n))
	if D := ksDistance(x, d.CDF); D < 5*crit {
		t.Errorf("distance to the continuous normal %.4f, expected well above %.4f", D, crit)
	}
	if D := gridDistance(x, d.Rounded(h)); D > crit {
		t.Errorf("distance to the rounded normal %.4f, above %.4f", D, crit)
	}
}

// gridDistance returns sup |F_n − G| for a G that only jumps at the
// sample's grid: the largest gap at the distinct values.
func gridDistance(x []float64, g Rounded) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	n := float64(len(s))
	var D float64
	for i, v := range s {
		if i+1 < len(s) && s[i+1] == v {
			continue
		}
		D = math.Max(D, math.Abs(float64(i+1)/n-g.CDF(v)))
	}
	return D
}

// TestLeadingDigits compares with the decimal digits printed by strconv.
func TestLeadingDigits(t *testing.T) {
	cases := []struct {
		x    float64
		k    int
		want int
	}{
		{0.3, 1, 3}, {0.3, 2, 30}, {1000, 1, 1}, {999.99, 2, 99}, {0.0372, 2, 37},
		{1e-300, 1, 1}, {5e-324, 1, 4}, {1.7976931348623157e308, 2, 17},
		{123456, 2, 12}, {0.1 + 0.2, 2, 30}, {9.999999999999998, 1, 9}, {99.99999999999999, 2, 99},
		{100, 2, 10}, {0.7, 1, 7}, {0.07, 2, 70}, {1.15, 3, 115}, {4.35, 3, 435},
	}
	for _, c := range cases {
		got, ok := LeadingDigits(c.x, c.k)
		if !ok || got != c.want {
			t.Errorf("LeadingDigits(%v, %d) = %d, %v; want %d", c.x, c.k, got, ok, c.want)
		}
	}
	for _, bad := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		if _, ok := LeadingDigits(bad, 1); ok {
			t.Errorf("LeadingDigits(%v) reports ok", bad)
		}
	}
}
