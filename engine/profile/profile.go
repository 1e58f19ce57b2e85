// Package profile reads trusted data once and drafts a policy from what it
// saw: types, null shares, ranges with a margin, small sets of categories,
// the best-fitting distribution family of each numeric column, strong
// pairwise relationships and candidate keys. The draft is YAML text with
// comments, meant to be reviewed and edited, that `assay check` accepts as
// it is and that passes on the data it was drafted from.
//
// Memory does not grow with the rows beyond bounded parts: a seeded
// uniform sample of each numeric column (Options.Sample values), category
// counts up to MaxEnum+1 values per column, and for key candidates a set of
// value hashes per column up to MaxKeyValues (a column with more distinct
// values than that is not offered as a key), and for two-column key
// candidates hashes of value pairs up to MaxComboRows rows.
package profile

import (
	"context"
	"encoding/binary"
	"fmt"
	"hash/fnv"
	"io"
	"math"
	"os"
	"slices"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/checks/bottomk"
	"github.com/assay-project/assay/checks/relate"
	"github.com/assay-project/assay/engine/source"
)

// Thresholds and sizes of the draft. The margins are our own choice
// (common practice for a first draft), documented in the README.
const (
	// DefaultSample is how many values of each numeric column the family
	// fits and rank correlations rest on: a seeded uniform sample of rows
	// beyond it.
	DefaultSample = 20000
	// MaxEnum is the most distinct values a string or integer column may
	// have to be drafted as an enum, and MinEnumCount how often each must
	// have been seen.
	MaxEnum      = 20
	MinEnumCount = 5
	// MaxKeyValues is the most distinct values a key candidate is tracked
	// for.
	MaxKeyValues = 1 << 20
	// MinKeyRows is the fewest rows a column must have to be called a key.
	MinKeyRows = 20
	// MaxComboColumns is how many key-like columns (the first in data
	// order) are tried two by two as a key when no single column is one;
	// each combination is tracked up to MaxComboRows rows.
	MaxComboColumns = 5
	MaxComboRows    = 1 << 17
	// RangeMargin widens the observed range on each side, as a share of it.
	RangeMargin = 0.10
	// StrongCorrelation is the |r| or |rho| from which a pair is drafted.
	StrongCorrelation = 0.8
	// MaxPairColumns caps the numeric columns whose pairs are measured.
	MaxPairColumns = 40
)

// Options tune a draft. The zero value is ready to use.
type Options struct {
	// Source says how to read the inputs.
	Source source.Options
	// Sample is the sample size per numeric column; 0 means
	// DefaultSample.
	Sample int
	// Seed seeds the samples; the same seed and data give the
	// same draft.
	Seed uint64
	// Name is the policy's name; "" means "drafted".
	Name string
	// Data is the `data:` list written into the draft (paths relative to
	// the draft's folder); nil writes none.
	Data []string
}

// column is what a scan learns about one column.
type column struct {
	name    string
	typ     string // the policy's type name; "" when none reads the stored type
	stored  string // the Arrow type as read
	index   int    // in the schema
	nulls   int64
	invalid int64
	n       int64 // non-null, valid values

	// numbers (integer, number; also timestamp and date as seconds and days)
	numeric   bool
	min, max  float64
	nonFinite int64
	sample    *bottomk.Sample

	// categories (string, integer, number, boolean): counts while at most
	// MaxEnum; nil beyond, and for the other types
	counts map[string]int64

	// key candidacy: hashes of the values seen, while all distinct
	keySet   map[uint64]struct{}
	keyState keyState
	// hashes holds the hash of each value of the current batch (0 for a
	// missing one), for the two-column key candidates.
	hashes []uint64

	minLen, maxLen int
}

type keyState int

const (
	keyTracking     keyState = iota // all distinct so far
	keyDuplicate                    // a value repeats
	keyTooMany                      // more than MaxKeyValues values: not judged
	keyNotCandidate                 // float, boolean, or nulls
)

// stats is the whole profile of a table.
type stats struct {
	files []source.File
	rows  int64
	cols  []*column
	// pairs[i][j] for i < j over the numeric columns (indexes into num)
	num   []*column
	pairs [][]relate.Moments
	// stdin is the file standard input was copied to, "" when it was
	// not read.
	stdin string
	// combos are the two-column key candidates.
	combos []*combo
}

// combo tracks whether two columns together are a key: the hashes of
// their value pairs, while all distinct.
type combo struct {
	a, b  *column
	set   map[uint64]struct{}
	state keyState
}

