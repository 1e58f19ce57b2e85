// Command gen writes the data of assay's demo: hourly readings from the hive
// scales of Heathermoor Honey, an invented beekeeping cooperative with 40
// hives in four yards, during one June week of a lime-tree nectar flow.
//
//	go run ./examples/apiary/gen -o examples/apiary/hives.csv
//
// The readings follow simple physical models (see reading): the ambient
// temperature swings through the day around a per-day weather value; the
// brood nest is held near 34.5 °C by the colony whatever the weather, weak
// colonies less tightly; a hive loses weight in the morning when its
// foragers fly out and gains it back, with nectar, by evening, so the weight
// climbs day by day while the flow lasts; the battery of each scale drains
// around the clock and is recharged by a small solar panel in daylight.
//
// On top of that the generator plants the problems listed under "Planted
// problems" below, which the demo policy (../policy.yaml) is written to
// catch. With -inspections it also writes the week's inspection records,
// one file per yard, for the second demo policy (../inspections.yaml; see
// inspections.go). The same flags always give the same bytes: all
// randomness comes from PCG generators seeded by -seed.
//
// The committed ../hives.csv and ../inspections/ are this program's output
// with the flags of the go:generate line below; a test fails when they
// differ.
package main

//go:generate go run . -o ../hives.csv -inspections ../inspections

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"time"
)

// Defaults: one week of 40 hives.
const (
	defaultRows = 7 * 24 * 40
	defaultSeed = 20250602
	// pcgStream is the second PCG word; -seed gives the first.
	pcgStream = 0x61706961727921 // "apiary!"
)

// start is the first hour of the export.
var start = time.Date(2025, time.June, 2, 0, 0, 0, 0, time.UTC)

// Planted problems. Hours count from start (hour 0); each plant but the
// missing readings touches one hive, so a test can find it again in the CSV.
const (
	// The scale of gramsHive reports grams instead of kilograms for a whole
	// day, after a settings reset: columns.weight_kg.maximum fails.
	gramsHive          = "H-046"
	gramsFrom, gramsTo = 72, 96

	// The gateway re-sends resentHive's reading of resentHour-1 (with a new
	// reading_id) in place of the one of resentHour: table.key fails.
	resentHive = "H-009"
	resentHour = 50

	// truncatedHive's id arrives once without its leading zero ("H-21"):
	// columns.hive_id.pattern fails.
	truncatedHive = "H-021"
	truncatedID   = "H-21"
	truncatedHour = 100

	// The brood probe of errHive comes unplugged and the scale writes "ERR"
	// in the number column: columns.brood_temp_c.type fails.
	errHive        = "H-047"
	errText        = "ERR"
	errFrom, errTo = 110, 112

	// betaHive receives beta firmware at betaHour, which reports a status
	// the policy does not know for its first betaHours hours:
	// columns.status.enum warns.
	betaHive     = "H-027"
	betaFirmware = "2.5.0-rc1"
	betaStatus   = "calibrating"
	betaHour     = 34
	betaHours    = 3

	// After an inspection the brood and ambient probes of swapHive are put
	// back the wrong way round for six midday hours, so the "brood" reads
	// colder than the air outside: rows.brood-warmer-than-outside fails.
	swapHive         = "H-008"
	swapFrom, swapTo = 58, 64

	// Missing readings scattered over hives without other plants: the scale
	// timed out (weight_kg empty: columns.weight_kg.nulls passes) or the
	// humidity sensor dropped out (humidity_pct "NA":
	// columns.humidity_pct.nulls warns).
	weightNulls   = 4
	humidityNulls = 30
	humidityNA    = "NA"

	// lastPlantHour is the latest hour a plant needs; -rows must reach it.
	lastPlantHour = max(gramsTo, resentHour+1, truncatedHour+1, errTo, betaHour+betaHours, swapTo) - 1
)

// Events that are not problems but make the week look real.
const (
	// swarmHive casts a swarm at swarmHour: it drops swarmKg in an hour,
	// forages less afterwards, and reports status swarm_alert.
	swarmHive  = "H-044"
	swarmHour  = 84
	swarmKg    = 2.6
	swarmHours = 3
	// Below lowBattery volts a scale reports status low_battery. Two scales
	// have shaded solar panels and drain through the week.
	lowBattery = 3.45
)

