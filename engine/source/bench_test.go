package source

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	acsv "github.com/apache/arrow-go/v18/arrow/csv"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Benchmark data lives in one temporary folder, made on first use and
// removed by TestMain.
var bench struct {
	once    sync.Once
	dir     string
	csv     string
	parquet string
	err     error
}

func removeBenchData() {
	if bench.dir != "" {
		_ = os.RemoveAll(bench.dir)
	}
}

// benchFiles makes the benchmark inputs: a CSV file of about 100 MB and a
// Parquet file of one million rows, both of the columns of benchSchema.
func benchFiles(b *testing.B) (csvPath, parquetPath string) {
	b.Helper()
	bench.once.Do(func() {
		bench.dir, bench.err = os.MkdirTemp("", "assay-source-bench-")
		if bench.err != nil {
			return
		}
		bench.csv = filepath.Join(bench.dir, "bench.csv")
		if bench.err = writeBenchCSV(bench.csv, 1_000_000); bench.err != nil {
			return
		}
		bench.parquet = filepath.Join(bench.dir, "bench.parquet")
		bench.err = writeBenchParquet(bench.parquet, 1_000_000)
	})
	if bench.err != nil {
		b.Fatal(bench.err)
	}
	return bench.csv, bench.parquet
}

// benchSchema is the mixed table the benchmarks read: sequential ids, short
// codes, timestamps, dates, numbers with few decimals (measurements),
// integers, booleans, free text (sometimes quoted, with commas, or
// missing), and full-precision floats (17 significant digits, the slow
// path of number parsing).
var benchSchema = arrow.NewSchema([]arrow.Field{
	{Name: "id", Type: tInt64, Nullable: true},
	{Name: "hive", Type: tString, Nullable: true},
	{Name: "at", Type: tTimestamp, Nullable: true},
	{Name: "day", Type: tDate, Nullable: true},
	{Name: "weight_kg", Type: tFloat64, Nullable: true},
	{Name: "temp_c", Type: tFloat64, Nullable: true},
	{Name: "humidity", Type: tInt64, Nullable: true},
	{Name: "ok", Type: tBoolean, Nullable: true},
	{Name: "note", Type: tString, Nullable: true},
	{Name: "score", Type: tFloat64, Nullable: true},
}, nil)

// benchRow is one generated row.
type benchRow struct {
	id, humidity   int64
	hive, note     string
	at             time.Time
	weight, temp   float64
	score          float64
	ok, noteQuoted bool
}

var notes = []string{"", "calm", "queen seen, laying", "swarm cell", "fed 2:1 syrup", "weak, \"robbing\""}

func genRows(n int, row func(r *benchRow)) {
	rng := rand.New(rand.NewPCG(7, 11))
	start := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
	var r benchRow
	for i := range n {
		r.id = int64(i + 1)
		r.hive = "H-" + strconv.Itoa(100+rng.IntN(900))
		r.at = start.Add(time.Duration(i) * 37 * time.Second)
		r.weight = float64(rng.IntN(8000)) / 100
		r.temp = float64(rng.IntN(600)-100) / 10
		r.humidity = int64(rng.IntN(101))
		r.ok = rng.IntN(10) != 0
		r.note = notes[rng.IntN(len(notes))]
		r.score = rng.NormFloat64()
		row(&r)
	}
}

