// Package checks implements each kind of rule declared in package rules, one
// kind per file. A check is compiled once against the data's schema; each
// run makes fresh accumulators from it.
//
// The seam between checks and data: every accumulator keeps its sufficient
// statistic in exported fields (counts, moments, hash counts) and computes
// its result from those fields alone in Finish. Observe fills them from Arrow
// batches; another source (for example a SQL engine computing the same counts
// with an aggregate query) can fill them directly and call Finish.
package checks

import (
	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// Env is what checks are compiled against.
type Env struct {
	// Schema is the schema of every batch the checks will observe: the data's
	// columns the plan reads, in the order read.
	Schema *arrow.Schema
	// DataColumns names every column of the data, read or not, in file order.
	DataColumns []string
	// Sources names the input files by their index in Batch.Source.
	Sources []string
	// MaxRowsListed caps the offending rows a result lists; counts stay exact.
	MaxRowsListed int
	// Context holds indices into Schema of columns shown beside every listed
	// offending row (the table key's columns), so a person can find the row
	// in their own terms.
	Context []int
	// Policy is the policy the rules come from.
	Policy *rules.Policy
	// Mem allocates the batches checks make from the data's, the rows of
	// a segment (see compileSegmented); nil means memory.DefaultAllocator.
	Mem memory.Allocator
}

// Check is one rule compiled for a schema. It is immutable and may be shared
// by concurrent runs.
type Check interface {
	Rule() *rules.Rule
	NewAccumulator() Accumulator
}

// LaneMaker is implemented by checks whose accumulators of one run share
// state across the run's lanes: NewAccumulators returns n accumulators of
// one run, which must all be merged into one.
type LaneMaker interface {
	NewAccumulators(n int) []Accumulator
}

// Accumulator is one run's state of one check. Observe is called with every
// batch in order; accumulators of the same check that saw disjoint batches
// can be merged; Finish turns the state into a result and judges it.
type Accumulator interface {
	Observe(b *source.Batch) error
	// Merge folds other, which must come from the same Check, into the
	// receiver.
	Merge(other Accumulator) error
	Finish() report.Result
}

// Rescanner is implemented by accumulators that must see the data a second
// time, to flag rows against what they learnt from all of it (duplicates
// found by hash in the first pass, fences fitted on the whole column). After
// the first pass the engine calls SecondPass and feeds every batch again to
// the accumulator it returns; that one's Finish gives the result. SecondPass
// returns nil when what the first pass learnt shows that no row needs
// listing (a distribution that fits); the receiver's own Finish then gives
// the result, and the data is read a second time only if another check
// asks for it.
//
// The engine reads with several workers, each with its own accumulators,
// merged after each pass. So SecondPass may be called several times on the
// merged first-pass accumulator, once per worker: each call returns a fresh
// accumulator, which may share what the first pass learnt (read only, as
// the workers observe side by side), and which merges with the others.
type Rescanner interface {
	Accumulator
	SecondPass() Accumulator
}
