//go:build ignore

// gen_pairs writes the data of the conformance cases pairs-linear,
// pairs-relations and segments from seeded draws, so the files can be
// checked against their source:
//
//	go run testdata/conformance/gen_pairs.go
//
// Each column follows a stated model drawn with math/rand/v2's PCG, with
// problems planted at stated rows; the policies say which rules should
// pass and fail, and which rows they should list. check_pairs.R recomputes
// the flagged rows with R (lm, rstudent, cooks.distance, qt, qf, cor.test,
// chisq.test) and a Theil-Sen line written out in R from its definition.
package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"time"
)

func main() {
	dir := filepath.Join("testdata", "conformance")
	for name, lines := range map[string][]string{
		"pairs-linear":    linear(),
		"pairs-relations": relations(),
		"segments":        segments(),
	} {
		if err := write(filepath.Join(dir, name, "data.csv"), lines); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
}

// linear is 400 rows of a heating plant:
//
//	outside_temp_c  uniform(-10, 20), to 0.1
//	heater_kwh      80 - 2.5 outside_temp_c + normal(0, 3), to 0.01;
//	                row 137 reads 30 kWh high (an outlier of average
//	                leverage), row 300 is a cold snap of -38 °C read with
//	                40 kWh less than the line (an influential point)
//	pump_hz         uniform(20, 50), to 0.01
//	flow_lpm        5 + 1.5 pump_hz + normal(0, 1), to 0.01; rows 381 to
//	                400 are a stuck meter: pump_hz uniform(75, 80) and
//	                flow_lpm 40 + normal(0, 0.5), a cluster far from the
//	                line that pulls the least-squares line onto itself
func linear() []string {
	rng := rand.New(rand.NewPCG(20250301, 4))
	lines := []string{"day,outside_temp_c,heater_kwh,pump_hz,flow_lpm"}
	for row := 1; row <= 400; row++ {
		temp := round(-10+30*rng.Float64(), 1)
		kwh := 80 - 2.5*temp + 3*rng.NormFloat64()
		switch row {
		case 137:
			kwh += 30
		case 300:
			temp = -38
			kwh = 80 - 2.5*temp - 40
		}
		hz := 20 + 30*rng.Float64()
		flow := 5 + 1.5*hz + rng.NormFloat64()
		if row > 380 {
			hz = 75 + 5*rng.Float64()
			flow = 40 + 0.5*rng.NormFloat64()
		}
		lines = append(lines, fmt.Sprintf("%d,%.1f,%.2f,%.2f,%.2f", row, temp, kwh, hz, flow))
	}
	return lines
}

// relations is 300 rows of lab orders:
//
//	dose_mg     uniform(1, 100), to 0.1
//	response    10 ln(dose_mg) + normal(0, 1), to 0.01 (monotonic, not
//	            linear)
//	batch_no    uniform whole numbers 1..1000, independent of the rest
//	start_at    2025-03-01 plus a uniform second of 30 days
//	end_at      start_at plus uniform(5, 120) minutes; rows 50, 120 and
//	            250 end 10, 90 and 30 minutes before they start, row 200
//	            ends when it starts
//	region      N, S, E, W uniformly
//	product     A, B, C with shares depending on region (N: 60/30/10,
//	            S: 10/60/30, E: 30/10/60, W: 34/33/33)
//	shift       early, late uniformly, independent of the rest
//	sku         S-001..S-040 uniformly
//	category    the sku's category, (number mod 4); rows 77 (S-017) and
//	            151, 152 (S-033) carry another
func relations() []string {
	rng := rand.New(rand.NewPCG(20250302, 5))
	lines := []string{"order_id,dose_mg,response,batch_no,start_at,end_at,region,product,shift,sku,category"}
	regions := []string{"N", "S", "E", "W"}
	shares := map[string][3]float64{"N": {0.6, 0.3, 0.1}, "S": {0.1, 0.6, 0.3}, "E": {0.3, 0.1, 0.6}, "W": {0.34, 0.33, 0.33}}
	cats := []string{"tools", "paint", "garden", "kitchen"}
	t0 := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	for row := 1; row <= 300; row++ {
		dose := round(1+99*rng.Float64(), 1)
		resp := 10*math.Log(dose) + rng.NormFloat64()
		batch := 1 + rng.IntN(1000)
		start := t0.Add(time.Duration(rng.IntN(30*86400)) * time.Second)
		end := start.Add(time.Duration(5*60+rng.IntN(115*60)) * time.Second)
		switch row {
		case 50:
			end = start.Add(-10 * time.Minute)
		case 120:
			end = start.Add(-90 * time.Minute)
		case 250:
			end = start.Add(-30 * time.Minute)
		case 200:
			end = start
		}
		region := regions[rng.IntN(4)]
		u, product := rng.Float64(), "C"
		switch s := shares[region]; {
		case u < s[0]:
			product = "A"
		case u < s[0]+s[1]:
			product = "B"
		}
		shift := []string{"early", "late"}[rng.IntN(2)]
		k := 1 + rng.IntN(40)
		switch row {
		case 77:
			k = 17
		case 151, 152:
			k = 33
		}
		cat := cats[k%4]
		switch row {
		case 77:
			cat = cats[(k+1)%4]
		case 151, 152:
			cat = cats[(k+2)%4]
		}
		lines = append(lines, fmt.Sprintf("%d,%.1f,%.2f,%d,%s,%s,%s,%s,%s,S-%03d,%s", row, dose, resp, batch,
			start.Format(time.RFC3339), end.Format(time.RFC3339), region, product, shift, k, cat))
	}
	return lines
}

// segments is 600 rows of meters at three sites, 200 each, in turn:
//
//	site        s1, s2, s3
//	temp_c      s1 uniform(0, 10), s2 uniform(15, 25), s3 uniform(30, 40),
//	            to 0.1
//	kwh         20, 80, 140 at s1, s2, s3, minus 2 temp_c, plus
//	            normal(0, 1.5), to 0.01: it falls with temp_c within each
//	            site, yet rises with it across the sites pooled; missing
//	            on rows 2, 32, ..., 272 (10 rows of s2)
//	status      final, except draft on rows 100, 200, 300, 400, 500 and
//	            missing on row 450
//	read_at     2025-03-01 plus the row number of hours
//	booked_at   read_at plus 1 to 48 hours; on rows 100, 200, 300, 400,
//	            500 (drafts), 450 (no status), 77 and 555 (final) an hour
//	            before read_at
func segments() []string {
	rng := rand.New(rand.NewPCG(20250303, 6))
	lines := []string{"meter,site,temp_c,kwh,status,read_at,booked_at"}
	t0 := time.Date(2025, 3, 1, 0, 0, 0, 0, time.UTC)
	lows := []float64{0, 15, 30}
	bases := []float64{20, 80, 140}
	for row := 1; row <= 600; row++ {
		s := (row - 1) % 3
		temp := round(lows[s]+10*rng.Float64(), 1)
		kwh := fmt.Sprintf("%.2f", bases[s]-2*temp+1.5*rng.NormFloat64())
		if row%30 == 2 && row <= 272 {
			kwh = ""
		}
		status := "final"
		switch {
		case row%100 == 0:
			status = "draft"
		case row == 450:
			status = ""
		}
		read := t0.Add(time.Duration(row) * time.Hour)
		booked := read.Add(time.Duration(1+rng.IntN(48)) * time.Hour)
		if row%100 == 0 || row == 450 || row == 77 || row == 555 {
			booked = read.Add(-time.Hour)
		}
		lines = append(lines, fmt.Sprintf("M-%03d,s%d,%.1f,%s,%s,%s,%s", row, s+1, temp, kwh, status,
			read.Format(time.RFC3339), booked.Format(time.RFC3339)))
	}
	return lines
}

// round rounds x to d decimals.
func round(x float64, d int) float64 {
	p := math.Pow(10, float64(d))
	return math.Round(x*p) / p
}

func write(path string, lines []string) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644)
}
