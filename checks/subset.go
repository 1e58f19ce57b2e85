package checks

import (
	"context"
	"fmt"
	"slices"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/compute"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/source"
)

// take returns a batch of rows sel of b, in that order: its columns taken
// with Arrow's take kernel into memory from mem, each row keeping its
// data-row number (Batch.Rows), its file line and its invalid cells. The
// caller releases it. Text, the cells as written, is not carried over.
func take(mem memory.Allocator, b *source.Batch, sel []int) (*source.Batch, error) {
	idx := make([]int64, len(sel))
	for k, i := range sel {
		idx[k] = int64(i)
	}
	ia := array.NewInt64Data(array.NewData(arrow.PrimitiveTypes.Int64, len(idx),
		[]*memory.Buffer{nil, memory.NewBufferBytes(arrow.Int64Traits.CastToBytes(idx))}, nil, 0, 0))
	defer ia.Release()
	ctx := compute.WithAllocator(context.Background(), mem)
	cols := make([]arrow.Array, 0, b.Record.NumCols())
	defer func() {
		for _, c := range cols {
			c.Release()
		}
	}()
	for k, c := range b.Record.Columns() {
		out, err := compute.TakeArray(ctx, c, ia)
		if err != nil {
			return nil, fmt.Errorf("select rows of column %q: %w", b.Record.ColumnName(k), err)
		}
		cols = append(cols, out)
	}
	sub := &source.Batch{
		Record: array.NewRecordBatch(b.Record.Schema(), cols, int64(len(sel))),
		Source: b.Source,
		Rows:   make([]int64, len(sel)),
		Offset: b.Offset,
	}
	for k, i := range sel {
		sub.Rows[k] = b.Row(i)
	}
	if len(sel) > 0 {
		sub.FirstRow = sub.Rows[0]
	}
	if b.Lines != nil {
		sub.Lines = make([]int64, len(sel))
		for k, i := range sel {
			sub.Lines[k] = b.Line(i)
		}
	}
	if len(b.Invalid) > 0 {
		at := make(map[int]int, len(sel)) // row of b -> row of sub
		for k, i := range sel {
			at[i] = k
		}
		for c, cells := range b.Invalid {
			for _, cell := range cells {
				if k, ok := at[cell.Row]; ok {
					if sub.Invalid == nil {
						sub.Invalid = map[int][]source.InvalidCell{}
					}
					sub.Invalid[c] = append(sub.Invalid[c], source.InvalidCell{Row: k, Text: cell.Text})
				}
			}
		}
		for c := range sub.Invalid {
			slices.SortFunc(sub.Invalid[c], func(a, b source.InvalidCell) int { return a.Row - b.Row })
		}
	}
	return sub, nil
}

// slice returns rows [lo, hi) of b as a batch sharing b's memory; the
// caller releases it.
func slice(b *source.Batch, lo, hi int) *source.Batch {
	sub := &source.Batch{
		Record:   b.Record.NewSlice(int64(lo), int64(hi)),
		Source:   b.Source,
		FirstRow: b.Row(lo),
		Offset:   b.Offset,
	}
	if b.Rows != nil {
		sub.Rows = b.Rows[lo:hi]
	}
	if b.Lines != nil {
		sub.Lines = b.Lines[lo:hi]
	}
	for c, cells := range b.Invalid {
		first, _ := slices.BinarySearchFunc(cells, lo, func(cell source.InvalidCell, r int) int { return cell.Row - r })
		for _, cell := range cells[first:] {
			if cell.Row >= hi {
				break
			}
			if sub.Invalid == nil {
				sub.Invalid = map[int][]source.InvalidCell{}
			}
			sub.Invalid[c] = append(sub.Invalid[c], source.InvalidCell{Row: cell.Row - lo, Text: cell.Text})
		}
	}
	return sub
}