func writeBenchCSV(path string, n int) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("id,hive,at,day,weight_kg,temp_c,humidity,ok,note,score\n")
	var line []byte
	genRows(n, func(r *benchRow) {
		line = strconv.AppendInt(line[:0], r.id, 10)
		line = append(line, ',')
		line = append(line, r.hive...)
		line = append(line, ',')
		line = r.at.AppendFormat(line, time.RFC3339)
		line = append(line, ',')
		line = r.at.AppendFormat(line, time.DateOnly)
		line = append(line, ',')
		line = strconv.AppendFloat(line, r.weight, 'f', -1, 64)
		line = append(line, ',')
		line = strconv.AppendFloat(line, r.temp, 'f', -1, 64)
		line = append(line, ',')
		line = strconv.AppendInt(line, r.humidity, 10)
		line = append(line, ',')
		line = strconv.AppendBool(line, r.ok)
		line = append(line, ',')
		line = appendCSVText(line, r.note)
		line = append(line, ',')
		line = strconv.AppendFloat(line, r.score, 'g', -1, 64)
		line = append(line, '\n')
		w.Write(line)
	})
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// appendCSVText appends s, quoted when it holds a comma or a quote.
func appendCSVText(dst []byte, s string) []byte {
	quote := false
	for i := 0; i < len(s); i++ {
		if s[i] == ',' || s[i] == '"' {
			quote = true
		}
	}
	if !quote {
		return append(dst, s...)
	}
	dst = append(dst, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			dst = append(dst, '"')
		}
		dst = append(dst, s[i])
	}
	return append(dst, '"')
}

func writeBenchParquet(path string, n int) error {
	mem := memory.DefaultAllocator
	rb := array.NewRecordBuilder(mem, benchSchema)
	defer rb.Release()
	genRows(n, func(r *benchRow) {
		rb.Field(0).(*array.Int64Builder).Append(r.id)
		rb.Field(1).(*array.StringBuilder).Append(r.hive)
		rb.Field(2).(*array.TimestampBuilder).Append(arrow.Timestamp(r.at.UnixMicro()))
		rb.Field(3).(*array.Date32Builder).Append(arrow.Date32FromTime(r.at))
		rb.Field(4).(*array.Float64Builder).Append(r.weight)
		rb.Field(5).(*array.Float64Builder).Append(r.temp)
		rb.Field(6).(*array.Int64Builder).Append(r.humidity)
		rb.Field(7).(*array.BooleanBuilder).Append(r.ok)
		if r.note == "" {
			rb.Field(8).AppendNull()
		} else {
			rb.Field(8).(*array.StringBuilder).Append(r.note)
		}
		rb.Field(9).(*array.Float64Builder).Append(r.score)
	})
	rec := rb.NewRecordBatch()
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy), parquet.WithMaxRowGroupLength(128*1024))
	w, err := pqarrow.NewFileWriter(benchSchema, f, props, pqarrow.DefaultWriterProps())
	if err != nil {
		f.Close()
		return err
	}
	if err := w.Write(rec); err != nil {
		w.Close()
		return err
	}
	return w.Close()
}