// scan reads the data once and fills the statistics.
func scan(ctx context.Context, paths []string, opts Options) (*stats, error) {
	paths, spooled, err := spoolStdin(paths, opts.Source)
	if spooled != "" {
		defer os.Remove(spooled)
	}
	if err != nil {
		return nil, err
	}
	types := map[string]arrow.DataType{}
	for attempt := 0; ; attempt++ {
		so := opts.Source
		if len(types) > 0 {
			so.Types = types
		}
		set, err := source.Open(paths, so)
		if err != nil {
			return nil, err
		}
		st, err := scanSet(ctx, set, opts)
		if st != nil {
			st.stdin = spooled
		}
		if cerr := set.Close(); err == nil && cerr != nil {
			err = cerr
		}
		if err != nil {
			return nil, err
		}
		// A type inferred from the start of a file that a later cell does
		// not fit is widened (integer to number, else to string) and the
		// data read again: the draft's types must hold on every row.
		widened := false
		for _, c := range st.cols {
			if c.invalid == 0 {
				continue
			}
			widened = true
			if c.typ == "integer" {
				types[c.name] = arrow.PrimitiveTypes.Float64
			} else {
				types[c.name] = arrow.BinaryTypes.String
			}
		}
		if !widened || attempt >= 2 {
			return st, nil
		}
	}
}

// spoolStdin copies standard input ("-" among paths) into a temporary
// file, so that the data can be read again should a type need widening,
// and returns the paths with "-" replaced by that file's.
func spoolStdin(paths []string, so source.Options) ([]string, string, error) {
	if !slices.Contains(paths, "-") {
		return paths, "", nil
	}
	in := so.Stdin
	if in == nil {
		in = os.Stdin
	}
	f, err := os.CreateTemp(so.TempDir, "assay-profile-stdin-*")
	if err != nil {
		return nil, "", fmt.Errorf("copying standard input: %w", err)
	}
	_, err = io.Copy(f, in)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return nil, f.Name(), fmt.Errorf("copying standard input: %w", err)
	}
	out := slices.Clone(paths)
	for i, p := range out {
		if p == "-" {
			out[i] = f.Name()
		}
	}
	return out, f.Name(), nil
}

