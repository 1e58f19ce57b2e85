package source

import (
	"bytes"
	"fmt"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// poisonMem is an allocator whose new memory holds 0xa5 bytes instead of
// zeros, as allocators that do not clear memory may hand out: a column
// must not rely on buffers starting at zero.
type poisonMem struct{ memory.Allocator }

func (p poisonMem) Allocate(n int) []byte {
	b := p.Allocator.Allocate(n)
	for i := range b {
		b[i] = 0xa5
	}
	return b
}

func (p poisonMem) Reallocate(n int, b []byte) []byte {
	old := len(b)
	b = p.Allocator.Reallocate(n, b)
	for i := old; i < len(b); i++ {
		b[i] = 0xa5
	}
	return b
}

// TestColumnCells fills a column of each kind with valid cells, null
// tokens and cells that do not parse, in batches whose length is not a
// multiple of eight, from an allocator that does not clear memory, and
// checks the array: which cells are null, the values, zero in the value
// slots of null cells (no stale bytes in the data), no validity bit set
// past the last cell, and the invalid cells listed.
func TestColumnCells(t *testing.T) {
	tests := []struct {
		kind    kind
		nulls   []string // DefaultNulls when nil
		cells   []string
		want    string // the cells as the array renders them
		invalid []int
	}{
		{kInt, nil, []string{"1", "", "x", "-7", "NA", "12345678901", "+3", "1.5", "9"},
			"[1 (null) (null) -7 (null) 12345678901 3 (null) 9]", []int{2, 7}},
		{kFloat, nil, []string{"1.5", "NA", "-0.25", "", "1e3", "abc", "3", "0.1", ".5", "7."},
			"[1.5 (null) -0.25 (null) 1000 (null) 3 0.1 0.5 7]", []int{5}},
		{kFloat, []string{"-999", "NA"}, []string{"1.5", "-999", "NA", "", "-999.0", "2"},
			"[1.5 (null) (null) (null) -999 2]", []int{3}},
		{kInt, []string{"0", "-1"}, []string{"5", "0", "-1", "7", "00"}, "[5 (null) (null) 7 0]", nil},
		{kBool, nil, []string{"true", "", "FALSE", "yes", "True", "null", "false"},
			"[true (null) false (null) true (null) false]", []int{3}},
		{kTimestamp, nil, []string{"2024-01-02T03:04:05Z", "", "2024-13-01T00:00:00Z", "1970-01-01 00:00:01",
			"1970-01-01 00:00:02", "1970-01-01 24:00:00", "1970-01-01", "1970-01-01T00:00:03+01:00", "1970-01-0100:00:04"},
			"[1704164645000000 (null) (null) 1000000 2000000 (null) (null) -3597000000 (null)]", []int{2, 5, 6, 8}},
		{kDate, nil, []string{"2024-02-29", "N/A", "2023-02-29", "1970-01-02", "", "2000-01-01", "2000-01-01",
			"2000-01-01T", "2000-01-0", "2000-01-02"},
			"[2024-02-29 (null) (null) 1970-01-02 (null) 2000-01-01 2000-01-01 (null) (null) 2000-01-02]", []int{2, 7, 8}},
		{kString, nil, []string{"a", "", "NA", "bc", "null", "d", "NULL", "é", "N/A", "x"},
			`["a" (null) (null) "bc" (null) "d" (null) "é" (null) "x"]`, nil},
	}
	for _, tt := range tests {
		t.Run(fmt.Sprint(tt.kind.dataType(), tt.nulls), func(t *testing.T) {
			nulls := tt.nulls
			if nulls == nil {
				nulls = DefaultNulls
			}
			col := newColumn(tt.kind, newNullSet(nulls), poisonMem{checkedMem(t)})
			for round := range 2 { // the second batch reuses the column
				col.start(len(tt.cells) + 5)
				for _, c := range tt.cells {
					col.append([]byte(c))
				}
				var rows []int
				for _, bad := range col.invalid {
					rows = append(rows, bad.Row)
					if bad.Text != tt.cells[bad.Row] {
						t.Errorf("invalid cell %d has text %q; want %q", bad.Row, bad.Text, tt.cells[bad.Row])
					}
				}
				if fmt.Sprint(rows) != fmt.Sprint(tt.invalid) {
					t.Errorf("round %d: invalid rows %v; want %v", round, rows, tt.invalid)
				}
				arr := col.finish()
				if got := fmt.Sprint(arr); got != tt.want {
					t.Errorf("round %d: got %s; want %s", round, got, tt.want)
				}
				checkNullSlots(t, arr)
				arr.Release()
			}
		})
	}
}

// checkNullSlots checks that the value slots of arr's null cells hold zero
// and that its validity bitmap has no bit set past its last cell.
func checkNullSlots(t *testing.T, arr arrow.Array) {
	t.Helper()
	data := arr.Data()
	n := arr.Len()
	if valid := data.Buffers()[0]; valid != nil {
		b := valid.Bytes()
		if tail := n % 8; tail != 0 && b[n/8]>>tail != 0 {
			t.Errorf("validity bits past the last cell: %08b", b[n/8])
		}
	}
	width := map[arrow.Type]int{arrow.INT64: 8, arrow.FLOAT64: 8, arrow.TIMESTAMP: 8, arrow.DATE32: 4}[arr.DataType().ID()]
	for i := range n {
		if !arr.IsNull(i) {
			continue
		}
		switch a := arr.(type) {
		case *array.String:
			if a.ValueLen(i) != 0 {
				t.Errorf("null string %d has %d bytes", i, a.ValueLen(i))
			}
		case *array.Boolean:
			if a.Value(i) {
				t.Errorf("null boolean %d is true", i)
			}
		default:
			slot := data.Buffers()[1].Bytes()[i*width : (i+1)*width]
			if !bytes.Equal(slot, make([]byte, width)) {
				t.Errorf("null value %d holds % x", i, slot)
			}
		}
	}
}
