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
	"sync/atomic"
	"time"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Version is the tool version written into reports.
const Version = "0.1.0"

// Lanes is how many sets of accumulators share the batches of each pass:
// batch k goes to lane k mod Lanes, and the lanes' accumulators are merged
// in lane order after the pass. The number is fixed, not taken from the
// machine, so that which rows each accumulator sees, and so every sum's
// rounding, is the same on any machine and for any Options.Workers; each
// worker serves whole lanes. Seeded samples depend on neither the lanes
// nor where batches end: a row is kept by a key computed from the seed and
// its data-row number (checks/bottomk).
const Lanes = 4

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
	// Workers is how many goroutines evaluate the checks, at most Lanes;
	// 0 means GOMAXPROCS. Results do not depend on it (see Lanes).
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

	spill spillMode // when to copy the first pass for the second; tests force it
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
//
// Each pass deals the batches round-robin to the workers, each with its own
// accumulator of every check (see scan); the workers' accumulators are then
// merged, and the checks' first-pass analyses (SecondPass) and results
// (Finish) run side by side, one check per worker at a time.
func (pl *plan) execute(ctx context.Context, set *source.Set, opts Options) ([]report.Result, error) {
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, Lanes)
	track := newTracker(set, opts.Progress)
	lanes := make([][]checks.Accumulator, Lanes)
	for w := range lanes {
		lanes[w] = make([]checks.Accumulator, len(pl.checks))
	}
	for i, c := range pl.checks {
		if m, ok := c.(checks.LaneMaker); ok {
			for w, a := range m.NewAccumulators(Lanes) {
				lanes[w][i] = a
			}
			continue
		}
		for w := range lanes {
			lanes[w][i] = c.NewAccumulator()
		}
	}
	files := set.Files()
	refuse := func(b *source.Batch) error { return pl.refuseUntyped(b, files) }
	sp := pl.startSpill(set, lanes[0], opts)
	defer sp.Close()
	after := track.pass(1, false)
	if sp != nil {
		progress := after
		after = func(b *source.Batch) {
			sp.Write(b)
			if progress != nil {
				progress(b)
			}
		}
	}
	broken, err := scan(ctx, set.ScanSome, pl.columns, nil, lanes, workers, refuse, after)
	if err != nil {
		return nil, err
	}
	// Merge each check's lanes and ask it whether it needs the data
	// again, longest analyses first: SecondPass is called once per lane,
	// each call giving a fresh accumulator that shares what the first
	// pass learnt.
	accs := lanes[0]
	pass2 := make([][]checks.Accumulator, Lanes)
	for w := range pass2 {
		pass2[w] = make([]checks.Accumulator, len(accs))
	}
	second := false
	order := pl.analysisOrder()
	parallel(len(order), workers, func(k int) {
		i := order[k]
		mergeLanes(lanes, broken, i)
		r, ok := accs[i].(checks.Rescanner)
		if !ok || broken[i] != nil {
			return
		}
		for w := range pass2 {
			pass2[w][i] = r.SecondPass()
		}
	})
	for i := range accs {
		if pass2[0][i] != nil {
			second = true
			accs[i] = pass2[0][i]
		}
	}
	read := set.ScanSome
	if second && sp != nil && sp.Finish() == nil {
		read = sp.ScanSome
	} else {
		_ = sp.Close() // not needed, or failed to write: free its disk now
	}
	if second {
		skip := pl.idle(pass2[0])
		again, err := scan(ctx, read, pl.columns, skip, pass2, workers, nil, track.pass(2, false))
		if err != nil {
			return nil, fmt.Errorf("second pass: %w", err)
		}
		merged := merge(pass2, again, workers)
		for i, a := range merged {
			if a == nil {
				continue
			}
			accs[i] = a
			if again[i] != nil {
				broken[i] = again[i]
			}
		}
	}
	_ = sp.Close() // frees its disk now; a copy already unnamed cannot fail to be removed
	if opts.Gate != nil && !slices.ContainsFunc(broken, func(err error) bool { return err != nil }) {
		n := 2
		if second {
			n = 3
		}
		if err := pl.gate(ctx, set, accs, workers, opts.Gate, track.pass(n, true)); err != nil {
			return nil, fmt.Errorf("writing rows: %w", err)
		}
	}
	results := make([]report.Result, len(pl.checks), len(pl.checks)+len(pl.skipped))
	parallel(len(accs), workers, func(i int) {
		if broken[i] != nil {
			results[i] = checks.Failed(pl.checks[i].Rule(), broken[i])
			return
		}
		results[i] = accs[i].Finish()
	})
	results = append(results, pl.skipped...)
	pl.order(results)
	return results, nil
}

// idle marks the plan's columns that none of the accumulators in accs
// (nil ones excepted) reads, nor the rows they list show; nil when every
// column is read.
func (pl *plan) idle(accs []checks.Accumulator) []bool {
	used := make(map[string]bool, len(pl.columns))
	for i, a := range accs {
		if a == nil {
			continue
		}
		for _, c := range pl.checks[i].Rule().Reads() {
			used[c] = true
		}
	}
	skip := make([]bool, len(pl.columns))
	for k, name := range pl.columns {
		skip[k] = !used[name] && !slices.Contains(pl.context, k)
	}
	if !slices.Contains(skip, true) {
		return nil
	}
	return skip
}

// reader is how a pass reads the data: source.Set.ScanSome, or
// source.Spill.ScanSome for a second pass that reads the first one's copy.
type reader func(ctx context.Context, columns []string, skip []bool, fn func(*source.Batch) error) error

