// Package source reads data files (CSV, Parquet, Arrow IPC) as a stream of
// Arrow record batches that keep each row's data-row number and origin.
package source

import (
	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// Batch is a slice of rows from one input file.
//
// Record holds the columns the plan asked for, in the types the policy
// declared (or inferred or physical types where it declared none). The batch
// owns one reference to Record, Text and Codes; whoever receives a Batch
// calls Release when done with it.
type Batch struct {
	Record arrow.RecordBatch
	// Source is the index of the input file in the Set that produced it.
	Source int
	// FirstRow is the 1-based data-row number, across all inputs in order
	// with headers excluded, of the batch's first row.
	FirstRow int64
	// Rows holds the data-row number of each row when the batch was made
	// by selecting rows of another (a subset a check judges apart, see
	// package checks); nil when the rows run on from FirstRow. Read it
	// through Row.
	Rows []int64
	// Lines holds, for text inputs, the 1-based file line on which each row
	// starts; nil for binary inputs.
	Lines []int64
	// Invalid lists, per column index of Record, the cells whose text did not
	// parse as the column's type. Such cells are null in Record; Invalid
	// tells them apart from cells that were missing. Nil when there are none.
	Invalid map[int][]InvalidCell
	// Text holds, for CSV inputs read by Set.ScanText, every cell as written
	// in the file (unquoted, before null tokens and parsing): Text[k] belongs
	// to Record.Column(k). Nil otherwise.
	Text []*array.String
	// Codes holds, per column index of Record, the same values as a string
	// column as dictionary codes, when the reader got them for free: its
	// rows in this batch were all read from one dictionary of a
	// dictionary-encoded Parquet column chunk. Codes[k].Indices() are int32
	// places in Codes[k].Dictionary(), an *array.String, and the codes'
	// nulls are Record.Column(k)'s, so a check may judge each distinct
	// value once instead of once a row. Every batch of one column chunk
	// shares the dictionary's *arrow.ArrayData (Codes[k].Data().Dictionary();
	// Dictionary() makes a new array each call), so a check may keep
	// per-entry verdicts across batches keyed on it, retaining it while it
	// does. Nil, or nil at k, when there are none; Record always holds the
	// column itself.
	Codes []*array.Dictionary
	// Offset is how many bytes of the batch's file the reader had consumed
	// when it made the batch, as stored (compressed bytes for gzip), for
	// progress displays; 0 for Parquet and Arrow inputs.
	Offset int64
}

// InvalidCell is a cell that did not parse as its column's type.
type InvalidCell struct {
	Row  int    // row index within the batch
	Text string // the text as read
}

// Release drops the batch's reference to its record, texts and codes.
func (b *Batch) Release() {
	if b.Record != nil {
		b.Record.Release()
		b.Record = nil
	}
	for _, t := range b.Text {
		t.Release()
	}
	b.Text = nil
	for _, c := range b.Codes {
		if c != nil {
			c.Release()
		}
	}
	b.Codes = nil
}

// Retain adds a reference to the batch's record, texts and codes, for one
// more Release.
func (b *Batch) Retain() {
	b.Record.Retain()
	for _, t := range b.Text {
		t.Retain()
	}
	for _, c := range b.Codes {
		if c != nil {
			c.Retain()
		}
	}
}

// Row returns the 1-based data-row number of row i of the batch.
func (b *Batch) Row(i int) int64 {
	if b.Rows != nil {
		return b.Rows[i]
	}
	return b.FirstRow + int64(i)
}

// Line returns the file line of row i of the batch, or 0 when unknown.
func (b *Batch) Line(i int) int64 {
	if b.Lines == nil || i >= len(b.Lines) {
		return 0
	}
	return b.Lines[i]
}
