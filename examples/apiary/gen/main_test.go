package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

const committed = "../hives.csv"

// TestCommittedFilesAreCurrent regenerates the demo data with the flags of
// the go:generate line and compares it with the committed files byte for
// byte.
func TestCommittedFilesAreCurrent(t *testing.T) {
	tmp := t.TempDir()
	if err := run(filepath.Join(tmp, "hives.csv"), defaultRows, defaultSeed, filepath.Join(tmp, "inspections")); err != nil {
		t.Fatal(err)
	}
	want, err := filepath.Glob("../inspections/*.csv")
	if err != nil {
		t.Fatal(err)
	}
	got, err := filepath.Glob(filepath.Join(tmp, "inspections", "*.csv"))
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(yards) || len(want) != len(yards) {
		t.Errorf("generated %d inspection files, committed %d, want one per yard (%d)", len(got), len(want), len(yards))
	}
	for _, path := range append([]string{committed}, want...) {
		rel, err := filepath.Rel("..", path)
		if err != nil {
			t.Fatal(err)
		}
		compareFiles(t, filepath.Join(tmp, rel), path)
	}
}

// compareFiles fails the test when the generated file differs from the
// committed one.
func compareFiles(t *testing.T, generated, committed string) {
	t.Helper()
	got, err := os.ReadFile(generated)
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile(committed)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("generated data differs from %s at line %d: run `go generate ./examples/apiary/...` and commit the files",
			committed, firstDifferentLine(got, want))
	}
	if len(want) >= 1<<20 {
		t.Errorf("%s is %d bytes; keep the demo data under 1 MB", committed, len(want))
	}
}

func firstDifferentLine(a, b []byte) int {
	la, lb := bytes.Split(a, []byte("\n")), bytes.Split(b, []byte("\n"))
	for i := range min(len(la), len(lb)) {
		if !bytes.Equal(la[i], lb[i]) {
			return i + 1
		}
	}
	return min(len(la), len(lb)) + 1
}

func TestGenerate(t *testing.T) {
	gen := func(rows int, seed uint64) []byte {
		t.Helper()
		var b bytes.Buffer
		if err := generate(&b, rows, seed); err != nil {
			t.Fatalf("generate(%d, %d): %v", rows, seed, err)
		}
		return b.Bytes()
	}
	a, b := gen(4500, 7), gen(4500, 7)
	if !bytes.Equal(a, b) {
		t.Errorf("two runs with the same flags differ at line %d", firstDifferentLine(a, b))
	}
	if lines := bytes.Count(a, []byte("\n")); lines != 4501 {
		t.Errorf("-rows 4500 wrote %d lines, want 4501 (header and 4500 rows)", lines)
	}
	if c := gen(4500, 8); bytes.Equal(a, c) {
		t.Error("seeds 7 and 8 gave the same data")
	}

	var sink bytes.Buffer
	err := generate(&sink, 100, 1)
	if err == nil || !strings.Contains(err.Error(), "too few") {
		t.Errorf("generate with 100 rows: got error %v, want one saying the rows are too few", err)
	}
}

