//go:build unix

package engine

import (
	"context"
	"runtime"
	"syscall"
	"testing"
	"time"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// BenchmarkSecondPass measures what the second pass of bench/policy.yaml
// costs to read on 1M rows of the reference data, as CSV, Parquet and an
// Arrow IPC file:
// "reread" reads the columns of the checks that may ask for a second pass
// from the file again, "spill" reads them from the first pass's copy, and
// "write" is what making that copy adds to the first pass (the batches of
// a first pass written to a spill, less reading them alone, is
// "write" - "first"). Besides the elapsed time it reports the CPU time of
// the process (cpu-ns/op), which varies less on a shared machine.
func BenchmarkSecondPass(b *testing.B) {
	const rows = 1_000_000
	pol, err := rules.Load("../bench/policy.yaml")
	if err != nil {
		b.Fatal(err)
	}
	dir := b.TempDir()
	for _, format := range []string{"csv", "parquet", "arrow"} {
		path, size := WriteReference(b, dir, format, rows)
		set, err := source.Open([]string{path}, sourceOptions(pol, source.Options{TempDir: dir}))
		if err != nil {
			b.Fatal(err)
		}
		pl, err := newPlan(pol, set, Options{})
		if err != nil {
			b.Fatal(err)
		}
		accs := make([]checks.Accumulator, len(pl.checks))
		for i, c := range pl.checks {
			accs[i] = c.NewAccumulator()
		}
		spill := func() *source.Spill {
			sp := pl.startSpill(set, accs, Options{spill: spillAlways})
			if sp == nil {
				b.Fatal("no spill for bench/policy.yaml")
			}
			return sp
		}
		sp := spill()
		ctx := context.Background()
		var n int64
		count := func(bt *source.Batch) error { n += bt.Record.NumRows(); return nil }
		if err := set.ScanSome(ctx, pl.columns, nil, func(bt *source.Batch) error { sp.Write(bt); return nil }); err != nil {
			b.Fatal(err)
		}
		if err := sp.Finish(); err != nil {
			b.Fatal(err)
		}
		skip := pl.idle(rescanners(accs))
		for _, tc := range []struct {
			name string
			read func() error
		}{
			{"reread", func() error { return set.ScanSome(ctx, pl.columns, skip, count) }},
			{"spill", func() error { return sp.ScanSome(ctx, pl.columns, skip, count) }},
			{"first", func() error { return set.ScanSome(ctx, pl.columns, nil, count) }},
			{"write", func() error {
				w := spill()
				defer w.Close()
				err := set.ScanSome(ctx, pl.columns, nil, func(bt *source.Batch) error { w.Write(bt); return count(bt) })
				if err == nil {
					err = w.Finish()
				}
				return err
			}},
		} {
			b.Run(format+"/"+tc.name, func(b *testing.B) {
				b.SetBytes(size)
				b.ReportAllocs()
				runtime.GC()
				cpu := processCPU(b)
				for b.Loop() {
					n = 0
					if err := tc.read(); err != nil {
						b.Fatal(err)
					}
					if n != rows {
						b.Fatalf("read %d rows, want %d", n, rows)
					}
				}
				b.ReportMetric(float64(rows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
				b.ReportMetric(float64(processCPU(b)-cpu)/float64(b.N), "cpu-ns/op")
			})
		}
		_ = sp.Close()
		_ = set.Close()
	}
}

// processCPU returns the CPU time the process has used so far, in user and
// system mode, on all its threads.
func processCPU(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
