// Command decode is the limit of issue 7's Parquet target: it reads every
// column of a Parquet file with arrow-go's pqarrow, in record batches, and
// discards them. It prints the rows read.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: decode FILE.parquet")
		os.Exit(2)
	}
	rows, err := decode(os.Args[1])
	if err != nil {
		fmt.Fprintf(os.Stderr, "decode: %v\n", err)
		os.Exit(1)
	}
	fmt.Println(rows)
}

// decode reads all columns of all row groups of path and returns the rows.
func decode(path string) (int64, error) {
	pr, err := file.OpenParquetFile(path, true)
	if err != nil {
		return 0, fmt.Errorf("open %s: %w", path, err)
	}
	defer pr.Close()
	props := pqarrow.ArrowReadProperties{Parallel: true, BatchSize: 64 * 1024}
	fr, err := pqarrow.NewFileReader(pr, props, memory.DefaultAllocator)
	if err != nil {
		return 0, fmt.Errorf("read %s: %w", path, err)
	}
	rr, err := fr.GetRecordReader(context.Background(), nil, nil)
	if err != nil {
		return 0, fmt.Errorf("read %s: %w", path, err)
	}
	defer rr.Release()
	var rows int64
	for {
		rec, err := rr.Read()
		if rec != nil {
			rows += rec.NumRows()
		}
		if errors.Is(err, io.EOF) || (err == nil && rec == nil) {
			break
		}
		if err != nil {
			return rows, fmt.Errorf("read %s: %w", path, err)
		}
	}
	return rows, nil
}
