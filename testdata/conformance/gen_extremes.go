//go:build ignore

// gen_extremes writes the data of the conformance cases extremes-planted
// and joint-key-case from seeded draws, with outliers planted at known
// rows, so the files can be checked against their source:
//
//	go run testdata/conformance/gen_extremes.go
//
// The clean values are drawn with math/rand/v2's PCG and truncated (drawn
// again when too far out), so that no clean value or row is extreme by
// chance and every rule must flag exactly the planted rows. The policies
// say which rows those are, and why.
package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
)

func main() {
	dir := filepath.Join("testdata", "conformance")
	for name, lines := range map[string][]string{"extremes-planted": planted(), "joint-key-case": keyCase()} {
		if err := os.WriteFile(filepath.Join(dir, name, "data.csv"), []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
}

// truncNormal draws a standard normal value within ±lim.
func truncNormal(rng *rand.Rand, lim float64) float64 {
	for {
		if z := rng.NormFloat64(); math.Abs(z) <= lim {
			return z
		}
	}
}

// planted is 300 rows of five columns, each clean value a normal (or
// lognormal) draw truncated at 2.5 sd, with values planted at known rows
// (1-based data rows):
//
//	fill_g     normal(500, 4), to 0.1; rows 40 (530), 120 (470), 250 (545)
//	torque_nm  normal(12, 0.5), to 0.01; rows 7 (16.5), 77 (9.1)
//	flow_lpm   normal(30, 2), to 0.01; row 200 (55)
//	level_cm   normal(80, 3), to 0.1, every 10th row missing; rows 15 (120), 95 (40)
//	wait_s     lognormal(2, 0.4), to 0.01; rows 60 (150), 180 (0.4)
func planted() []string {
	rng := rand.New(rand.NewPCG(20240612, 3))
	plant := map[string]map[int]string{
		"fill_g":    {40: "530.0", 120: "470.0", 250: "545.0"},
		"torque_nm": {7: "16.50", 77: "9.10"},
		"flow_lpm":  {200: "55.00"},
		"level_cm":  {15: "120.0", 95: "40.0"},
		"wait_s":    {60: "150.00", 180: "0.40"},
	}
	lines := []string{"fill_g,torque_nm,flow_lpm,level_cm,wait_s"}
	for row := 1; row <= 300; row++ {
		cells := []string{
			fmt.Sprintf("%.1f", 500+4*truncNormal(rng, 2.5)),
			fmt.Sprintf("%.2f", 12+0.5*truncNormal(rng, 2.5)),
			fmt.Sprintf("%.2f", 30+2*truncNormal(rng, 2.5)),
			fmt.Sprintf("%.1f", 80+3*truncNormal(rng, 2.5)),
			fmt.Sprintf("%.2f", math.Exp(2+0.4*truncNormal(rng, 2.5))),
		}
		if row%10 == 0 {
			cells[3] = ""
		}
		for j, name := range []string{"fill_g", "torque_nm", "flow_lpm", "level_cm", "wait_s"} {
			if v, ok := plant[name][row]; ok {
				cells[j] = v
			}
		}
		lines = append(lines, strings.Join(cells, ","))
	}
	return lines
}

// corr is the correlation of the key case's standardised columns:
// warmer air is drier and richer in CO2.
var corr = [3][3]float64{
	{1, -0.8, 0.6},
	{-0.8, 1, -0.5},
	{0.6, -0.5, 1},
}

// keyRows are the rows of the key case that break the joint pattern, and
// the squared Mahalanobis distance (under corr) each is planted at,
// increasing, so that the rules list them in the reverse order.
var keyRows = []struct {
	row int
	d2  float64
	dir [3]float64 // the direction of the standardised values
}{
	{row: 480, d2: 28, dir: [3]float64{1, 0, -1}},     // warm with little CO2
	{row: 33, d2: 32, dir: [3]float64{-1, -0.5, 0.5}}, // cold, rather dry, CO2-rich
	{row: 301, d2: 40, dir: [3]float64{1, 0.5, -1}},   // warm, rather humid, little CO2
	{row: 150, d2: 46, dir: [3]float64{-1, -1, 0}},    // cold and dry
	{row: 222, d2: 52, dir: [3]float64{1, 1, -0.5}},   // warm and humid
	{row: 555, d2: 60, dir: [3]float64{-1, -1, 1}},    // cold, dry, CO2-rich
}

// keyCase is 600 rows of three correlated columns: standardised values
// z ~ N(0, corr), drawn again until every |z_j| <= 2.2 and the squared
// distance zᵀ corr⁻¹ z <= 11.34 (the chi-square 0.99 quantile with 3
// degrees of freedom), written as
//
//	air_temp_c   22 + 3 z1, to 0.01
//	humidity_pct 60 + 8 z2, to 0.01
//	co2_ppm      600 + 80 z3, to 0.1
//
// The rows of keyRows are planted at their squared distance along their
// direction, every |z_j| at most 2.15: inside every column's range of
// clean values, and so inside its Tukey fences, but far from the joint
// pattern.
func keyCase() []string {
	rng := rand.New(rand.NewPCG(20240613, 5))
	l := cholesky(corr)
	inv := inverse(corr)
	planted := map[int][3]float64{}
	for _, k := range keyRows {
		s := math.Sqrt(k.d2 / quad(inv, k.dir))
		var z [3]float64
		for j := range z {
			z[j] = s * k.dir[j]
			if math.Abs(z[j]) > 2.15 {
				panic(fmt.Sprintf("row %d: |z_%d| = %.2f is too far out for the key case", k.row, j+1, math.Abs(z[j])))
			}
		}
		planted[k.row] = z
	}
	lines := []string{"air_temp_c,humidity_pct,co2_ppm"}
	for row := 1; row <= 600; row++ {
		z, ok := planted[row]
		for !ok {
			var e [3]float64
			for j := range e {
				e[j] = rng.NormFloat64()
			}
			for j := range z {
				z[j] = 0
				for k := 0; k <= j; k++ {
					z[j] += l[j][k] * e[k]
				}
			}
			ok = quad(inv, z) <= 11.34 && !slices.ContainsFunc(z[:], func(v float64) bool { return math.Abs(v) > 2.2 })
		}
		lines = append(lines, fmt.Sprintf("%.2f,%.2f,%.1f", 22+3*z[0], 60+8*z[1], 600+80*z[2]))
	}
	return lines
}

// quad is zᵀ a z.
func quad(a [3][3]float64, z [3]float64) float64 {
	var s float64
	for i := range 3 {
		for j := range 3 {
			s += z[i] * a[i][j] * z[j]
		}
	}
	return s
}

// cholesky returns the lower triangular l with l lᵀ = a.
func cholesky(a [3][3]float64) [3][3]float64 {
	var l [3][3]float64
	for i := range 3 {
		for j := 0; j <= i; j++ {
			s := a[i][j]
			for k := range j {
				s -= l[i][k] * l[j][k]
			}
			if i == j {
				l[i][i] = math.Sqrt(s)
			} else {
				l[i][j] = s / l[j][j]
			}
		}
	}
	return l
}

// inverse inverts a 3 × 3 matrix by its adjugate.
func inverse(a [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := range 3 {
		for j := range 3 {
			r0, r1 := (i+1)%3, (i+2)%3
			c0, c1 := (j+1)%3, (j+2)%3
			c[j][i] = a[r0][c0]*a[r1][c1] - a[r0][c1]*a[r1][c0]
		}
	}
	det := a[0][0]*c[0][0] + a[0][1]*c[1][0] + a[0][2]*c[2][0]
	for i := range 3 {
		for j := range 3 {
			c[i][j] /= det
		}
	}
	return c
}
