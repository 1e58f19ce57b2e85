// Package engine evaluates a resolved policy on data: it plans which columns
// and passes the rules need, streams record batches from the sources through
// the checks' accumulators, and assembles the report.
//
// The command-line tool is a thin layer over this package; a Go program can
// embed the engine the same way:
//
//	pol, err := rules.Load("policy.yaml")
//	...
//	rep, err := engine.Run(ctx, pol, []string{"batch.parquet"}, engine.Options{})
//	...
//	fmt.Println(rep.Verdict)
package engine

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime"
	"slices"
	"sync"
	"time"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Version is the tool version written into reports.
const Version = "0.1.0"

// DefaultMaxRowsListed is how many offending rows a result lists when
// Options.MaxRowsListed is zero.
const DefaultMaxRowsListed = 20

// Options tune a run. The zero value is ready to use.
type Options struct {
	// MaxRowsListed caps the offending rows listed per result (counts stay
	// exact); 0 means DefaultMaxRowsListed, a negative value lists none.
	MaxRowsListed int
	// Source holds reader settings that the policy's `csv` block does not
	// set (the policy wins where it does).
	Source source.Options
	// Workers is how many goroutines evaluate checks on each batch; 0 means
	// GOMAXPROCS.
	Workers int
	// Now returns the time a run starts; nil means time.Now. Tests fix it.
	Now func() time.Time
	// Gate, when set, receives every row of the data in a last pass, with
	// the row-level rules it breaks, to split a load into accepted and
	// rejected rows. The pass runs only when every rule could run; an error
	// from Gate ends the run with that error.
	Gate Gate
	// Progress, when set, is called at the start of each pass over the data
	// and after each batch, from the goroutine that calls Run.
	Progress func(Progress)
}

// Run evaluates policy p on the data at paths (files, globs, or "-" for
// standard input). With no paths it reads the data the policy names,
// relative to the policy file's folder.
//
// An error means the run could not be judged at all: unreadable data, or a
// policy that does not fit the data (unknown columns, expressions that do
// not type-check). A rule that fails to run on otherwise good data does not
// stop the others: its result has status error.
func Run(ctx context.Context, p *rules.Policy, paths []string, opts Options) (*report.Report, error) {
	now := time.Now
	if opts.Now != nil {
		now = opts.Now
	}
	started := now()
	if len(paths) == 0 {
		paths = policyPaths(p)
	}
	if len(paths) == 0 {
		return nil, fmt.Errorf("policy %s names no data: give data files on the command line or a `data:` list in the policy", p.File)
	}
	set, err := source.Open(paths, sourceOptions(p, opts.Source))
	if err != nil {
		return nil, err
	}
	defer set.Close()

	pl, err := newPlan(p, set, opts)
	if err != nil {
		return nil, err
	}
	results, err := pl.execute(ctx, set, opts)
	if err != nil {
		return nil, err
	}
	rep := &report.Report{
		Schema:  report.SchemaVersion,
		Policy:  report.Policy{Name: p.Name, File: p.File, Hash: p.Hash},
		Results: results,
		Tool:    report.Tool{Name: "assay", Version: Version},
		Started: started.UTC(),
	}
	for _, c := range p.Columns {
		if c.Unit != "" {
			if rep.Units == nil {
				rep.Units = map[string]string{}
			}
			rep.Units[c.Name] = c.Unit
		}
	}
	for _, f := range set.Files() {
		rep.Sources = append(rep.Sources, report.Source{Path: f.Path, Format: f.Format.String(), Rows: f.Rows})
		rep.Rows += f.Rows
	}
	rep.Verdict, rep.Counts = tally(results)
	rep.Duration = now().Sub(started).Seconds()
	return rep, nil
}

// policyPaths returns the policy's own data paths, relative to its folder.
func policyPaths(p *rules.Policy) []string {
	dir := filepath.Dir(p.File)
	out := make([]string, 0, len(p.Input.Paths))
	for _, path := range p.Input.Paths {
		if path != "-" && !filepath.IsAbs(path) {
			path = filepath.Join(dir, path)
		}
		out = append(out, path)
	}
	return out
}