// scan reads the data once, through read, and feeds every batch to the
// accumulators: lanes[l][i] is lane l's accumulator of check i (nil: the
// check sits this pass out). Batch k goes to lane k mod len(lanes); worker w serves the
// lanes l with l mod workers = w, so a lane sees its batches in order
// whatever the number of workers. skip marks columns no accumulator reads
// (see source.Set.ScanSome). refuse, when set, sees each batch first, in
// data order, and may stop the scan with an error; after, when set, sees
// each batch once it is dealt.
//
// scan returns, per check, the error of the first batch (in data order) on
// which its Observe failed; such a check sees no more batches in that lane
// and its accumulators must not be merged.
func scan(ctx context.Context, read reader, columns []string, skip []bool, lanes [][]checks.Accumulator, workers int, refuse func(*source.Batch) error, after func(*source.Batch)) ([]error, error) {
	faults := make([][]fault, len(lanes))
	for l := range faults {
		faults[l] = make([]fault, len(lanes[l]))
	}
	type dealt struct {
		b    *source.Batch
		lane int
	}
	var (
		feeds []chan dealt
		wg    sync.WaitGroup
	)
	if workers > 1 {
		feeds = make([]chan dealt, workers)
		for w := range feeds {
			feeds[w] = make(chan dealt, 2)
			wg.Go(func() {
				for d := range feeds[w] {
					observe(d.b, lanes[d.lane], faults[d.lane])
					d.b.Release()
				}
			})
		}
	}
	k := 0
	err := read(ctx, columns, skip, func(b *source.Batch) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if refuse != nil {
			if err := refuse(b); err != nil {
				return err
			}
		}
		lane := k % len(lanes)
		k++
		if feeds == nil {
			observe(b, lanes[lane], faults[lane])
		} else {
			feeds[lane%len(feeds)] <- dealt{hold(b), lane}
		}
		if after != nil {
			after(b)
		}
		return nil
	})
	for _, f := range feeds {
		close(f)
	}
	wg.Wait()
	if err != nil {
		return nil, err
	}
	broken := make([]error, len(lanes[0]))
	for i := range broken {
		var first fault
		for l := range faults {
			if f := faults[l][i]; f.err != nil && (first.err == nil || f.row < first.row) {
				first = f
			}
		}
		broken[i] = first.err
	}
	return broken, nil
}

// fault is the error of a check's Observe and the first row of the batch
// it failed on.
type fault struct {
	err error
	row int64
}

// hold returns a copy of b that holds its own references to b's arrays, for
// a worker to release when done, since the reader releases b itself.
func hold(b *source.Batch) *source.Batch {
	c := *b
	c.Retain()
	return &c
}

// observe feeds b to every accumulator of one lane that has not failed.
func observe(b *source.Batch, accs []checks.Accumulator, faults []fault) {
	for i, a := range accs {
		if a == nil || faults[i].err != nil {
			continue
		}
		if err := a.Observe(b); err != nil {
			faults[i] = fault{fmt.Errorf("rows %d-%d: %w", b.FirstRow, b.FirstRow+b.Record.NumRows()-1, err), b.FirstRow}
		}
	}
}

// merge folds every lane's accumulators into lane 0's (mergeLanes), check
// by check on workers goroutines, and returns lane 0.
func merge(lanes [][]checks.Accumulator, broken []error, workers int) []checks.Accumulator {
	parallel(len(lanes[0]), workers, func(i int) { mergeLanes(lanes, broken, i) })
	return lanes[0]
}

// mergeLanes folds every lane's accumulator of check i into lane 0's, in
// lane order. A check broken during the scan is not merged; one whose
// Merge fails is marked broken.
func mergeLanes(lanes [][]checks.Accumulator, broken []error, i int) {
	if lanes[0][i] == nil || broken[i] != nil {
		return
	}
	for _, lane := range lanes[1:] {
		if err := lanes[0][i].Merge(lane[i]); err != nil {
			broken[i] = fmt.Errorf("combining the lanes' results: %w", err)
			return
		}
		lane[i] = nil
	}
}

// analysisOrder returns the indices of the plan's checks in the order
// their first passes are merged and analysed (SecondPass): the kinds
// whose analysis takes longest on large data first, in check order within
// a kind, so that the workers, each taking the next check, finish at
// about the same time (longest processing time first: Graham 1969,
// "Bounds on multiprocessing timing anomalies", SIAM J. Appl. Math. 17).
// The order changes no result: each check's merge and analysis are its
// own.
func (pl *plan) analysisOrder() []int {
	order := make([]int, len(pl.checks))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		return analysisRank(pl.checks[b].Rule().Kind) - analysisRank(pl.checks[a].Rule().Kind)
	})
	return order
}

// analysisRank ranks a kind of check by the time its analysis takes on
// many rows, as measured on bench/policy.yaml at 10M rows: a distribution
// fits and tests a sample of up to 10^6 values; key and unique look for
// repeats among every row's hash; a joint rule estimates its center and
// covariance (FAST-MCD on its sample when robust); extremes sort or
// select among a column's values. Other kinds merge and analyse in about
// constant time.
func analysisRank(k rules.Kind) int {
	switch k {
	case rules.KindDistribution:
		return 3
	case rules.KindKey, rules.KindUnique, rules.KindJoint:
		return 2
	case rules.KindExtremes:
		return 1
	}
	return 0
}

// parallel calls f(0) ... f(n-1) on workers goroutines, each taking the
// next i not yet taken.
func parallel(n, workers int, f func(i int)) {
	workers = max(1, min(workers, n))
	if workers == 1 {
		for i := range n {
			f(i)
		}
		return
	}
	var (
		next atomic.Int64
		wg   sync.WaitGroup
	)
	for range workers {
		wg.Go(func() {
			for i := int(next.Add(1)) - 1; i < n; i = int(next.Add(1)) - 1 {
				f(i)
			}
		})
	}
	wg.Wait()
}
