package engine_test

import (
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/rules"
)

const benchPolicy = `policy: bench
columns:
  id: {type: integer, unique: true, minimum: 0}
  station: {type: string, pattern: "^ST-[0-9]{3}$", enum: [ST-000, ST-001, ST-002, ST-003, ST-004, ST-005, ST-006, ST-007]}
  depth_m: {type: number, minimum: 0, maximum: 500, nulls: {warn: 1%, fail: 5%}, summary: {mean: {minimum: 0, maximum: 500}, p99: {maximum: 500}}}
  temp_c: {type: number, minimum: -5, maximum: 40, summary: {std: {maximum: 20}}}
  salinity: {type: number, minimum: 0, maximum: 45}
  flag: {type: boolean}
rows:
  - name: deep water is cold
    expr: depth_m < 200 || temp_c < 15
table:
  rows: {minimum: 1}
`

// writeBenchParquet writes n generated rows in row groups of 128K rows.
func writeBenchParquet(tb testing.TB, path string, n int) int64 {
	tb.Helper()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "id", Type: arrow.PrimitiveTypes.Int64},
		{Name: "station", Type: arrow.BinaryTypes.String},
		{Name: "depth_m", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
		{Name: "salinity", Type: arrow.PrimitiveTypes.Float64},
		{Name: "flag", Type: arrow.FixedWidthTypes.Boolean},
	}, nil)
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy))
	w, err := pqarrow.NewFileWriter(schema, f, props, pqarrow.DefaultWriterProps())
	if err != nil {
		tb.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	stations := []string{"ST-000", "ST-001", "ST-002", "ST-003", "ST-004", "ST-005", "ST-006", "ST-007"}
	const group = 128 << 10
	for start := 0; start < n; start += group {
		m := min(group, n-start)
		b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
		for i := range m {
			b.Field(0).(*array.Int64Builder).Append(int64(start + i))
			b.Field(1).(*array.StringBuilder).Append(stations[rng.IntN(len(stations))])
			depth := rng.Float64() * 400
			if rng.IntN(500) == 0 {
				b.Field(2).(*array.Float64Builder).AppendNull()
			} else {
				b.Field(2).(*array.Float64Builder).Append(depth)
			}
			b.Field(3).(*array.Float64Builder).Append(25 - depth/20 + rng.NormFloat64())
			b.Field(4).(*array.Float64Builder).Append(35 + rng.NormFloat64())
			b.Field(5).(*array.BooleanBuilder).Append(rng.IntN(2) == 0)
		}
		rec := b.NewRecordBatch()
		if err := w.Write(rec); err != nil {
			tb.Fatal(err)
		}
		rec.Release()
		b.Release()
	}
	if err := w.Close(); err != nil {
		tb.Fatal(err)
	}
	st, err := os.Stat(path)
	if err != nil {
		tb.Fatal(err)
	}
	return st.Size()
}

// BenchmarkRunParquet measures a whole run of plain checks on a generated
// 1M-row Parquet file: rows/s and MB/s of the file.
func BenchmarkRunParquet(b *testing.B) {
	const rows = 1_000_000
	dir := b.TempDir()
	path := filepath.Join(dir, "bench.parquet")
	size := writeBenchParquet(b, path, rows)
	pol, err := rules.Parse("bench.yaml", []byte(benchPolicy))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(size)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		rep, err := engine.Run(context.Background(), pol, []string{path}, engine.Options{})
		if err != nil {
			b.Fatal(err)
		}
		if rep.Rows != rows {
			b.Fatalf("read %d rows, want %d", rep.Rows, rows)
		}
	}
	b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// BenchmarkRunReference measures whole runs of bench/policy.yaml, the
// 48-rule reference policy of bench/run.sh (distribution fits, extremes, a
// linear pair, a robust joint rule, row expressions, a key), on 1M rows of
// the reference data (package refdata), as Parquet and as CSV, on one
// worker and on all of them.
func BenchmarkRunReference(b *testing.B) {
	const rows = 1_000_000
	dir := b.TempDir()
	pol, err := rules.Load("../bench/policy.yaml")
	if err != nil {
		b.Fatal(err)
	}
	for _, format := range []string{"parquet", "csv"} {
		path, size := engine.WriteReference(b, dir, format, rows)
		for _, workers := range []int{1, 0} {
			name := fmt.Sprintf("%s/workers=%d", format, workers)
			if workers == 0 {
				name = fmt.Sprintf("%s/workers=GOMAXPROCS(%d)", format, runtime.GOMAXPROCS(0))
			}
			b.Run(name, func(b *testing.B) {
				b.SetBytes(size)
				b.ReportAllocs()
				for b.Loop() {
					rep, err := engine.Run(context.Background(), pol, []string{path}, engine.Options{Workers: workers})
					if err != nil {
						b.Fatal(err)
					}
					if rep.Rows != rows || rep.Verdict.String() != "fail" {
						b.Fatalf("read %d rows with verdict %s, want %d rows and fail (planted rows)", rep.Rows, rep.Verdict, rows)
					}
				}
				b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
			})
		}
	}
}
