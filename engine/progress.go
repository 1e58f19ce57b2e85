package engine

import "github.com/assay-project/assay/engine/source"

// Progress says how far a run has read, for a progress display.
type Progress struct {
	// Pass counts the passes over the data: 1, then 2 when a rule asks for a
	// second look, then one more when Options.Gate receives the rows.
	Pass int
	// Gate says the pass hands the rows to Options.Gate.
	Gate bool
	// Rows and Bytes say how much of the data this pass has read: data rows,
	// and bytes of the files as stored. Bytes are counted as read for CSV;
	// for Parquet and Arrow files they are estimated from the rows read when
	// the file's row count is known, else counted when the file is done.
	Rows, Bytes int64
	// Size is the bytes of all the files; TotalRows their data rows, or -1
	// while unknown (Parquet files know theirs before the first pass, the
	// others after it).
	Size, TotalRows int64
}

// tracker turns the batches of each pass into Progress reports.
type tracker struct {
	fn       func(Progress)
	set      *source.Set
	files    []source.File
	before   []int64 // bytes of the files before each
	fileRows []int64 // rows of each file read in this pass
	p        Progress
}

// newTracker returns a tracker that reports to fn; nil when fn is nil.
func newTracker(set *source.Set, fn func(Progress)) *tracker {
	if fn == nil {
		return nil
	}
	return &tracker{fn: fn, set: set}
}

// pass starts pass n and returns what to call after each batch of it; nil
// when no one is watching.
func (t *tracker) pass(n int, gate bool) func(*source.Batch) {
	if t == nil {
		return nil
	}
	t.files = t.set.Files()
	t.before = make([]int64, len(t.files))
	t.fileRows = make([]int64, len(t.files))
	t.p = Progress{Pass: n, Gate: gate}
	for i, f := range t.files {
		t.before[i] = t.p.Size
		t.p.Size += f.Size
		if f.Rows < 0 || t.p.TotalRows < 0 {
			t.p.TotalRows = -1
		} else {
			t.p.TotalRows += f.Rows
		}
	}
	t.fn(t.p)
	return t.batch
}

// batch counts batch b.
func (t *tracker) batch(b *source.Batch) {
	n := b.Record.NumRows()
	t.p.Rows += n
	t.fileRows[b.Source] += n
	f := t.files[b.Source]
	done := b.Offset
	if done == 0 && f.Rows > 0 {
		done = int64(float64(f.Size) * float64(t.fileRows[b.Source]) / float64(f.Rows))
	}
	t.p.Bytes = t.before[b.Source] + min(done, f.Size)
	t.fn(t.p)
}
