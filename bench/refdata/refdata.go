// Package refdata writes the reference data of the speed benchmarks
// (issue 7; bench/run.sh, cmd gen, and the engine's whole-run benchmarks):
// a deterministic table of 12 mixed columns, as Parquet (Snappy,
// row groups of at most 1,000,000 rows) or CSV. The same -rows and -seed
// give the same values in both formats: every number is rounded to a few
// decimals before it is written, so CSV text reads back to the exact
// float64 the Parquet file holds.
//
// Columns, with the relationships the reference policy checks:
//
//	id            integer, 1..n (planted rows repeat the previous id)
//	ts            timestamp, one second apart from 2026-01-01T00:00:00Z
//	site          string, one of six names (planted: "atlantis")
//	device        string, "D-" and four digits (planted: "D-??")
//	temp_c        number, normal(18, 6) (planted: 95)
//	humidity_pct  number, 80 - 1.2 temp_c + normal(0, 4) (planted: 140)
//	pressure_hpa  number, 1013 - 0.1 (humidity_pct - 58) + normal(0, 6) (planted: null)
//	load_kwh      number, lognormal(meanlog 1.2, sdlog 0.4)
//	wait_s        number, gamma(shape 2, scale 3)
//	cost_eur      number, 0.3 load_kwh + |normal(0, 0.05)| (planted: -2)
//	items         integer, Poisson(4)
//	ok            boolean, true 97% of the time
//
// A planted bad row is every row whose index i satisfies i % 100003 == 77;
// it breaks several rules at once (range, enum, pattern, key, expressions,
// residuals, joint, extremes) so that each has rows to find.
package refdata

