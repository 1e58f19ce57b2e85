// Command gen writes the reference data of the speed benchmarks (issue 7)
// as Parquet or CSV; see package refdata for its columns and planted rows.
package main

import (
	"flag"
	"fmt"
	"os"

	"github.com/assay-project/assay/bench/refdata"
)

func main() {
	rows := flag.Int64("rows", 10_000_000, "number of data rows")
	out := flag.String("o", "", "output file (required)")
	format := flag.String("format", "parquet", "csv or parquet")
	seed := flag.Uint64("seed", 1, "seed of the random stream")
	flag.Parse()
	if *out == "" || *rows < 0 {
		fmt.Fprintln(os.Stderr, "gen: -o is required and -rows may not be negative")
		os.Exit(2)
	}
	var err error
	switch *format {
	case "csv":
		err = refdata.WriteCSV(*out, *rows, *seed)
	case "parquet":
		err = refdata.WriteParquet(*out, *rows, *seed)
	default:
		err = fmt.Errorf("unknown -format %q: use csv or parquet", *format)
	}
	if err != nil {
		fmt.Fprintf(os.Stderr, "gen: %v\n", err)
		os.Exit(1)
	}
}