var shadedPanels = map[string]bool{"H-030": true, "H-064": true}

// A yard is one apiary site of the cooperative.
type yard struct {
	name     string
	firstID  int     // hive numbers run firstID, firstID+1, ...
	hives    int     // hives in the yard
	warmth   float64 // °C added to the regional temperature (shelter, altitude)
	firmware string  // firmware its scales run
}

var yards = []yard{
	{name: "alder-hollow", firstID: 1, hives: 12, warmth: -0.8, firmware: "2.3.1"},
	{name: "clover-ridge", firstID: 21, hives: 10, warmth: 1.1, firmware: "2.4.0"},
	{name: "millbrook", firstID: 41, hives: 10, warmth: 0, firmware: "2.3.1"},
	{name: "south-orchard", firstID: 61, hives: 8, warmth: 0.5, firmware: "2.4.0"},
}

// A hive is one colony on one scale, with its state through the week.
type hive struct {
	id       string
	yard     *yard
	firmware string
	strength float64 // forager force and nectar intake; below 0.7 a weak colony
	tare     float64 // kg: boxes, frames, bees and stores at the start
	setPoint float64 // °C the colony holds its brood nest at
	stored   float64 // kg of nectar gained since the start, net of use
	volts    float64 // battery voltage now
	drain    float64 // V per hour used by the scale and its radio
	panel    float64 // V per hour its panel adds at full sun
}

// weather is one day's regional weather.
type weather struct {
	temp  float64 // °C daily mean
	sun   float64 // 0 overcast .. 1 clear
	flow  float64 // 0 no nectar .. 1 peak flow
	swing float64 // °C half the day-night range
}

// reading is one row of the export before formatting.
type reading struct {
	id       int
	hiveID   string
	yard     string
	hour     time.Time
	weight   float64
	brood    float64
	ambient  float64
	humidity float64
	volts    float64
	firmware string
	status   string
}

func main() {
	out := flag.String("o", "hives.csv", "write the hourly readings to `path` (- for standard output)")
	rows := flag.Int("rows", defaultRows, "write `n` rows of readings (40 hives per hour)")
	seed := flag.Uint64("seed", defaultSeed, "random `seed`; the same flags always give the same bytes")
	insp := flag.String("inspections", "", "also write the week's inspection records, one CSV per yard, into `folder`")
	flag.Parse()
	if flag.NArg() > 0 {
		fmt.Fprintf(os.Stderr, "gen: unexpected argument %q\n", flag.Arg(0))
		flag.Usage()
		os.Exit(2)
	}
	if err := run(*out, *rows, *seed, *insp); err != nil {
		fmt.Fprintf(os.Stderr, "gen: %v\n", err)
		os.Exit(1)
	}
}