import (
	"bufio"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// plantEvery and plantAt place the planted bad rows.
const (
	plantEvery = 100003
	plantAt    = 77
	groupRows  = 1_000_000
)

var sites = []string{"north", "south", "east", "west", "lab", "depot"}

// row is one generated row; pressureNull marks a missing pressure.
type row struct {
	id                                         int64
	ts                                         int64 // microseconds since the Unix epoch
	site, device                               string
	temp, humidity, pressure, load, wait, cost float64
	pressureNull                               bool
	items                                      int64
	ok                                         bool
}

// generator draws rows in order from one seeded PCG stream.
type generator struct {
	r    *rand.Rand
	i    int64
	base int64
}

func newGenerator(seed uint64) *generator {
	start := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	return &generator{r: rand.New(rand.NewPCG(seed, 0x5eed)), base: start.UnixMicro()}
}

// round rounds v to d decimals.
func round(v float64, d int) float64 {
	p := math.Pow(10, float64(d))
	return math.Round(v*p) / p
}

// poisson draws a Poisson(lambda) count by Knuth's multiplication method
// (Knuth, TAOCP vol. 2, 3.4.1), fine for small lambda.
func (g *generator) poisson(lambda float64) int64 {
	l, k, p := math.Exp(-lambda), int64(0), 1.0
	for {
		p *= g.r.Float64()
		if p <= l {
			return k
		}
		k++
	}
}

// next draws the next row.
func (g *generator) next() row {
	i := g.i
	g.i++
	r := g.r
	temp := 18 + 6*r.NormFloat64()
	hum := 80 - 1.2*temp + 4*r.NormFloat64()
	press := 1013 - 0.1*(hum-58) + 6*r.NormFloat64()
	load := math.Exp(1.2 + 0.4*r.NormFloat64())
	// gamma with integer shape 2 is the sum of two exponentials
	wait := 3 * (r.ExpFloat64() + r.ExpFloat64())
	cost := 0.3*load + math.Abs(0.05*r.NormFloat64())
	x := row{
		id:       i + 1,
		ts:       g.base + i*1_000_000,
		site:     sites[r.IntN(len(sites))],
		device:   "D-" + fmt.Sprintf("%04d", r.IntN(10000)),
		temp:     round(temp, 3),
		humidity: round(hum, 3),
		pressure: round(press, 2),
		load:     round(load, 4),
		wait:     round(wait, 3),
		cost:     round(cost, 4),
		items:    g.poisson(4),
		ok:       r.Float64() < 0.97,
	}
	if i%plantEvery == plantAt {
		x.id = i // repeats the previous row's id
		x.site = "atlantis"
		x.device = "D-??"
		x.temp = 95
		x.humidity = 140
		x.pressureNull = true
		x.cost = -2
	}
	return x
}

var header = []string{"id", "ts", "site", "device", "temp_c", "humidity_pct", "pressure_hpa", "load_kwh", "wait_s", "cost_eur", "items", "ok"}

// WriteCSV writes n rows as CSV with a header line; no cell needs quoting.
func WriteCSV(path string, n int64, seed uint64) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("create %s: %w", path, err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	for j, h := range header {
		if j > 0 {
			w.WriteByte(',')
		}
		w.WriteString(h)
	}
	w.WriteByte('\n')
	g := newGenerator(seed)
	var buf []byte
	num := func(v float64) { buf = strconv.AppendFloat(buf, v, 'f', -1, 64); buf = append(buf, ',') }
	for range n {
		x := g.next()
		buf = buf[:0]
		buf = strconv.AppendInt(buf, x.id, 10)
		buf = append(buf, ',')
		buf = time.UnixMicro(x.ts).UTC().AppendFormat(buf, time.RFC3339)
		buf = append(buf, ',')
		buf = append(buf, x.site...)
		buf = append(buf, ',')
		buf = append(buf, x.device...)
		buf = append(buf, ',')
		num(x.temp)
		num(x.humidity)
		if x.pressureNull {
			buf = append(buf, ',')
		} else {
			num(x.pressure)
		}
		num(x.load)
		num(x.wait)
		num(x.cost)
		buf = strconv.AppendInt(buf, x.items, 10)
		buf = append(buf, ',')
		buf = strconv.AppendBool(buf, x.ok)
		buf = append(buf, '\n')
		if _, err := w.Write(buf); err != nil {
			f.Close()
			return fmt.Errorf("write %s: %w", path, err)
		}
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("write %s: %w", path, err)
	}
	return f.Close()
}

// WriteParquet writes n rows as Parquet, Snappy-compressed, one row group
// per record of at most groupRows rows.
func WriteParquet(path string, n int64, seed uint64) error {
	ts := &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
	fields := []arrow.Field{
		{Name: "id", Type: arrow.PrimitiveTypes.Int64},
		{Name: "ts", Type: ts},
		{Name: "site", Type: arrow.BinaryTypes.String},
		{Name: "device", Type: arrow.BinaryTypes.String},
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
		{Name: "humidity_pct", Type: arrow.PrimitiveTypes.Float64},
		{Name: "pressure_hpa", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "load_kwh", Type: arrow.PrimitiveTypes.Float64},
		{Name: "wait_s", Type: arrow.PrimitiveTypes.Float64},
		{Name: "cost_eur", Type: arrow.PrimitiveTypes.Float64},
		{Name: "items", Type: arrow.PrimitiveTypes.Int64},
		{Name: "ok", Type: arrow.FixedWidthTypes.Boolean},
	}
	schema := arrow.NewSchema(fields, nil)
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("create %s: %w", path, err)
	}
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy), parquet.WithMaxRowGroupLength(groupRows))
	w, err := pqarrow.NewFileWriter(schema, f, props, pqarrow.DefaultWriterProps())
	if err != nil {
		f.Close()
		return fmt.Errorf("parquet writer %s: %w", path, err)
	}
	g := newGenerator(seed)
	rb := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer rb.Release()
	for done := int64(0); done < n; {
		m := min(n-done, groupRows)
		for range m {
			x := g.next()
			rb.Field(0).(*array.Int64Builder).Append(x.id)
			rb.Field(1).(*array.TimestampBuilder).Append(arrow.Timestamp(x.ts))
			rb.Field(2).(*array.StringBuilder).Append(x.site)
			rb.Field(3).(*array.StringBuilder).Append(x.device)
			rb.Field(4).(*array.Float64Builder).Append(x.temp)
			rb.Field(5).(*array.Float64Builder).Append(x.humidity)
			if x.pressureNull {
				rb.Field(6).AppendNull()
			} else {
				rb.Field(6).(*array.Float64Builder).Append(x.pressure)
			}
			rb.Field(7).(*array.Float64Builder).Append(x.load)
			rb.Field(8).(*array.Float64Builder).Append(x.wait)
			rb.Field(9).(*array.Float64Builder).Append(x.cost)
			rb.Field(10).(*array.Int64Builder).Append(x.items)
			rb.Field(11).(*array.BooleanBuilder).Append(x.ok)
		}
		rec := rb.NewRecordBatch()
		err := w.Write(rec)
		rec.Release()
		if err != nil {
			w.Close()
			return fmt.Errorf("write %s: %w", path, err)
		}
		done += m
	}
	if err := w.Close(); err != nil {
		return fmt.Errorf("close %s: %w", path, err)
	}
	return nil
}