// TestPlantedProblems reads the committed data the way a person checking it
// by hand would, and counts each planted problem. The thresholds quoted are
// those of ../policy.yaml.
func TestPlantedProblems(t *testing.T) {
	col, rows := readCSV(t, committed)
	if len(rows) != defaultRows {
		t.Fatalf("%d rows, want %d", len(rows), defaultRows)
	}
	num := func(row []string, name string) (float64, bool) {
		v, err := strconv.ParseFloat(row[col[name]], 64)
		return v, err == nil
	}

	keys, ids := map[string]int{}, map[string]bool{}
	idPattern := regexp.MustCompile(`^H-[0-9]{3}$`)
	statuses := map[string]bool{"ok": true, "low_battery": true, "swarm_alert": true, "tilt": true}
	var grams, noWeight, noHumidity, badID, notNumber, unknownStatus, swapped, flat, lowStatusHighVolts int
	var voltSum float64
	for _, row := range rows {
		hive, status := row[col["hive_id"]], row[col["status"]]
		ids[row[col["reading_id"]]] = true
		keys[hive+" "+row[col["hour"]]]++
		if !idPattern.MatchString(hive) {
			badID++
			if hive != truncatedID {
				t.Errorf("unexpected malformed hive id %q", hive)
			}
		}
		if !statuses[status] {
			unknownStatus++
			if status != betaStatus || hive != betaHive {
				t.Errorf("unexpected status %q of hive %s", status, hive)
			}
		}
		switch w, ok := num(row, "weight_kg"); {
		case row[col["weight_kg"]] == "":
			noWeight++
		case !ok:
			t.Errorf("weight %q is not a number", row[col["weight_kg"]])
		case w > 150:
			grams++
			if hive != gramsHive {
				t.Errorf("hive %s weighs %v kg", hive, w)
			}
		}
		if row[col["humidity_pct"]] == humidityNA {
			noHumidity++
		}
		brood, okBrood := num(row, "brood_temp_c")
		ambient, _ := num(row, "ambient_temp_c")
		switch {
		case !okBrood:
			notNumber++
			if row[col["brood_temp_c"]] != errText {
				t.Errorf("unexpected brood temperature %q", row[col["brood_temp_c"]])
			}
		case brood < ambient-2:
			swapped++
			if hive != swapHive {
				t.Errorf("hive %s: brood %v °C below ambient %v °C", hive, brood, ambient)
			}
		}
		volts, _ := num(row, "battery_v")
		voltSum += volts
		if volts < 3.0 {
			flat++
		}
		if status == "low_battery" && volts >= 3.5 {
			lowStatusHighVolts++
		}
	}
	dupRows := 0
	for k, n := range keys {
		if n > 1 {
			dupRows += n
			if !strings.HasPrefix(k, resentHive+" ") {
				t.Errorf("unexpected duplicate key %s", k)
			}
		}
	}

	counts := []struct {
		what      string
		got, want int
	}{
		{"weights above 150 kg (columns.weight_kg.maximum fails)", grams, gramsTo - gramsFrom},
		{"missing weights (columns.weight_kg.nulls passes)", noWeight, weightNulls},
		{"missing humidities (columns.humidity_pct.nulls warns)", noHumidity, humidityNulls},
		{"rows in a duplicated (hive_id, hour) pair (table.key fails)", dupRows, 2},
		{"malformed hive ids (columns.hive_id.pattern fails)", badID, 1},
		{"brood temperatures that are not numbers (columns.brood_temp_c.type fails)", notNumber, errTo - errFrom},
		{"unknown statuses (columns.status.enum warns)", unknownStatus, betaHours},
		{"brood colder than outside (rows.brood-warmer-than-outside fails)", swapped, swapTo - swapFrom},
		{"low_battery status above 3.5 V (rows.low-battery-status-means-low-voltage passes)", lowStatusHighVolts, 0},
		{"distinct reading ids (columns.reading_id.unique passes)", len(ids), defaultRows},
	}
	for _, c := range counts {
		if c.got != c.want {
			t.Errorf("%s: got %d, want %d", c.what, c.got, c.want)
		}
	}
	// Shares judged by the policy with warn and fail thresholds between
	// which the planted counts must fall.
	shares := []struct {
		what       string
		n          int
		warn, fail float64
	}{
		{"missing humidities (nulls {warn: 0.2%, fail: 2%})", noHumidity, 0.002, 0.02},
		{"batteries below 3.0 V (minimum {value: 3.0, tolerance: {warn: 0, fail: 1%}})", flat, 0, 0.01},
		{"unknown statuses (enum tolerance {warn: 0, fail: 0.5%})", unknownStatus, 0, 0.005},
	}
	for _, s := range shares {
		if share := float64(s.n) / float64(len(rows)); share <= s.warn || share > s.fail {
			t.Errorf("%s: share %.4f%%, want above %.4f%% and at most %.4f%% so that the rule warns",
				s.what, 100*share, 100*s.warn, 100*s.fail)
		}
	}
	if share := float64(noWeight) / float64(len(rows)); share > 0.005 {
		t.Errorf("missing weights: share %.4f%%, want at most 0.5%% so that the rule passes", 100*share)
	}
	if share := float64(swapped) / float64(len(rows)); share <= 0.0005 {
		t.Errorf("brood colder than outside: share %.4f%%, want above 0.05%% so that the rule fails", 100*share)
	}
	if mean := voltSum / float64(len(rows)); mean < 3.5 || mean >= 3.7 {
		t.Errorf("battery mean %.3f V, want in [3.5, 3.7) so that columns.battery_v.summary.mean warns", mean)
	}
}

// TestPlantedInspections counts the planted problems of the inspection
// files, with the thresholds of ../inspections.yaml.
func TestPlantedInspections(t *testing.T) {
	files, err := filepath.Glob("../inspections/*.csv")
	if err != nil {
		t.Fatal(err)
	}
	date := regexp.MustCompile(`^[0-9]{4}-[0-9]{2}-[0-9]{2}$`)
	var rows, badDates, mites, queenless int
	for _, path := range files {
		col, recs := readCSV(t, path)
		for _, row := range recs {
			rows++
			hive := row[col["hive_id"]]
			if d := row[col["inspected_on"]]; !date.MatchString(d) {
				badDates++
				if hive != dayFirstHive || filepath.Base(path) != "south-orchard.csv" {
					t.Errorf("%s: unexpected date %q of hive %s", path, d, hive)
				}
			}
			v, err := strconv.ParseFloat(row[col["varroa_per_100"]], 64)
			if err != nil {
				t.Errorf("%s: varroa count %q: %v", path, row[col["varroa_per_100"]], err)
			}
			if v > 3 {
				mites++
				if hive != mitesHiveA && hive != mitesHiveB {
					t.Errorf("%s: hive %s has %v mites per 100 bees", path, hive, v)
				}
			}
			if row[col["queen_seen"]] == "false" && row[col["brood_frames"]] == "0" {
				queenless++
			}
		}
	}
	counts := []struct {
		what      string
		got, want int
	}{
		{"inspections (table.rows passes at 30 or more)", rows, 40},
		{"dates not written YYYY-MM-DD (columns.inspected_on.type fails)", badDates, 1},
		{"colonies above 3 mites per 100 bees (columns.varroa_per_100.maximum warns up to 10%)", mites, 2},
		{"no queen seen and no brood (rows.queen-or-brood passes)", queenless, 0},
	}
	for _, c := range counts {
		if c.got != c.want {
			t.Errorf("%s: got %d, want %d", c.what, c.got, c.want)
		}
	}
}

// readCSV reads a committed CSV file and returns the column indices by name
// and the data rows.
func readCSV(t *testing.T, path string) (map[string]int, [][]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if len(recs) == 0 {
		t.Fatalf("%s is empty", path)
	}
	col := map[string]int{}
	for i, name := range recs[0] {
		col[name] = i
	}
	return col, recs[1:]
}
