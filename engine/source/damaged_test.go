package source

import (
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// TestDamagedParquetPages damages the data pages of a valid Parquet file
// one byte at a time and checks that every scan either succeeds or returns
// a located *Error, naming the column when a column's decoder fails: never
// a panic, whatever arrow-go's decoders make of the damage.
func TestDamagedParquetPages(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.parquet")
	fx := fixture{
		fields: []arrow.Field{
			{Name: "id", Type: arrow.PrimitiveTypes.Int64},
			{Name: "x", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
			{Name: "tag", Type: arrow.BinaryTypes.String},
		},
		rows: func(b *array.RecordBuilder) {
			for i := range 500 {
				b.Field(0).(*array.Int64Builder).Append(int64(i))
				if i%7 == 0 {
					b.Field(1).(*array.Float64Builder).AppendNull()
				} else {
					b.Field(1).(*array.Float64Builder).Append(float64(i) / 3)
				}
				b.Field(2).(*array.StringBuilder).Append(fmt.Sprintf("t%d", i%5))
			}
		},
	}
	writeParquet(t, good, fx, 200)
	data, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	// The footer (metadata) is at the end: its length sits before the
	// closing magic. Damage only the bytes before it.
	footer := int(binary.LittleEndian.Uint32(data[len(data)-8:]))
	pages := len(data) - 8 - footer
	if pages < 100 {
		t.Fatalf("unexpected layout: %d page bytes of %d", pages, len(data))
	}
	bad := filepath.Join(dir, "bad.parquet")
	failed := 0
	for off := 4; off < pages; off += 13 {
		damaged := append([]byte(nil), data...)
		damaged[off] ^= 0xA5
		if err := os.WriteFile(bad, damaged, 0o644); err != nil {
			t.Fatal(err)
		}
		set, err := Open([]string{bad}, Options{})
		if err == nil {
			err = set.Scan(context.Background(), nil, func(b *Batch) error { return nil })
			set.Close()
		}
		if err == nil {
			continue
		}
		failed++
		var located *Error
		if !errors.As(err, &located) || located.Path == "" {
			t.Fatalf("offset %d: error does not name the file: %v", off, err)
		}
		// Every column here is flat: a decoder's error names the column.
		if msg := err.Error(); strings.Contains(msg, "cannot decode") && !strings.Contains(msg, "the data ends") &&
			!strings.Contains(msg, "column \"") {
			t.Errorf("offset %d: error does not name the column: %v", off, err)
		}
	}
	if failed == 0 {
		t.Error("no damaged copy was refused: the test does not reach the decoders")
	}
}

// FuzzParquet reads mutated copies of a small valid Parquet file (three
// columns, two row groups) whole and with a column skipped: every read
// either succeeds or returns a *Error naming the file, never a panic,
// whatever the damage reaches (footer, page headers, levels, values,
// dictionaries).
func FuzzParquet(f *testing.F) {
	dir := f.TempDir()
	good := filepath.Join(dir, "good.parquet")
	writeParquet(f, good, smallFixture, 40)
	data, err := os.ReadFile(good)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(data)
	f.Fuzz(func(t *testing.T, b []byte) {
		path := filepath.Join(t.TempDir(), "f.parquet")
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
		for _, skip := range [][]bool{nil, {false, true, false}} {
			set, err := Open([]string{path}, Options{})
			if err == nil {
				if set.Schema().NumFields() != len(skip) {
					skip = nil
				}
				err = set.ScanSome(context.Background(), nil, skip, func(*Batch) error { return nil })
				set.Close()
			}
			var located *Error
			if err != nil && (!errors.As(err, &located) || located.Path == "") {
				t.Fatalf("error does not name the file: %v", err)
			}
		}
	})
}

// TestMutatedParquet reads 3,000 copies of a small Parquet file, each with
// one to three bytes anywhere (footer included) set at random, whole: each
// read succeeds or returns a *Error naming the file. With this seed, before
// the fixes it found, copies ended the process (a damaged length in the
// Arrow schema stored in the footer made arrow-go allocate 34 GB; a
// negative row count) or panicked (an unknown logical type).
func TestMutatedParquet(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.parquet")
	writeParquet(t, good, smallFixture, 40)
	data, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	r := rand.New(rand.NewPCG(1, 2))
	path := filepath.Join(dir, "f.parquet")
	refused := 0
	for range 3000 {
		b := slices.Clone(data)
		for range 1 + r.IntN(3) {
			b[r.IntN(len(b))] = byte(r.IntN(256))
		}
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
		set, err := Open([]string{path}, Options{})
		if err == nil {
			err = set.Scan(context.Background(), nil, func(*Batch) error { return nil })
			set.Close()
		}
		if err == nil {
			continue
		}
		refused++
		var located *Error
		if !errors.As(err, &located) || located.Path == "" {
			t.Fatalf("error does not name the file: %v", err)
		}
	}
	if refused == 0 {
		t.Error("no mutated copy was refused: the test does not reach the readers")
	}
}

// smallFixture is the file FuzzParquet and TestMutatedParquet damage: 60
// rows of an integer, a number and a text column, the last two with nulls,
// in row groups of 40 rows.
var smallFixture = fixture{
	fields: []arrow.Field{
		{Name: "id", Type: arrow.PrimitiveTypes.Int64},
		{Name: "x", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "tag", Type: arrow.BinaryTypes.String, Nullable: true},
	},
	rows: func(b *array.RecordBuilder) {
		for i := range 60 {
			b.Field(0).(*array.Int64Builder).Append(int64(i))
			if i%7 == 0 {
				b.Field(1).(*array.Float64Builder).AppendNull()
				b.Field(2).(*array.StringBuilder).AppendNull()
			} else {
				b.Field(1).(*array.Float64Builder).Append(float64(i) / 3)
				b.Field(2).(*array.StringBuilder).Append(fmt.Sprintf("t%d", i%5))
			}
		}
	},
}
