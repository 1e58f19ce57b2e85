//go:build ignore

// gen_distributions writes the data of the conformance cases
// distribution-fits and distribution-counts from seeded draws, so the files
// can be checked against their source:
//
//	go run testdata/conformance/gen_distributions.go
//
// Each column is drawn from a stated family with math/rand/v2's PCG and
// written with the resolution a logger would use; the policies say which
// columns should pass and fail, and why.
package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
)

func main() {
	dir := filepath.Join("testdata", "conformance")
	if err := write(filepath.Join(dir, "distribution-fits", "data.csv"), fits()); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	if err := write(filepath.Join(dir, "distribution-counts", "data.csv"), counts()); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
}

// fits is 600 rows of continuous measurements:
//
//	weight_g    normal(250, 12), to 0.1
//	dwell_s     lognormal(meanlog 3, sdlog 0.6), to 0.01
//	lifetime_h  Weibull(shape 1.8, scale 100), to 0.1, by inversion
//	fill_ml     normal(500, 2), to 0.01
//	torque_nm   normal(40.6, 2), to 0.01
func fits() []string {
	rng := rand.New(rand.NewPCG(20240611, 1))
	lines := []string{"weight_g,dwell_s,lifetime_h,fill_ml,torque_nm"}
	for range 600 {
		weight := 250 + 12*rng.NormFloat64()
		dwell := math.Exp(3 + 0.6*rng.NormFloat64())
		life := 100 * math.Pow(-math.Log(1-rng.Float64()), 1/1.8)
		fill := 500 + 2*rng.NormFloat64()
		torque := 40.6 + 2*rng.NormFloat64()
		lines = append(lines, fmt.Sprintf("%.1f,%.2f,%.1f,%.2f,%.2f", weight, dwell, life, fill, torque))
	}
	return lines
}

// counts is 2000 rows of counts, categories and amounts:
//
//	calls        Poisson(4), by Knuth's multiplication method
//	grade        A, B, C with shares 50%, 30%, 20%
//	batch        the same shares (the policy claims equal shares)
//	invoice_eur  10^U, U uniform on (1, 5), to 0.01: Benford's law
//	sku_price    whole numbers uniform on 100..999: not Benford
//	depth_m      lognormal(meanlog 1, sdlog 0.4), to 0.01, with rows
//	             137, 1020 and 1733 negative (a sign error)
func counts() []string {
	rng := rand.New(rand.NewPCG(20240611, 2))
	category := func() string {
		switch u := rng.Float64(); {
		case u < 0.5:
			return "A"
		case u < 0.8:
			return "B"
		}
		return "C"
	}
	lines := []string{"calls,grade,batch,invoice_eur,sku_price,depth_m"}
	for row := 1; row <= 2000; row++ {
		calls, p := 0, rng.Float64()
		for limit := math.Exp(-4); p > limit; calls++ {
			p *= rng.Float64()
		}
		invoice := math.Pow(10, 1+4*rng.Float64())
		price := 100 + rng.IntN(900)
		depth := math.Exp(1 + 0.4*rng.NormFloat64())
		if row == 137 || row == 1020 || row == 1733 {
			depth = -depth
		}
		lines = append(lines, fmt.Sprintf("%d,%s,%s,%.2f,%d,%.2f", calls, category(), category(), invoice, price, depth))
	}
	return lines
}

func write(path string, lines []string) error {
	return os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644)
}