func scanSet(ctx context.Context, set *source.Set, opts Options) (*stats, error) {
	size := opts.Sample
	if size <= 0 {
		size = DefaultSample
	}
	schema := set.Schema()
	st := &stats{files: set.Files()}
	var names []string
	for i, f := range schema.Fields() {
		c := &column{name: f.Name, index: i, typ: typeName(f.Type), stored: f.Type.String(), min: math.Inf(1), max: math.Inf(-1), minLen: math.MaxInt}
		if c.typ == "string" || c.typ == "integer" || c.typ == "number" || c.typ == "boolean" {
			c.counts = map[string]int64{}
		}
		switch c.typ {
		case "integer", "number", "timestamp", "date":
			c.numeric = true
		}
		if c.typ == "integer" || c.typ == "number" {
			// Every numeric column gets a sample with the same seed, fed
			// every row (NaN for a missing value), so the samples keep the
			// same rows (the keys depend on the seed and the row number
			// alone) and pairs can be read across them.
			r, err := bottomk.New(size, 1, opts.Seed)
			if err != nil {
				return nil, err
			}
			c.sample = r
			if len(st.num) < MaxPairColumns {
				st.num = append(st.num, c)
			}
		}
		switch c.typ {
		case "integer", "string", "date", "timestamp":
			c.keySet = map[uint64]struct{}{}
		default:
			c.keyState = keyNotCandidate
		}
		st.cols = append(st.cols, c)
		names = append(names, f.Name)
	}
	var keyLike []*column
	for _, c := range st.cols {
		if c.keyState == keyTracking && len(keyLike) < MaxComboColumns {
			keyLike = append(keyLike, c)
		}
	}
	for i, a := range keyLike {
		for _, b := range keyLike[i+1:] {
			st.combos = append(st.combos, &combo{a: a, b: b, set: map[uint64]struct{}{}})
		}
	}
	st.pairs = make([][]relate.Moments, len(st.num))
	for i := range st.pairs {
		st.pairs[i] = make([]relate.Moments, len(st.num))
	}
	vals := make([][]float64, len(st.cols))
	err := set.Scan(ctx, names, func(b *source.Batch) error {
		defer b.Release()
		rows := int(b.Record.NumRows())
		st.rows += int64(rows)
		for k, c := range st.cols {
			c.invalid += int64(len(b.Invalid[k]))
			vals[k] = c.observe(b.FirstRow, b.Record.Column(k), vals[k][:0])
		}
		st.observePairs(vals, rows)
		st.observeCombos(rows)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return st, nil
}

// observe adds a batch's array, whose data begin at row first, to the
// column, and returns its values as float64 (NaN for missing) for numeric
// columns.
func (c *column) observe(first int64, a arrow.Array, out []float64) []float64 {
	rows := a.Len()
	c.nulls += int64(a.NullN())
	c.n += int64(rows - a.NullN())
	if c.nulls > 0 && c.keyState == keyTracking {
		c.dropKey(keyNotCandidate)
	}
	h := fnv.New64a()
	hashed := c.keyState != keyNotCandidate
	c.hashes = c.hashes[:0]
	for i := range rows {
		if a.IsNull(i) {
			if c.numeric {
				out = append(out, math.NaN())
			}
			if hashed {
				c.hashes = append(c.hashes, 0)
			}
			continue
		}
		var text string
		v := math.NaN()
		switch a := a.(type) {
		case *array.Int64:
			v = float64(a.Value(i))
			text = strconv.FormatInt(a.Value(i), 10)
		case *array.Float64:
			v = a.Value(i)
			if c.counts != nil {
				text = strconv.FormatFloat(v, 'g', -1, 64)
			}
		case *array.String:
			text = a.Value(i)
			l := len([]rune(text))
			c.minLen, c.maxLen = min(c.minLen, l), max(c.maxLen, l)
		case *array.Boolean:
			text = strconv.FormatBool(a.Value(i))
		case *array.Timestamp:
			v = float64(a.Value(i)) / 1e6
			text = strconv.FormatInt(int64(a.Value(i)), 10)
		case *array.Date32:
			v = float64(a.Value(i)) * 86400
			text = strconv.FormatInt(int64(a.Value(i)), 10)
		}
		if c.numeric {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				c.nonFinite++
			} else {
				c.min, c.max = math.Min(c.min, v), math.Max(c.max, v)
			}
			out = append(out, v)
		}
		if c.counts != nil {
			c.counts[text]++
			if len(c.counts) > MaxEnum {
				c.counts = nil
			}
		}
		if hashed {
			h.Reset()
			h.Write([]byte(text))
			c.hashes = append(c.hashes, h.Sum64())
		}
		if c.keyState == keyTracking {
			k := c.hashes[i]
			if _, dup := c.keySet[k]; dup {
				c.dropKey(keyDuplicate)
			} else if len(c.keySet) >= MaxKeyValues {
				c.dropKey(keyTooMany)
			} else {
				c.keySet[k] = struct{}{}
			}
		}
	}
	if c.sample != nil {
		c.sample.OfferRun(first, out)
	}
	return out
}

// observeCombos adds the batch's rows to the two-column key candidates.
// A candidate is dropped at its first repeated or missing value pair, or
// past MaxComboRows rows.
func (st *stats) observeCombos(rows int) {
	for _, k := range st.combos {
		if k.state != keyTracking {
			continue
		}
		if k.a.nulls > 0 || k.b.nulls > 0 || k.a.keyState == keyNotCandidate || k.b.keyState == keyNotCandidate {
			k.drop(keyNotCandidate)
			continue
		}
		h := fnv.New64a()
		buf := make([]byte, 16)
		for r := range rows {
			binary.LittleEndian.PutUint64(buf, k.a.hashes[r])
			binary.LittleEndian.PutUint64(buf[8:], k.b.hashes[r])
			h.Reset()
			h.Write(buf)
			v := h.Sum64()
			if _, dup := k.set[v]; dup {
				k.drop(keyDuplicate)
				break
			}
			if len(k.set) >= MaxComboRows {
				k.drop(keyTooMany)
				break
			}
			k.set[v] = struct{}{}
		}
	}
}

func (k *combo) drop(s keyState) {
	k.state = s
	k.set = nil
}

func (c *column) dropKey(s keyState) {
	c.keyState = s
	c.keySet = nil
}

// observePairs adds the batch's complete pairs of numeric columns to their
// moments.
func (st *stats) observePairs(vals [][]float64, rows int) {
	for i, a := range st.num {
		x := vals[a.index]
		for j := i + 1; j < len(st.num); j++ {
			y := vals[st.num[j].index]
			m := &st.pairs[i][j]
			for r := range rows {
				if finite(x[r]) && finite(y[r]) {
					m.Add(x[r], y[r])
				}
			}
		}
	}
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// typeName is the policy's name of a column type the reader produces, or
// "" for a type of a Parquet or Arrow file that no policy type reads.
func typeName(t arrow.DataType) string {
	switch {
	case arrow.TypeEqual(t, arrow.PrimitiveTypes.Int64):
		return "integer"
	case arrow.TypeEqual(t, arrow.PrimitiveTypes.Float64):
		return "number"
	case arrow.TypeEqual(t, arrow.FixedWidthTypes.Boolean):
		return "boolean"
	case arrow.TypeEqual(t, arrow.FixedWidthTypes.Timestamp_us):
		return "timestamp"
	case arrow.TypeEqual(t, arrow.FixedWidthTypes.Date32):
		return "date"
	case arrow.TypeEqual(t, arrow.BinaryTypes.String):
		return "string"
	}
	return "" // a stored type a policy cannot declare (uint64, decimal, ...)
}

// sortedCounts returns the categories by descending count, then by text.
func (c *column) sortedCounts() []string {
	keys := make([]string, 0, len(c.counts))
	for k := range c.counts {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b string) int {
		if c.counts[a] != c.counts[b] {
			if c.counts[a] > c.counts[b] {
				return -1
			}
			return 1
		}
		if a < b {
			return -1
		}
		if a > b {
			return 1
		}
		return 0
	})
	return keys
}
