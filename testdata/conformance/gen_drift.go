//go:build ignore

// gen_drift writes the data of the conformance cases drift-planted and
// drift-stable from seeded draws (math/rand/v2's PCG):
//
//	go run testdata/conformance/gen_drift.go
//	go run ./cmd/assay baseline testdata/conformance/drift-planted/reference.csv \
//	    -o testdata/conformance/drift-planted/reference.baseline.json
//	(and the same for drift-stable)
//
// reference.csv is a trusted batch of 1000 rows: weight_kg ~ N(50, 10),
// yield ~ N(100, 20), site in A (50%), B (30%), C (20%), humidity ~
// N(60, 5) with no nulls; weight is in kilograms. drift-stable/data.csv is a new draw of the same
// distributions. drift-planted/data.csv is a new draw with four planted
// changes: weight is written in grams (x1000), yield's mean is
// shifted by half a standard deviation (+10), site has a new category Z
// at rows 7, 57, 107, ... (every 50th, 20 rows), and humidity is null at
// every 10th row (10%).
package main

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
)

func main() {
	dir := filepath.Join("testdata", "conformance")
	write := func(path string, lines []string) {
		if err := os.WriteFile(filepath.Join(dir, path), []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	for _, c := range []string{"drift-planted", "drift-stable"} {
		write(filepath.Join(c, "reference.csv"), batch(1, false))
	}
	write(filepath.Join("drift-stable", "data.csv"), batch(2, false))
	write(filepath.Join("drift-planted", "data.csv"), batch(3, true))
}

// batch draws 1000 rows; planted applies the four changes.
func batch(seed uint64, planted bool) []string {
	rng := rand.New(rand.NewPCG(seed, 2026))
	lines := []string{"weight,yield,site,humidity"}
	for i := 1; i <= 1000; i++ {
		w := 50 + 10*rng.NormFloat64()
		y := 100 + 20*rng.NormFloat64()
		u := rng.Float64()
		site := "A"
		switch {
		case u > 0.8:
			site = "C"
		case u > 0.5:
			site = "B"
		}
		h := fmt.Sprintf("%.2f", 60+5*rng.NormFloat64())
		if planted {
			w *= 1000
			y += 10
			if i%50 == 7 {
				site = "Z"
			}
			if i%10 == 0 {
				h = ""
			}
		}
		lines = append(lines, fmt.Sprintf("%.3f,%.2f,%s,%s", w, y, site, h))
	}
	return lines
}
