package engine

import (
	"cmp"
	"fmt"
	"slices"
	"sort"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// plan is a policy bound to the columns of one data set: the compiled
// checks, the columns they read, and the rules that cannot apply.
type plan struct {
	checks  []checks.Check
	columns []string        // the data columns read, in data order
	skipped []report.Result // rules on absent required columns
	rank    map[string]int  // rule id -> position in the policy
	// inferred marks, by index into columns, the columns read as the type
	// inferred from the start of a CSV file, the policy declaring none. No
	// type rule counts a later cell of such a column that does not fit, so
	// the run stops on it (see refuseUntyped) rather than lose it.
	inferred map[int]bool
	// context holds the indices into columns of the table key's columns,
	// which listed offending rows show.
	context []int
}

// newPlan binds p to the data's schema. It reports every rule that names a
// column the data lacks (unless the column is listed as required, which
// makes it a verdict instead) and every rule that does not compile for the
// data's types, all at once.
func newPlan(p *rules.Policy, set *source.Set, opts Options) (*plan, error) {
	schema := set.Schema()
	data := make([]string, schema.NumFields())
	present := make(map[string]bool, len(data))
	for i, f := range schema.Fields() {
		data[i] = f.Name
		present[f.Name] = true
	}
	required := map[string]bool{}
	for _, r := range p.Rules {
		if r.Kind == rules.KindRequired {
			for _, c := range r.Columns {
				required[c] = true
			}
		}
	}

	pl := &plan{rank: make(map[string]int, len(p.Rules))}
	var problems []problem
	needed := map[string]bool{}
	var bound []*rules.Rule
	for i, r := range p.Rules {
		pl.rank[r.ID] = i
		if r.Kind == rules.KindRequired || r.Kind == rules.KindClosed {
			bound = append(bound, r)
			continue
		}
		var absent []string
		for _, c := range r.Reads() {
			if !present[c] {
				absent = append(absent, c)
			}
		}
		switch {
		case len(absent) == 0:
			for _, c := range r.Reads() {
				needed[c] = true
			}
			bound = append(bound, r)
		case allRequired(absent, required):
			res := checks.NewResult(r, 0)
			res.Status = report.Skipped
			res.Verdict = report.Pass
			res.Message = fmt.Sprintf("required column %s is absent from the data", quoteList(absent))
			pl.skipped = append(pl.skipped, res)
		default:
			for _, c := range absent {
				if required[c] {
					continue
				}
				msg := fmt.Sprintf("%s: rule %s: column %q is not in the data", r.Pos, r.ID, c)
				if s := rules.Suggest(c, data); s != "" {
					msg += fmt.Sprintf(" (did you mean %q?)", s)
				}
				problems = append(problems, problem{r.Pos, msg})
			}
		}
	}
	for _, c := range p.Columns {
		if !present[c.Name] && !required[c.Name] {
			msg := fmt.Sprintf("%s: column %q is declared but not in the data", c.Pos, c.Name)
			if s := rules.Suggest(c.Name, data); s != "" {
				msg += fmt.Sprintf(" (did you mean %q?)", s)
			}
			problems = append(problems, problem{c.Pos, msg})
		}
	}

	context := keyColumns(p, present)
	if len(needed) > 0 {
		for _, c := range context {
			needed[c] = true
		}
	}
	var (
		fields []arrow.Field
		ctx    []int
	)
	for i, name := range data {
		if needed[name] {
			if slices.Contains(context, name) {
				ctx = append(ctx, len(fields))
			}
			pl.columns = append(pl.columns, name)
			fields = append(fields, schema.Field(i))
		}
	}
	pl.context = ctx
	declared := sourceOptions(p, opts.Source).Types
	for k, name := range pl.columns {
		if declared[name] == nil {
			if pl.inferred == nil {
				pl.inferred = map[int]bool{}
			}
			pl.inferred[k] = true
		}
	}
	env := &checks.Env{
		Schema:        arrow.NewSchema(fields, nil),
		DataColumns:   data,
		Sources:       sourceNames(set),
		MaxRowsListed: maxRowsListed(opts.MaxRowsListed),
		Context:       ctx,
		Policy:        p,
		Mem:           opts.Source.Allocator,
	}
	for _, r := range bound {
		c, err := checks.Compile(r, env)
		if err != nil {
			problems = append(problems, problem{r.Pos, err.Error()})
			continue
		}
		pl.checks = append(pl.checks, c)
	}
	if len(problems) > 0 {
		return nil, &MismatchError{Policy: p.File, Problems: sortedMessages(problems)}
	}
	return pl, nil
}

// problem is one way the policy does not fit the data, placed in the policy.
type problem struct {
	pos rules.Pos
	msg string
}

// sortedMessages returns the problems' messages in policy order, without
// repeats.
func sortedMessages(problems []problem) []string {
	slices.SortStableFunc(problems, func(a, b problem) int {
		return cmp.Or(cmp.Compare(a.pos.Line, b.pos.Line), cmp.Compare(a.pos.Col, b.pos.Col))
	})
	msgs := make([]string, len(problems))
	for i, pr := range problems {
		msgs[i] = pr.msg
	}
	return slices.Compact(msgs)
}

// MismatchError lists every way a policy does not fit the data it was given
// or, from Validate, the types it declares.
type MismatchError struct {
	Policy   string
	Problems []string
	NoData   bool // found by Validate, before any data
}

func (e *MismatchError) Error() string {
	var b strings.Builder
	what := "does not fit the data"
	if e.NoData {
		what = "does not fit its declared types"
	}
	fmt.Fprintf(&b, "policy %s %s (%d problem", e.Policy, what, len(e.Problems))
	if len(e.Problems) != 1 {
		b.WriteString("s")
	}
	b.WriteString("):")
	for _, p := range e.Problems {
		b.WriteString("\n  ")
		b.WriteString(p)
	}
	return b.String()
}

// order sorts results into the policy's rule order.
func (pl *plan) order(results []report.Result) {
	sort.SliceStable(results, func(i, j int) bool { return pl.rank[results[i].ID] < pl.rank[results[j].ID] })
}

// keyColumns returns the table key's columns that the data has: listed
// offending rows show them so a person can find each row in their own terms.
func keyColumns(p *rules.Policy, present map[string]bool) []string {
	var out []string
	for _, r := range p.Rules {
		if r.Kind != rules.KindKey {
			continue
		}
		for _, c := range r.Columns {
			if present[c] {
				out = append(out, c)
			}
		}
	}
	return out
}

func allRequired(cols []string, required map[string]bool) bool {
	for _, c := range cols {
		if !required[c] {
			return false
		}
	}
	return true
}

func quoteList(cols []string) string {
	q := make([]string, len(cols))
	for i, c := range cols {
		q[i] = fmt.Sprintf("%q", c)
	}
	return strings.Join(q, ", ")
}

func sourceNames(set *source.Set) []string {
	files := set.Files()
	names := make([]string, len(files))
	for i, f := range files {
		names[i] = f.Path
	}
	return names
}

func maxRowsListed(n int) int {
	switch {
	case n == 0:
		return DefaultMaxRowsListed
	case n < 0:
		return 0
	}
	return n
}

// refuseUntyped returns an error naming the first cell of b, in a column
// without a declared type, that does not fit the type the reader inferred
// for it; nil when there is none. Such a cell is null in the batch and no
// type rule counts it: without this, a rule on the column would judge the
// other rows and pass in silence.
func (pl *plan) refuseUntyped(b *source.Batch, files []source.File) error {
	for k := range pl.columns {
		cells := b.Invalid[k]
		if !pl.inferred[k] || len(cells) == 0 {
			continue
		}
		cell := cells[0]
		e := &source.Error{Path: files[b.Source].Path, Column: pl.columns[k]}
		if b.Lines != nil {
			e.Line = b.Lines[cell.Row]
		}
		t := b.Record.Schema().Field(k).Type
		e.Msg = fmt.Sprintf("column %q: %q does not fit the type %s inferred from the first rows of the file; "+
			"declare the column's type in the policy (its type rule then counts such cells)", pl.columns[k], cell.Text, typeWord(t))
		return e
	}
	return nil
}

// typeWord names an Arrow type a reader infers in the policy's words.
func typeWord(t arrow.DataType) string {
	switch t.ID() {
	case arrow.INT64:
		return "integer"
	case arrow.FLOAT64:
		return "number"
	case arrow.BOOL:
		return "boolean"
	case arrow.TIMESTAMP:
		return "timestamp"
	case arrow.DATE32:
		return "date"
	case arrow.STRING:
		return "string"
	}
	return t.String()
}

// sourceOptions merges the policy's reader settings over the caller's and
// adds the declared column types.
func sourceOptions(p *rules.Policy, o source.Options) source.Options {
	in := p.Input
	if in.Delimiter != 0 {
		o.Delimiter = in.Delimiter
	}
	if in.Quote != 0 {
		o.Quote = in.Quote
	}
	if in.NoQuote {
		o.NoQuote = true
	}
	if in.NoHeader {
		o.NoHeader = true
	}
	if in.NullsSet {
		o.Nulls = append([]string{}, in.Nulls...)
	}
	types := make(map[string]arrow.DataType, len(o.Types)+len(p.Columns))
	for k, v := range o.Types {
		types[k] = v
	}
	for _, c := range p.Columns {
		if t := ArrowType(c.Type); t != nil {
			types[c.Name] = t
		}
	}
	o.Types = types
	return o
}

// ArrowType is the Arrow type a declared column type is read as; nil for
// TypeAny.
func ArrowType(t rules.Type) arrow.DataType {
	switch t {
	case rules.TypeInteger:
		return arrow.PrimitiveTypes.Int64
	case rules.TypeNumber:
		return arrow.PrimitiveTypes.Float64
	case rules.TypeString:
		return arrow.BinaryTypes.String
	case rules.TypeBoolean:
		return arrow.FixedWidthTypes.Boolean
	case rules.TypeTimestamp:
		return &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}
	case rules.TypeDate:
		return arrow.FixedWidthTypes.Date32
	}
	return nil
}