// tally combines the verdicts of the results that ran and counts them.
func tally(results []report.Result) (report.Verdict, report.Counts) {
	var (
		v report.Verdict
		c report.Counts
	)
	for _, r := range results {
		switch r.Status {
		case report.Error:
			c.Error++
			continue
		case report.Skipped:
			c.Skipped++
			continue
		}
		v = v.Worst(r.Verdict)
		switch r.Verdict {
		case report.Pass:
			c.Pass++
		case report.Warn:
			c.Warn++
		case report.Fail:
			c.Fail++
		}
	}
	return v, c
}

// execute streams the data through the plan's checks, with a second pass
// when some check needs one and a last one for opts.Gate, and returns the
// results in rule order.
func (pl *plan) execute(ctx context.Context, set *source.Set, opts Options) ([]report.Result, error) {
	workers := opts.Workers
	track := newTracker(set, opts.Progress)
	accs := make([]checks.Accumulator, len(pl.checks))
	for i, c := range pl.checks {
		accs[i] = c.NewAccumulator()
	}
	broken := make([]error, len(accs))
	files := set.Files()
	refuse := func(b *source.Batch) error { return pl.refuseUntyped(b, files) }
	if err := scan(ctx, set, pl.columns, accs, broken, workers, refuse, track.pass(1, false)); err != nil {
		return nil, err
	}
	second := false
	pass2 := make([]checks.Accumulator, len(accs))
	for i, a := range accs {
		if r, ok := a.(checks.Rescanner); ok && broken[i] == nil {
			if next := r.SecondPass(); next != nil {
				accs[i], pass2[i] = next, next
				second = true
			}
		}
	}
	if second {
		if err := scan(ctx, set, pl.columns, pass2, broken, workers, nil, track.pass(2, false)); err != nil {
			return nil, fmt.Errorf("second pass: %w", err)
		}
	}
	if opts.Gate != nil && !slices.ContainsFunc(broken, func(err error) bool { return err != nil }) {
		n := 2
		if second {
			n = 3
		}
		if err := pl.gate(ctx, set, accs, workers, opts.Gate, track.pass(n, true)); err != nil {
			return nil, fmt.Errorf("writing rows: %w", err)
		}
	}
	results := make([]report.Result, 0, len(pl.checks)+len(pl.skipped))
	for i, c := range pl.checks {
		if broken[i] != nil {
			results = append(results, checks.Failed(c.Rule(), broken[i]))
			continue
		}
		results = append(results, accs[i].Finish())
	}
	results = append(results, pl.skipped...)
	pl.order(results)
	return results, nil
}

// scan feeds every batch to the accumulators, nil ones excepted, and then
// to after, when set. refuse, when set, sees each batch first and may stop
// the scan with an error. The checks are split among workers goroutines that
// observe each batch side by side; a check whose Observe fails is marked
// broken and sees no more batches.
func scan(ctx context.Context, set *source.Set, columns []string, accs []checks.Accumulator, broken []error, workers int, refuse func(*source.Batch) error, after func(*source.Batch)) error {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, len(accs))
	return set.Scan(ctx, columns, func(b *source.Batch) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if refuse != nil {
			if err := refuse(b); err != nil {
				return err
			}
		}
		if workers <= 1 {
			observe(b, accs, broken, 0, 1)
		} else {
			var wg sync.WaitGroup
			for w := range workers {
				wg.Go(func() { observe(b, accs, broken, w, workers) })
			}
			wg.Wait()
		}
		if after != nil {
			after(b)
		}
		return nil
	})
}

// observe feeds b to every stride-th accumulator starting at first.
func observe(b *source.Batch, accs []checks.Accumulator, broken []error, first, stride int) {
	for i := first; i < len(accs); i += stride {
		if accs[i] == nil || broken[i] != nil {
			continue
		}
		if err := accs[i].Observe(b); err != nil {
			broken[i] = fmt.Errorf("rows %d-%d: %w", b.FirstRow, b.FirstRow+b.Record.NumRows()-1, err)
		}
	}
}