// reportRates adds rows per second to the benchmark's output.
func reportRates(b *testing.B, rows int64) {
	b.Helper()
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// cpuTime returns the CPU time the process has used, in user and system
// mode, on all its threads.
func cpuTime(b *testing.B) time.Duration {
	b.Helper()
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// startCPU collects the garbage of the benchmark's setup and returns the
// CPU time used so far, for reportCPU.
func startCPU(b *testing.B) time.Duration {
	b.Helper()
	runtime.GC()
	return cpuTime(b)
}

// reportCPU adds the CPU time per operation since since, a startCPU taken
// before the benchmark loop: on a machine shared with other work it varies
// less than the elapsed time, which counts the time the benchmark waits for
// a core.
func reportCPU(b *testing.B, since time.Duration) {
	b.Helper()
	b.ReportMetric(float64(cpuTime(b)-since)/float64(b.N), "cpu-ns/op")
}

// BenchmarkCSVSource reads the CSV file with this package: Open (header and
// a 10000-row sample for inference) and a full Scan of all columns.
func BenchmarkCSVSource(b *testing.B) {
	path, _ := benchFiles(b)
	benchSource(b, path, benchSchema)
}

// benchSource opens path and scans all its columns, b.N times, checking
// the schema against want unless nil.
func benchSource(b *testing.B, path string, want *arrow.Schema) {
	b.Helper()
	benchSourceWith(b, path, want, Options{})
}

// benchSourceWith is benchSource with options.
func benchSourceWith(b *testing.B, path string, want *arrow.Schema, opts Options) {
	b.Helper()
	b.SetBytes(fileSize(b, path))
	b.ReportAllocs()
	var rows int64
	cpu := startCPU(b)
	for b.Loop() {
		s, err := Open([]string{path}, opts)
		if err != nil {
			b.Fatal(err)
		}
		rows = 0
		err = s.Scan(context.Background(), nil, func(bt *Batch) error { rows += bt.Record.NumRows(); return nil })
		if err != nil {
			b.Fatal(err)
		}
		s.Close()
		if got := s.Schema(); want != nil && !got.Equal(want) {
			b.Fatalf("schema %v; want %v", got, want)
		}
	}
	reportCPU(b, cpu)
	reportRates(b, rows)
}

// BenchmarkCSVEncodingCSV is the baseline: encoding/csv with a reused
// record, each cell parsed by strconv or time.Parse into Go slices of
// 65536 rows, reused.
func BenchmarkCSVEncodingCSV(b *testing.B) {
	path, _ := benchFiles(b)
	b.SetBytes(fileSize(b, path))
	b.ReportAllocs()
	var rows int64
	for b.Loop() {
		f, err := os.Open(path)
		if err != nil {
			b.Fatal(err)
		}
		r := csv.NewReader(bufio.NewReaderSize(f, 1<<20))
		r.ReuseRecord = true
		const chunk = 65536
		ints := make([][]int64, 2)
		floats := make([][]float64, 3)
		times := make([][]int64, 2)
		bools := make([]bool, 0, chunk)
		strs := make([][]string, 2)
		if _, err := r.Read(); err != nil {
			b.Fatal(err)
		}
		rows = 0
		for {
			rec, err := r.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			if rows%chunk == 0 {
				for i := range ints {
					ints[i] = ints[i][:0]
					times[i] = times[i][:0]
					strs[i] = strs[i][:0]
				}
				for i := range floats {
					floats[i] = floats[i][:0]
				}
				bools = bools[:0]
			}
			rows++
			id, _ := strconv.ParseInt(rec[0], 10, 64)
			hum, _ := strconv.ParseInt(rec[6], 10, 64)
			ints[0], ints[1] = append(ints[0], id), append(ints[1], hum)
			at, _ := time.Parse(time.RFC3339, rec[2])
			day, _ := time.Parse(time.DateOnly, rec[3])
			times[0], times[1] = append(times[0], at.UnixMicro()), append(times[1], day.Unix()/86400)
			for k, c := range []int{4, 5, 9} {
				v, _ := strconv.ParseFloat(rec[c], 64)
				floats[k] = append(floats[k], v)
			}
			ok, _ := strconv.ParseBool(rec[7])
			bools = append(bools, ok)
			strs[0], strs[1] = append(strs[0], rec[1]), append(strs[1], rec[8])
		}
		f.Close()
	}
	reportRates(b, rows)
}

// BenchmarkCSVArrowReader reads the CSV file with arrow-go's CSV reader,
// given the schema (no inference), in chunks of 65536 rows.
func BenchmarkCSVArrowReader(b *testing.B) {
	path, _ := benchFiles(b)
	b.SetBytes(fileSize(b, path))
	b.ReportAllocs()
	var rows int64
	for b.Loop() {
		f, err := os.Open(path)
		if err != nil {
			b.Fatal(err)
		}
		r := acsv.NewReader(f, benchSchema, acsv.WithHeader(true), acsv.WithChunk(65536),
			acsv.WithNullReader(true, DefaultNulls...), acsv.WithLazyQuotes(true))
		rows = 0
		for r.Next() {
			rows += r.RecordBatch().NumRows()
		}
		if err := r.Err(); err != nil {
			b.Fatal(err)
		}
		r.Release()
		f.Close()
	}
	reportRates(b, rows)
}

// BenchmarkParquetSource scans all columns of the one-million-row Parquet
// file (Snappy, row groups of 131072 rows); bytes are those of the file.
func BenchmarkParquetSource(b *testing.B) {
	_, path := benchFiles(b)
	benchSource(b, path, benchSchema)
}

// refParquet is the Parquet file of the repository's benchmark at one
// million rows (bench/run.sh 1000000 makes it).
const refParquet = "../../bench/out/data/ref-1000000-s1.parquet"

// BenchmarkParquetRef scans all columns of refParquet (12 columns, one
// row group, every column dictionary-encoded), skipping when it has not
// been made.
func BenchmarkParquetRef(b *testing.B) {
	if _, err := os.Stat(refParquet); err != nil {
		b.Skipf("no %s (make it with bench/run.sh 1000000): %v", refParquet, err)
	}
	benchSource(b, refParquet, nil)
}

// BenchmarkParquetRefSome scans refParquet with ScanSome reading two of
// its columns (a number and a string) and skipping the other ten, as the
// engine's second pass does.
func BenchmarkParquetRefSome(b *testing.B) {
	benchRefColumns(b, "temp_c", "device")
}

// BenchmarkParquetRefTexts scans refParquet reading only its two string
// columns, site and device (dictionary-encoded), and skipping the others.
func BenchmarkParquetRefTexts(b *testing.B) {
	benchRefColumns(b, "site", "device")
}

// benchRefColumns scans refParquet with ScanSome, b.N times, reading the
// columns named and skipping the others; it skips when the file has not
// been made.
func benchRefColumns(b *testing.B, names ...string) {
	b.Helper()
	if _, err := os.Stat(refParquet); err != nil {
		b.Skipf("no %s (make it with bench/run.sh 1000000): %v", refParquet, err)
	}
	b.SetBytes(fileSize(b, refParquet))
	b.ReportAllocs()
	s, err := Open([]string{refParquet}, Options{})
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	skip := make([]bool, s.Schema().NumFields())
	for i, f := range s.Schema().Fields() {
		skip[i] = !slices.Contains(names, f.Name)
	}
	var rows int64
	cpu := startCPU(b)
	for b.Loop() {
		rows = 0
		err := s.ScanSome(context.Background(), nil, skip, func(bt *Batch) error { rows += bt.Record.NumRows(); return nil })
		if err != nil {
			b.Fatal(err)
		}
	}
	reportCPU(b, cpu)
	reportRates(b, rows)
}

func fileSize(b *testing.B, path string) int64 {
	b.Helper()
	fi, err := os.Stat(path)
	if err != nil {
		b.Fatal(err)
	}
	return fi.Size()
}

// refCSV is the CSV file of the repository's benchmark at one million
// rows (bench/run.sh 1000000 makes it).
const refCSV = "../../bench/out/data/ref-1000000-s1.csv"

// BenchmarkCSVRef scans all columns of refCSV with one parse goroutine
// and with two and four, skipping when the file has not been made.
func BenchmarkCSVRef(b *testing.B) {
	if _, err := os.Stat(refCSV); err != nil {
		b.Skipf("no %s (make it with bench/run.sh 1000000): %v", refCSV, err)
	}
	for _, workers := range []int{1, 2, 4} {
		b.Run(fmt.Sprintf("workers=%d", workers), func(b *testing.B) {
			benchSourceWith(b, refCSV, nil, Options{ParseWorkers: workers})
		})
	}
}

// benchText returns the text of refCSV when it has been made, else of the
// generated benchmark CSV, read into memory.
func benchText(b *testing.B) []byte {
	b.Helper()
	path := refCSV
	if _, err := os.Stat(path); err != nil {
		path, _ = benchFiles(b)
	}
	data, err := os.ReadFile(path)
	if err != nil {
		b.Fatal(err)
	}
	return data
}

// BenchmarkCSVSplit cuts a CSV text held in memory into records and fields
// with the splitter alone: no column is parsed.
func BenchmarkCSVSplit(b *testing.B) {
	data := benchText(b)
	text := make([]byte, len(data))
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	var rows int64
	cpu := startCPU(b)
	for b.Loop() {
		copy(text, data) // undoing doubled quotes rewrites the text
		sp := newSplitter(nil, ',', '"', true, 1)
		sp.reset(text, true, 1)
		rows = 0
		for {
			ok, err := sp.next()
			if err != nil {
				b.Fatal(err)
			}
			if !ok {
				break
			}
			rows++
		}
	}
	reportCPU(b, cpu)
	reportRates(b, rows-1)
}

// BenchmarkCSVCut cuts a CSV text held in memory into pieces of 65536
// records, as the goroutine that feeds the parse workers does.
func BenchmarkCSVCut(b *testing.B) {
	data := benchText(b)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	var rows int64
	cpu := startCPU(b)
	for b.Loop() {
		c := &csvCutter{r: bytes.NewReader(data), quote: '"', quotes: true, line: 1, read: &counter{}}
		rows = 0
		for p := c.next(DefaultBatchRows); p != nil; p = c.next(DefaultBatchRows) {
			rows += int64(p.want)
			c.free = append(c.free, p.data[:0])
		}
		if c.failed {
			b.Fatal("the cutter gave up")
		}
	}
	reportCPU(b, cpu)
	reportRates(b, rows-1)
}

// benchCells returns the cells of the columns of the benchmark text whose
// names are given (of its first 200,000 rows), as slices of one buffer in
// which a comma follows each, as cells are slices of the splitter's buffer.
func benchCells(b *testing.B, names ...string) [][]byte {
	b.Helper()
	recs, err := csv.NewReader(bytes.NewReader(benchText(b))).ReadAll()
	if err != nil {
		b.Fatal(err)
	}
	var text []byte
	var ends []int
	for j, name := range recs[0] {
		if slices.Contains(names, name) {
			for _, rec := range recs[1:min(len(recs), 200_001)] {
				text = append(text, rec[j]...)
				ends = append(ends, len(text))
				text = append(text, ',')
			}
		}
	}
	if len(ends) == 0 {
		b.Skipf("no column named %v", names)
	}
	cells := make([][]byte, len(ends))
	start := 0
	for k, end := range ends {
		cells[k] = text[start:end]
		start = end + 1
	}
	return cells
}

// BenchmarkCellParsers parses the cells of measurement columns of the
// benchmark text as numbers and integers (bytes are those of the cells).
func BenchmarkCellParsers(b *testing.B) {
	for _, tt := range []struct {
		name  string
		cols  []string
		parse func([]byte) bool
	}{
		{"float", []string{"temp_c", "humidity_pct", "pressure_hpa", "load_kwh", "wait_s", "cost_eur", "weight_kg", "score"},
			func(c []byte) bool { _, ok := parseFloat(c); return ok }},
		{"int", []string{"id", "items", "humidity"}, func(c []byte) bool { _, ok := parseInt(c); return ok }},
		{"timestamp", []string{"ts", "at"}, func(c []byte) bool { _, ok := parseTimestamp(c); return ok }},
	} {
		b.Run(tt.name, func(b *testing.B) {
			cells := benchCells(b, tt.cols...)
			var size int64
			for _, c := range cells {
				size += int64(len(c))
			}
			b.SetBytes(size)
			b.ReportAllocs()
			cpu := startCPU(b)
			for b.Loop() {
				for _, c := range cells {
					if !tt.parse(c) && len(c) > 0 {
						b.Fatalf("%q does not parse", c)
					}
				}
			}
			reportCPU(b, cpu)
			b.ReportMetric(float64(len(cells))*float64(b.N)/b.Elapsed().Seconds(), "cells/s")
		})
	}
}
