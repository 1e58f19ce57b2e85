package gof

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestDetectResolution(t *testing.T) {
	for _, c := range []struct {
		name string
		x    []float64
		want Resolution
		ok   bool
	}{
		{"hundredths", []float64{12.34, 12.35, 12.37, 11.02, 12.34}, Resolution{Step: 0.01}, true},
		{"quarters", []float64{0.25, 1.5, 2.75, -0.5, 1.5}, Resolution{Step: 0.25}, true},
		{"offset grid", []float64{0.1, 0.35, 0.6, 1.1}, Resolution{Step: 0.25, Origin: 0.1}, true},
		{"tens", []float64{10, 30, 70, 120}, Resolution{Step: 10}, true},
		{"integers", []float64{3, 4, 9, 4}, Resolution{Step: 1}, true},
		{"continuous", []float64{0.12345678901234, 1.9876543210987, 2.5}, Resolution{}, false},
		{"one distinct value", []float64{2, 2, 2}, Resolution{}, false},
		{"single value", []float64{2}, Resolution{}, false},
	} {
		s, _ := Sort(c.x)
		got, ok := DetectResolution(s)
		if ok != c.ok || !near(got.Step, c.want.Step, 1e-12) || !near(got.Origin, c.want.Origin, 1e-12) {
			t.Errorf("%s: got %+v %v, want %+v %v", c.name, got, ok, c.want, c.ok)
		}
	}
}

func TestKSAtResolutionErrors(t *testing.T) {
	s, _ := Sort([]float64{1.00, 1.01, 1.003})
	ref := distuv.Normal{Mu: 1, Sigma: 1}
	if _, err := KSAtResolution(s, ref, Resolution{Step: 0.01}); err == nil {
		t.Error("a value off the grid was accepted")
	}
	for _, res := range []Resolution{{Step: 0}, {Step: -1}, {Step: math.Inf(1)}, {Step: 1, Origin: math.NaN()}} {
		if _, err := KSAtResolution(s, ref, res); err == nil {
			t.Errorf("resolution %+v was accepted", res)
		}
	}
	if _, err := KSAtResolution(Sorted{}, ref, Resolution{Step: 1}); err == nil {
		t.Error("an empty sample was accepted")
	}
}

// With one value per cell and a fine grid, the statistic over cell
// boundaries is close to the continuous one and never above it by more
// than the reference's mass in half a cell.
func TestKSAtResolutionFineGrid(t *testing.T) {
	x := make([]float64, 500)
	normalRef{mu: 0, sigma: 1}.Draw(newRand(5), x)
	for i := range x {
		x[i] = math.Round(x[i]*1e6) / 1e6
	}
	s, _ := Sort(x)
	ref := distuv.UnitNormal
	cont, err := Specified(KS, s, ref)
	if err != nil {
		t.Fatal(err)
	}
	grid, err := KSAtResolution(s, ref, Resolution{Step: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	if !near(grid.Statistic.Value, cont.Statistic.Value, 1e-6) || !grid.Method.Conservative {
		t.Errorf("fine grid D = %v, continuous D = %v, conservative %v", grid.Statistic.Value, cont.Statistic.Value, grid.Method.Conservative)
	}
}

// A normal sample rounded to 0.01: the continuous KS test sees the ties and
// rejects a column that is normal by construction; the comparison at cell
// boundaries does not. At n = 1e6 the tie steps are about 0.004 high
// (0.01 times the density at the mode), far beyond the 1.36/sqrt(n) =
// 0.0014 that the continuous test tolerates at 5 %.
func TestRoundedNormalPassesAtResolution(t *testing.T) {
	checkRounded(t, 1_000_000, 11)
}

// The same at 1e7 values (about 3 s: drawing, rounding, sorting).
func TestRoundedNormalPassesAtResolution1e7(t *testing.T) {
	if testing.Short() {
		t.Skip("1e7 values take a few seconds")
	}
	checkRounded(t, 10_000_000, 12)
}

func checkRounded(t *testing.T, n int, seed uint64) {
	t.Helper()
	const mu, sigma, h = 20, 1, 0.01
	x := make([]float64, n)
	normalRef{mu: mu, sigma: sigma}.Draw(newRand(seed), x)
	for i := range x {
		x[i] = math.Round(x[i]/h) * h
	}
	s, err := Sort(x)
	if err != nil {
		t.Fatal(err)
	}
	res, ok := DetectResolution(s)
	if !ok || !near(res.Step, h, 1e-12) {
		t.Fatalf("detected resolution %+v %v, want step %v", res, ok, h)
	}
	ref := distuv.Normal{Mu: mu, Sigma: sigma}
	naive, err := Specified(KS, s, ref)
	if err != nil {
		t.Fatal(err)
	}
	grid, err := KSAtResolution(s, ref, res)
	if err != nil {
		t.Fatal(err)
	}
	if naive.PValue > 1e-6 {
		t.Errorf("n=%d: the continuous KS test did not reject the rounded sample: D = %.5f, p = %.3g", n, naive.Statistic.Value, naive.PValue)
	}
	if grid.PValue < 0.05 {
		t.Errorf("n=%d: KS at resolution %v rejected a rounded normal sample: D = %.6f, p = %.3g", n, h, grid.Statistic.Value, grid.PValue)
	}
	t.Logf("n=%d: continuous D = %.5f p = %.2g; at resolution %v D = %.6f p = %.3f (%v)",
		n, naive.Statistic.Value, naive.PValue, h, grid.Statistic.Value, grid.PValue, grid.Method.Source)
}
