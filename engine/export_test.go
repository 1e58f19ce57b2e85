package engine

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/bench/refdata"
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
// 1) into dir as ref.csv or ref.parquet, by format, and returns the path
// and size of the file.
func WriteReference(tb testing.TB, dir, format string, rows int64) (string, int64) {
	tb.Helper()
	path := filepath.Join(dir, "ref."+format)
	write := refdata.WriteParquet
	if format == "csv" {
		write = refdata.WriteCSV
	}
	if err := write(path, rows, 1); err != nil {
		tb.Fatal(err)
	}
	st, err := os.Stat(path)
	if err != nil {
		tb.Fatal(err)
	}
	return path, st.Size()
}
