package engine

import (
	"slices"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/source"
)

// spillMode says when the first pass keeps a copy of the columns a second
// pass may read (see source.Spill).
type spillMode int

const (
	spillAuto   spillMode = iota // when the data has a CSV input (see wantSpill)
	spillAlways                  // whatever the formats
	spillNever                   // the second pass reads the data again
)

// wantSpill tells whether the first pass over set should keep a copy for
// the second. It pays for CSV inputs (standard input included), whose
// second reading would split and parse every line again: on 1M rows of
// the reference policy, 0.34 s of CPU against about 0.02 s to write the
// packed copy and 0.05 s to read it (BenchmarkSecondPass, 3 runs, after
// the packing of spillcode.go). A Parquet input decodes the columns again
// in 0.07 s, against about 0.015 s to write the copy and 0.04 s to read
// it, and an Arrow input reads them in 0.05 s: no clear gain, and writing
// may wait on a slow disk.
func wantSpill(set *source.Set, mode spillMode) bool {
	switch mode {
	case spillAlways:
		return true
	case spillNever:
		return false
	}
	return slices.ContainsFunc(set.Files(), func(f source.File) bool { return f.Format == source.CSV })
}

// startSpill starts the copy that the first pass writes for the second:
// the columns that the checks which may ask for a second pass read (a
// checks.Rescanner's accumulator, accs being one lane's), with the key
// columns listed rows show. It returns nil when no check may ask, when
// wantSpill says no, or when the file cannot be made (the second pass then
// reads the data again).
func (pl *plan) startSpill(set *source.Set, accs []checks.Accumulator, opts Options) *source.Spill {
	if !wantSpill(set, opts.spill) {
		return nil
	}
	may := rescanners(accs)
	if !slices.ContainsFunc(may, func(a checks.Accumulator) bool { return a != nil }) {
		return nil
	}
	var keep []bool
	if skip := pl.idle(may); skip != nil {
		keep = make([]bool, len(skip))
		for k, s := range skip {
			keep[k] = !s
		}
	}
	sp, err := set.NewSpill(pl.columns, keep)
	if err != nil {
		return nil
	}
	return sp
}

// rescanners returns accs with nil for the accumulators that cannot ask for
// a second pass (not checks.Rescanners).
func rescanners(accs []checks.Accumulator) []checks.Accumulator {
	may := make([]checks.Accumulator, len(accs))
	for i, a := range accs {
		if _, ok := a.(checks.Rescanner); ok {
			may[i] = a
		}
	}
	return may
}
