package engine_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestParquetAgreesWithArrow runs the benchmark policy (48 rules of every
// kind) over the reference data as Parquet and as an Arrow IPC file made
// from it in record batches of the size the run reads the Parquet file in
// (the Arrow reader keeps the batches as stored), for several batch sizes
// and worker counts: the results must be the same to the last byte. The
// Parquet reader reuses the memory of released batches and gives string
// columns dictionary codes; the Arrow reader does neither. So a check that
// keeps a string or a slice of a batch past its release, or that judges
// codes otherwise than the values, makes them differ; built with -tags
// assay_poison, where released memory is overwritten and never reused,
// surely so.
func TestParquetAgreesWithArrow(t *testing.T) {
	dir := t.TempDir()
	pqPath, _ := engine.WriteReference(t, dir, "parquet", 20000)
	pol, err := rules.Load("../bench/policy.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, opts := range []engine.Options{
		{Workers: 1, Source: source.Options{BatchRows: 4096}},
		{Workers: 3, Source: source.Options{BatchRows: 999}},
		engine.ForceSpill(engine.Options{Workers: 2, Source: source.Options{BatchRows: 3000}}, true),
	} {
		name := fmt.Sprintf("%d workers, batches of %d", opts.Workers, opts.Source.BatchRows)
		arrowPath := filepath.Join(dir, fmt.Sprintf("ref-%d.arrow", opts.Source.BatchRows))
		writeArrow(t, pqPath, arrowPath, source.Options{BatchRows: opts.Source.BatchRows})
		want, got := resultsOf(t, pol, []string{arrowPath}, opts), resultsOf(t, pol, []string{pqPath}, opts)
		if !bytes.Equal(want, got) {
			t.Errorf("%s: results differ between Arrow and Parquet:\n%s", name, firstDifference(want, got, "arrow", "parquet"))
		}
	}
}

// TestConformanceParquetAgreesWithArrow runs every conformance case over
// copies of its data as Parquet (dictionary-encoded, row groups of 50
// rows, which batches of 7 cross) and as Arrow IPC files in batches of 7
// rows, on three workers: the results must be the same to the last byte,
// for the reasons TestParquetAgreesWithArrow gives, over every kind of
// check. The copies hold the values the policy's column types read from
// the CSV data.
func TestConformanceParquetAgreesWithArrow(t *testing.T) {
	eachConformanceCase(t, func(t *testing.T, pol *rules.Policy, path string) {
		in := pol.Input
		opts := source.Options{BatchRows: 7, Delimiter: in.Delimiter, Quote: in.Quote, NoQuote: in.NoQuote,
			NoHeader: in.NoHeader, Types: map[string]arrow.DataType{}}
		if in.NullsSet {
			opts.Nulls = in.Nulls
		}
		for _, c := range pol.Columns {
			if typ := engine.ArrowType(c.Type); typ != nil {
				opts.Types[c.Name] = typ
			}
		}
		dir := t.TempDir()
		var pqPaths, arrowPaths []string
		for i, data := range in.Paths {
			if !filepath.IsAbs(data) {
				data = filepath.Join(filepath.Dir(path), data)
			}
			pq, arw := filepath.Join(dir, fmt.Sprint(i, ".parquet")), filepath.Join(dir, fmt.Sprint(i, ".arrow"))
			writeParquet(t, data, pq, opts)
			writeArrow(t, data, arw, opts)
			pqPaths, arrowPaths = append(pqPaths, pq), append(arrowPaths, arw)
		}
		run := engine.Options{Workers: 3, Source: source.Options{BatchRows: 7}}
		if want, got := resultsOf(t, pol, arrowPaths, run), resultsOf(t, pol, pqPaths, run); !bytes.Equal(want, got) {
			t.Errorf("results differ between Arrow and Parquet:\n%s", firstDifference(want, got, "arrow", "parquet"))
		}
	})
}

// resultsOf runs pol over paths and returns its results as JSON.
func resultsOf(t *testing.T, pol *rules.Policy, paths []string, opts engine.Options) []byte {
	t.Helper()
	rep, err := engine.Run(context.Background(), pol, paths, opts)
	if err != nil {
		t.Fatal(err)
	}
	out, err := json.MarshalIndent(rep.Results, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// recordWriter writes record batches to a file: Arrow IPC or Parquet.
type recordWriter interface {
	Write(arrow.RecordBatch) error
	Close() error
}

// bufferedParquet writes batches into row groups of the writer's length
// whatever the batches' sizes.
type bufferedParquet struct{ *pqarrow.FileWriter }

func (w bufferedParquet) Write(rec arrow.RecordBatch) error { return w.WriteBuffered(rec) }

// writeParquet copies the data at from, read with opts, into a Parquet
// file at to in row groups of 50 rows.
func writeParquet(t *testing.T, from, to string, opts source.Options) {
	t.Helper()
	copyData(t, from, to, opts, func(f *os.File, sc *arrow.Schema) (recordWriter, error) {
		w, err := pqarrow.NewFileWriter(sc, f, parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(50)), pqarrow.DefaultWriterProps())
		return bufferedParquet{w}, err
	})
}

// writeArrow copies the data at from, read with opts, into an Arrow IPC
// file at to, in record batches of opts.BatchRows rows.
func writeArrow(t *testing.T, from, to string, opts source.Options) {
	t.Helper()
	copyData(t, from, to, opts, func(f *os.File, sc *arrow.Schema) (recordWriter, error) {
		return ipc.NewFileWriter(f, ipc.WithSchema(sc))
	})
}

// copyData copies the data at from, read with opts, through the writer
// newWriter makes into a file at to.
func copyData(t *testing.T, from, to string, opts source.Options, newWriter func(*os.File, *arrow.Schema) (recordWriter, error)) {
	t.Helper()
	set, err := source.Open([]string{from}, opts)
	if err != nil {
		t.Fatal(err)
	}
	defer set.Close()
	f, err := os.Create(to)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w, err := newWriter(f, set.Schema())
	if err != nil {
		t.Fatal(err)
	}
	if err := set.Scan(context.Background(), nil, func(b *source.Batch) error { return w.Write(b.Record) }); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}
