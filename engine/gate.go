package engine

import (
	"context"
	"fmt"
	"runtime"
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/source"
)

// Gate receives the rows of the data once more after the checks have run
// (see Options.Gate).
type Gate interface {
	// Begin is called once, before any batch, with the schema of the
	// batches: every column of the data, in the data's order.
	Begin(schema *arrow.Schema) error
	// Rows is called with every batch, in data order. b holds every column,
	// with the cells of CSV inputs as written (Batch.Text); broken[i] lists
	// the ids of the row-level rules that row i of b breaks, in policy
	// order, and is nil for a row that breaks none.
	Rows(b *source.Batch, broken [][]string) error
}

// judge is a row-level rule's accumulator, asked about each row.
type judge struct {
	id string
	j  checks.RowJudge
}

// gate reads the data a last time and hands every batch to g with the
// row-level rules each row breaks, as the final accumulators accs judge
// them. The judges see each batch through the plan's columns, the view they
// were compiled for; workers goroutines ask them side by side.
func (pl *plan) gate(ctx context.Context, set *source.Set, accs []checks.Accumulator, workers int, g Gate, after func(*source.Batch)) error {
	var judges []judge
	for i, a := range accs {
		if j, ok := a.(checks.RowJudge); ok {
			judges = append(judges, judge{id: pl.checks[i].Rule().ID, j: j})
		}
	}
	schema := set.Schema()
	idx := make([]int, len(pl.columns))
	fields := make([]arrow.Field, len(pl.columns))
	for k, name := range pl.columns {
		idx[k] = schema.FieldIndices(name)[0]
		fields[k] = schema.Field(idx[k])
	}
	view := arrow.NewSchema(fields, nil)
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, len(judges)))
	bad := make([][]bool, len(judges))
	errs := make([]error, len(judges))
	if err := g.Begin(schema); err != nil {
		return err
	}
	return set.ScanText(ctx, nil, func(b *source.Batch) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		n := int(b.Record.NumRows())
		v := project(b, idx, view)
		defer v.Release()
		var wg sync.WaitGroup
		for w := range workers {
			wg.Go(func() {
				for k := w; k < len(judges); k += workers {
					bad[k] = cleared(bad[k], n)
					if err := judges[k].j.Reject(v, bad[k]); err != nil {
						errs[k] = fmt.Errorf("rule %s: rows %d-%d: %w", judges[k].id, b.FirstRow, b.FirstRow+int64(n)-1, err)
					}
				}
			})
		}
		wg.Wait()
		broken := make([][]string, n)
		for k, jd := range judges {
			if errs[k] != nil {
				return errs[k]
			}
			for i, x := range bad[k] {
				if x {
					broken[i] = append(broken[i], jd.id)
				}
			}
		}
		if err := g.Rows(b, broken); err != nil {
			return err
		}
		if after != nil {
			after(b)
		}
		return nil
	})
}

// cleared returns s resized to n entries, all false.
func cleared(s []bool, n int) []bool {
	if cap(s) < n {
		return make([]bool, n)
	}
	s = s[:n]
	clear(s)
	return s
}

// project returns b seen through the columns at idx, with schema view; the
// caller releases it.
func project(b *source.Batch, idx []int, view *arrow.Schema) *source.Batch {
	cols := make([]arrow.Array, len(idx))
	var invalid map[int][]source.InvalidCell
	for k, j := range idx {
		cols[k] = b.Record.Column(j)
		if cells := b.Invalid[j]; cells != nil {
			if invalid == nil {
				invalid = make(map[int][]source.InvalidCell)
			}
			invalid[k] = cells
		}
	}
	return &source.Batch{
		Record:   array.NewRecordBatch(view, cols, b.Record.NumRows()),
		Source:   b.Source,
		FirstRow: b.FirstRow,
		Lines:    b.Lines,
		Invalid:  invalid,
		Offset:   b.Offset,
	}
}