// run writes the readings to out and, when dir is not empty, the
// inspection records into dir.
func run(out string, rows int, seed uint64, dir string) error {
	err := writeFile(out, func(w io.Writer) error { return generate(w, rows, seed) })
	if err != nil || dir == "" {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	return writeInspections(dir, seed)
}

// writeFile writes what gen writes to path, or to standard output for "-".
func writeFile(path string, gen func(io.Writer) error) (err error) {
	if path == "-" {
		return gen(os.Stdout)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); cerr != nil && err == nil {
			err = cerr
		}
	}()
	if err := gen(f); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// generate writes the header and rows rows of readings, hour by hour, the
// hives of each hour in yard order.
func generate(w io.Writer, rows int, seed uint64) error {
	r, hives := cooperative(seed)
	if need := (lastPlantHour + 1) * len(hives); rows < need {
		return fmt.Errorf("-rows %d is too few: the planted problems need at least %d rows", rows, need)
	}
	hours := (rows + len(hives) - 1) / len(hives)
	days := newWeather(r, hours/24+2)
	nulls := pickNulls(r, rows, hives)

	bw := bufio.NewWriter(w)
	bw.WriteString("reading_id,hive_id,yard,hour,weight_kg,brood_temp_c,ambient_temp_c,humidity_pct,battery_v,firmware,status\n")
	var (
		line    []byte
		lastRow = map[string]reading{}
	)
	for n := 0; n < rows; n++ {
		hr, h := n/len(hives), hives[n%len(hives)]
		rd := h.reading(r, hr, days)
		rd.id = 100001 + n
		prev := lastRow[h.id]
		lastRow[h.id] = rd
		if h.id == resentHive && hr == resentHour {
			prev.id = rd.id
			rd = prev
		}
		line = appendRow(line[:0], rd, h, hr, nulls[n])
		if _, err := bw.Write(line); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// cooperative returns the random source of seed and the cooperative's
// hives, in yard order, with their traits drawn from it.
func cooperative(seed uint64) (*rand.Rand, []*hive) {
	r := rand.New(rand.NewPCG(seed, pcgStream))
	var hs []*hive
	for i := range yards {
		y := &yards[i]
		for k := range y.hives {
			h := &hive{id: fmt.Sprintf("H-%03d", y.firstID+k), yard: y, firmware: y.firmware}
			h.init(r)
			hs = append(hs, h)
		}
	}
	return r, hs
}

// init draws the hive's fixed traits and starting state.
func (h *hive) init(r *rand.Rand) {
	h.strength = 0.55 + 0.7*r.Float64()
	h.tare = 28 + 24*r.Float64()
	h.setPoint = 34.5 + 0.2*r.NormFloat64()
	if h.strength < 0.7 {
		h.setPoint -= 0.7 // a weak colony keeps its brood a little cooler
	}
	h.volts = 3.6 + 0.16*r.Float64()
	h.drain = 0.0045 + 0.0015*r.Float64()
	h.panel = 0.024 + 0.01*r.Float64()
	if shadedPanels[h.id] {
		h.panel = 0.004
	}
}

// newWeather draws n days of weather: a mean temperature that wanders from
// day to day, and sunshine; day 4 is a rainy day. The flow of the lime trees
// builds up, peaks mid-week and fades.
func newWeather(r *rand.Rand, n int) []weather {
	flow := []float64{0.55, 0.8, 1, 1, 0.9, 0.7, 0.5}
	ds := make([]weather, n)
	temp := 19.0
	for d := range ds {
		temp = 19 + 0.5*(temp-19) + 1.5*r.NormFloat64()
		sun := min(max(0.65+0.25*r.NormFloat64(), 0.2), 1)
		if d == 4 {
			sun = 0.08
		}
		f := 0.35
		if d < len(flow) {
			f = flow[d]
		}
		ds[d] = weather{temp: temp, sun: sun, flow: f, swing: 3 + 5*sun}
	}
	return ds
}

// daylight is the shape of the day's sun and flight activity at hour of day
// hod: 0 before 07:00 and after 20:00, a half sine between, 1 at 13:30.
func daylight(hod float64) float64 {
	if hod <= 7 || hod >= 20 {
		return 0
	}
	return math.Sin(math.Pi * (hod - 7) / 13)
}

// reading advances the hive by one hour and returns its reading at hour hr.
//
//	ambient  = day mean (interpolated to the next day's) + yard warmth
//	           + swing·cos(2π(hod−15)/24) + noise
//	brood    = set point + g·(ambient − 20) + noise, g = 0.04 (0.15 for a weak colony)
//	weight   = tare + stored − away + noise
//	away     = 0.9·strength·sun·min(1, 2.5·daylight)   (foragers out)
//	stored  += 0.6·strength·sun·flow·daylight − 0.025 per hour
//	humidity = 95 − 2.6·(ambient − 12) (+15 on the rainy day) + noise, in [25, 99]
//	volts   += panel·sun·daylight − drain, at most 4.18
func (h *hive) reading(r *rand.Rand, hr int, days []weather) reading {
	day, hod := hr/24, float64(hr%24)
	wx, next := days[day], days[day+1]

	mean := wx.temp + (next.temp-wx.temp)*hod/24 + h.yard.warmth
	ambient := mean + wx.swing*math.Cos(2*math.Pi*(hod-15)/24) + 0.4*r.NormFloat64()

	gain := 0.04
	if h.strength < 0.7 {
		gain = 0.15 // a weak colony follows the weather more
	}
	brood := h.setPoint + gain*(ambient-20) + 0.15*r.NormFloat64()

	light := daylight(hod)
	h.stored += 0.6*h.strength*wx.sun*wx.flow*light - 0.025
	status := "ok"
	if h.id == swarmHive && hr >= swarmHour {
		if hr == swarmHour {
			h.stored -= swarmKg
			h.strength *= 0.6
		}
		if hr < swarmHour+swarmHours {
			status = "swarm_alert"
		}
	}
	away := 0.9 * h.strength * wx.sun * min(1, 2.5*light) // foragers out by mid-morning
	weight := h.tare + h.stored - away + 0.03*r.NormFloat64()

	humidity := 95 - 2.6*(ambient-12) + 3*r.NormFloat64()
	if wx.sun < 0.1 {
		humidity += 15
	}
	humidity = min(max(humidity, 25), 99)

	h.volts = min(h.volts+h.panel*wx.sun*light-h.drain, 4.18)
	if h.volts < lowBattery && status == "ok" {
		status = "low_battery"
	}
	volts := h.volts + 0.004*r.NormFloat64()

	if h.id == betaHive && hr == betaHour {
		h.firmware = betaFirmware
	}
	if h.id == betaHive && hr >= betaHour && hr < betaHour+betaHours {
		status = betaStatus
	}
	if h.id == swapHive && hr >= swapFrom && hr < swapTo {
		brood, ambient = ambient, brood
	}
	return reading{
		hiveID: h.id, yard: h.yard.name, hour: start.Add(time.Duration(hr) * time.Hour),
		weight: weight, brood: brood, ambient: ambient, humidity: humidity, volts: volts,
		firmware: h.firmware, status: status,
	}
}

// plantedHive reports whether the hive carries a planted problem; missing
// readings are scattered over the others so that plants do not overlap.
func plantedHive(id string) bool {
	switch id {
	case gramsHive, resentHive, truncatedHive, errHive, betaHive, swapHive:
		return true
	}
	return false
}

// Kinds of missing reading.
const (
	present = iota
	noWeight
	noHumidity
)

// pickNulls chooses which rows miss their weight or humidity: distinct rows
// of hives without other plants.
func pickNulls(r *rand.Rand, rows int, hives []*hive) []uint8 {
	nulls := make([]uint8, rows)
	place := func(kind uint8, count int) {
		for count > 0 {
			n := r.IntN(rows)
			if nulls[n] != present || plantedHive(hives[n%len(hives)].id) {
				continue
			}
			nulls[n] = kind
			count--
		}
	}
	place(noWeight, weightNulls)
	place(noHumidity, humidityNulls)
	return nulls
}

// appendRow formats one CSV row, applying the plants that change only the
// text of a cell.
func appendRow(b []byte, rd reading, h *hive, hr int, missing uint8) []byte {
	hiveID := rd.hiveID
	if h.id == truncatedHive && hr == truncatedHour {
		hiveID = truncatedID
	}
	weight := strconv.FormatFloat(rd.weight, 'f', 2, 64)
	switch {
	case missing == noWeight:
		weight = ""
	case h.id == gramsHive && hr >= gramsFrom && hr < gramsTo:
		weight = strconv.FormatFloat(math.Round(rd.weight*1000), 'f', 0, 64)
	}
	brood := strconv.FormatFloat(rd.brood, 'f', 2, 64)
	if h.id == errHive && hr >= errFrom && hr < errTo {
		brood = errText
	}
	humidity := strconv.FormatFloat(rd.humidity, 'f', 1, 64)
	if missing == noHumidity {
		humidity = humidityNA
	}
	return fmt.Appendf(b, "%d,%s,%s,%s,%s,%s,%.2f,%s,%.3f,%s,%s\n", rd.id, hiveID, rd.yard, rd.hour.Format(time.RFC3339),
		weight, brood, rd.ambient, humidity, rd.volts, rd.firmware, rd.status)
}
