package engine

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/ipc"

	"github.com/assay-project/assay/bench/refdata"
	"github.com/assay-project/assay/engine/source"
)

// ForceSpill returns opts with the first pass copying the columns of the
// second whatever the formats (on), or never (off).
func ForceSpill(opts Options, on bool) Options {
	opts.spill = spillNever
	if on {
		opts.spill = spillAlways
	}
	return opts
}

// WriteReference writes rows of the reference data (package refdata, seed
// 1) into dir as ref.csv, ref.parquet or, converted from the Parquet file,
// the Arrow IPC file ref.arrow, by format, and returns the path and size
// of the file.
func WriteReference(tb testing.TB, dir, format string, rows int64) (string, int64) {
	tb.Helper()
	path := filepath.Join(dir, "ref."+format)
	var err error
	switch format {
	case "csv":
		err = refdata.WriteCSV(path, rows, 1)
	case "parquet":
		err = refdata.WriteParquet(path, rows, 1)
	case "arrow":
		pq, _ := WriteReference(tb, dir, "parquet", rows)
		err = toArrow(pq, path)
	}
	if err != nil {
		tb.Fatal(err)
	}
	st, err := os.Stat(path)
	if err != nil {
		tb.Fatal(err)
	}
	return path, st.Size()
}

// toArrow copies the data at from into an Arrow IPC file at to.
func toArrow(from, to string) error {
	set, err := source.Open([]string{from}, source.Options{})
	if err != nil {
		return err
	}
	defer set.Close()
	f, err := os.Create(to)
	if err != nil {
		return err
	}
	defer f.Close()
	w, err := ipc.NewFileWriter(f, ipc.WithSchema(set.Schema()))
	if err != nil {
		return err
	}
	if err := set.Scan(context.Background(), nil, func(b *source.Batch) error { return w.Write(b.Record) }); err != nil {
		return err
	}
	if err := w.Close(); err != nil {
		return err
	}
	return f.Close()
}
