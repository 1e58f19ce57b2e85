// Command csvpass is the limit of issue 7's CSV target: one pass of
// encoding/csv over a file written by bench/gen, every field parsed into
// its type (strconv for numbers and booleans, time.Parse for timestamps)
// and stored in typed Go slices of 65536 rows that are reused, as a reader
// filling column buffers would. It prints the rows read and the cells that
// did not parse.
package main

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"time"
)

// kind is how a column's text is parsed.
type kind int

const (
	kInt kind = iota
	kTime
	kString
	kFloat
	kBool
)

// columns are bench/gen's columns in file order.
var columns = []kind{kInt, kTime, kString, kString, kFloat, kFloat, kFloat, kFloat, kFloat, kFloat, kInt, kBool}

const chunk = 65536

// buffers holds one chunk of typed values per column.
type buffers struct {
	ints    [][]int64
	floats  [][]float64
	strs    [][]string
	bools   [][]bool
	valid   [][]bool
	badCell int64
}

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: csvpass FILE.csv")
		os.Exit(2)
	}
	rows, bad, err := pass(os.Args[1])
	if err != nil {
		fmt.Fprintf(os.Stderr, "csvpass: %v\n", err)
		os.Exit(1)
	}
	fmt.Println(rows, bad)
}

// pass reads path once and returns the data rows and unparsable cells.
func pass(path string) (int64, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, 0, fmt.Errorf("open %s: %w", path, err)
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReaderSize(f, 1<<20))
	r.ReuseRecord = true
	r.FieldsPerRecord = len(columns)
	if _, err := r.Read(); err != nil {
		return 0, 0, fmt.Errorf("read %s header: %w", path, err)
	}
	n := len(columns)
	b := buffers{ints: make([][]int64, n), floats: make([][]float64, n), strs: make([][]string, n), bools: make([][]bool, n), valid: make([][]bool, n)}
	for j, k := range columns {
		b.valid[j] = make([]bool, 0, chunk)
		switch k {
		case kInt, kTime:
			b.ints[j] = make([]int64, 0, chunk)
		case kFloat:
			b.floats[j] = make([]float64, 0, chunk)
		case kString:
			b.strs[j] = make([]string, 0, chunk)
		case kBool:
			b.bools[j] = make([]bool, 0, chunk)
		}
	}
	var rows int64
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return rows, b.badCell, fmt.Errorf("read %s: %w", path, err)
		}
		if rows%chunk == 0 {
			b.reset()
		}
		rows++
		for j, cell := range rec {
			b.add(j, cell)
		}
	}
	return rows, b.badCell, nil
}

// reset empties every column buffer, keeping its capacity.
func (b *buffers) reset() {
	for j := range columns {
		b.valid[j] = b.valid[j][:0]
		b.ints[j] = b.ints[j][:0]
		b.floats[j] = b.floats[j][:0]
		b.strs[j] = b.strs[j][:0]
		b.bools[j] = b.bools[j][:0]
	}
}

// add parses cell as column j's type and appends it; an empty cell is null.
func (b *buffers) add(j int, cell string) {
	ok := cell != ""
	var err error
	switch columns[j] {
	case kInt:
		var v int64
		if ok {
			v, err = strconv.ParseInt(cell, 10, 64)
		}
		b.ints[j] = append(b.ints[j], v)
	case kTime:
		var t time.Time
		if ok {
			t, err = time.Parse(time.RFC3339, cell)
		}
		b.ints[j] = append(b.ints[j], t.UnixMicro())
	case kFloat:
		var v float64
		if ok {
			v, err = strconv.ParseFloat(cell, 64)
		}
		b.floats[j] = append(b.floats[j], v)
	case kString:
		// encoding/csv already made one string of the record's fields
		b.strs[j] = append(b.strs[j], cell)
	case kBool:
		var v bool
		if ok {
			v, err = strconv.ParseBool(cell)
		}
		b.bools[j] = append(b.bools[j], v)
	}
	if err != nil {
		b.badCell++
		ok = false
	}
	b.valid[j] = append(b.valid[j], ok)
}
