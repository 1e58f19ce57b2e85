package checks

import (
	"container/heap"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
)

// Offenders counts the rows that break a rule exactly and keeps the Limit
// worst of them (highest score; among equal scores the earliest rows), in
// memory bounded by Limit.
type Offenders struct {
	Limit int
	Count int64
	kept  rowHeap
}

// Add counts one offending row. score says how far off it is (higher is
// worse); row is called only when the row is kept for the listing.
func (o *Offenders) Add(score float64, rowNum int64, row func() report.Row) {
	o.Count++
	if o.Limit <= 0 {
		return
	}
	if math.IsNaN(score) {
		score = math.Inf(1)
	}
	if len(o.kept) < o.Limit {
		r := row()
		r.Score = report.Number(score)
		heap.Push(&o.kept, r)
		return
	}
	least := o.kept[0]
	if !worse(score, rowNum, float64(least.Score), least.Row) {
		return
	}
	r := row()
	r.Score = report.Number(score)
	o.kept[0] = r
	heap.Fix(&o.kept, 0)
}

// Merge folds p's counts and kept rows into o.
func (o *Offenders) Merge(p *Offenders) {
	count := o.Count + p.Count
	for _, r := range p.kept {
		o.Add(float64(r.Score), r.Row, func() report.Row { return r })
	}
	o.Count = count
}

// Report returns the count and the kept rows, worst first; nil when no row
// offended.
func (o *Offenders) Report() *report.Offending {
	if o.Count == 0 {
		return nil
	}
	rows := append([]report.Row(nil), o.kept...)
	sort.Slice(rows, func(i, j int) bool {
		return worse(float64(rows[i].Score), rows[i].Row, float64(rows[j].Score), rows[j].Row)
	})
	return &report.Offending{Count: o.Count, Rows: rows}
}

// offending is the listing of a result whose exact count of offending rows
// is count: o's kept rows, worst first; nil when count is 0. count may
// differ from o.Count when the count was filled in from elsewhere (see the
// package doc) and o kept no rows.
func offending(count int64, o *Offenders) *report.Offending {
	if count == 0 {
		return nil
	}
	rows := []report.Row{}
	if r := o.Report(); r != nil {
		rows = r.Rows
	}
	return &report.Offending{Count: count, Rows: rows}
}

// worse orders offending rows: higher score first, then lower row number.
func worse(s1 float64, r1 int64, s2 float64, r2 int64) bool {
	if s1 != s2 {
		return s1 > s2
	}
	return r1 < r2
}

// rowHeap is a min-heap of kept rows: its root is the least bad row kept.
type rowHeap []report.Row

func (h rowHeap) Len() int { return len(h) }
func (h rowHeap) Less(i, j int) bool {
	return worse(float64(h[j].Score), h[j].Row, float64(h[i].Score), h[i].Row)
}
func (h rowHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *rowHeap) Push(x any)   { *h = append(*h, x.(report.Row)) }
func (h *rowHeap) Pop() any {
	old := *h
	r := old[len(old)-1]
	*h = old[:len(old)-1]
	return r
}

// RowAt describes row i of batch b for a listing: its numbers and the values
// of the columns at indices cols (of b.Record).
func RowAt(env *Env, b *source.Batch, i int, cols []int) report.Row {
	r := report.Row{
		Row:    b.Row(i),
		Line:   b.Line(i),
		Values: make(map[string]any, len(cols)+len(env.Context)),
	}
	r.Source = sourceName(env, b.Source)
	for _, c := range cols {
		r.Values[b.Record.ColumnName(c)] = cellValue(b, c, i)
	}
	for _, c := range env.Context {
		r.Values[b.Record.ColumnName(c)] = cellValue(b, c, i)
	}
	return r
}

// sourceName names input file i for a listing, when there are several.
func sourceName(env *Env, i int) string {
	if len(env.Sources) > 1 && i < len(env.Sources) {
		return env.Sources[i]
	}
	return ""
}

// cellValue is the value of one cell as a report shows it: nil for a
// missing value, the text as read for a value that did not parse.
func cellValue(b *source.Batch, col, i int) any {
	for _, bad := range b.Invalid[col] {
		if bad.Row == i {
			return bad.Text
		}
	}
	return Value(b.Record.Column(col), i)
}

// Value returns element i of arr as a plain Go value for reports: nil, bool,
// int64, float64 (NaN and ±Inf as their names), or string (timestamps and
// dates in RFC 3339). Strings are copied: Arrow's point into the batch's
// buffers, which are released after the batch.
func Value(arr arrow.Array, i int) any {
	if arr.IsNull(i) {
		return nil
	}
	switch a := arr.(type) {
	case *array.Float64:
		return float(a.Value(i))
	case *array.Float32:
		return float(float64(a.Value(i)))
	case *array.Int64:
		return a.Value(i)
	case *array.Int32:
		return int64(a.Value(i))
	case *array.Int16:
		return int64(a.Value(i))
	case *array.Int8:
		return int64(a.Value(i))
	case *array.Uint32:
		return int64(a.Value(i))
	case *array.Uint16:
		return int64(a.Value(i))
	case *array.Uint8:
		return int64(a.Value(i))
	case *array.Boolean:
		return a.Value(i)
	case *array.Timestamp:
		return timeText(a.DataType(), int64(a.Value(i)))
	case *array.Date32:
		return timeText(a.DataType(), int64(a.Value(i)))
	case *array.Date64:
		return timeText(a.DataType(), int64(a.Value(i)))
	case interface{ Value(int) string }:
		return strings.Clone(a.Value(i))
	}
	return arr.ValueStr(i)
}

// float is f for a report: its name when JSON has no literal for it.
func float(f float64) any {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return strconv.FormatFloat(f, 'g', -1, 64)
	}
	return f
}

// timeText writes value v of a timestamp or date type dt: RFC 3339 with the
// type's time zone (no offset when the type has none), YYYY-MM-DD for dates.
func timeText(dt arrow.DataType, v int64) string {
	switch t := dt.(type) {
	case *arrow.TimestampType:
		tm := arrow.Timestamp(v).ToTime(t.Unit)
		if t.TimeZone == "" {
			return tm.Format("2006-01-02T15:04:05.999999999")
		}
		if loc, err := t.GetZone(); err == nil {
			tm = tm.In(loc)
		}
		return tm.Format(time.RFC3339Nano)
	case *arrow.Date32Type:
		return arrow.Date32(v).FormattedString()
	case *arrow.Date64Type:
		return arrow.Date64(v).FormattedString()
	}
	return strconv.FormatInt(v, 10)
}
