package source

import (
	"compress/gzip"
	"context"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// maxBatchBytes bounds the text of one string column in a batch, below the
// 2 GiB that int32 offsets address.
const maxBatchBytes = 1 << 30

// csvFile is an open CSV input positioned after its header.
type csvFile struct {
	in   *input
	f    *os.File
	gz   *gzip.Reader
	sp   *splitter
	rows int64 // data rows read so far
	size int64 // bytes in the file
	read *counter
}

// counter counts the bytes read through it.
type counter struct {
	r io.Reader
	n int64
}

func (c *counter) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// openCSV opens in, ready to read its first record.
func (s *Set) openCSV(in *input) (*csvFile, error) {
	f, size, err := openFile(in)
	if err != nil {
		return nil, err
	}
	c := &csvFile{in: in, f: f, size: size, read: &counter{r: f}}
	var r io.Reader = c.read
	bufSize := s.opts.bufferSize
	if bufSize == 0 {
		bufSize = defaultBufferSize
	}
	if in.Gzip {
		c.gz, err = gzip.NewReader(c.read)
		if err != nil {
			c.close()
			return nil, &Error{Path: in.name, Err: err,
				Msg: "cannot read the gzip data: " + err.Error() + " (the file is damaged or cut short; copy it again)"}
		}
		r = c.gz
	} else if size+1 < int64(bufSize) {
		bufSize = int(size + 1) // a small file needs no large buffer
	}
	c.sp = newSplitter(r, byte(s.opts.Delimiter), byte(s.opts.Quote), !s.opts.NoQuote, bufSize)
	if err := c.sp.skipBOM(); err != nil {
		c.close()
		return nil, c.locate(err, 0)
	}
	return c, nil
}

func (c *csvFile) close() {
	if c.gz != nil {
		_ = c.gz.Close()
	}
	_ = c.f.Close()
}

// first reads the first record, the header unless noHeader.
func (c *csvFile) first(noHeader bool) error {
	row := int64(0)
	if noHeader {
		row = 1
	}
	ok, err := c.sp.next()
	if err != nil {
		return c.locate(err, row)
	}
	if !ok {
		what := "the file holds only blank lines"
		if c.in.Gzip {
			what = "the compressed file holds no text"
		}
		if noHeader {
			return errorf(c.in.name, "no rows: %s", what)
		}
		return errorf(c.in.name, "no header line: %s", what)
	}
	return nil
}

// record reads the next data record into c.sp.fields and checks its width;
// it returns false at the end of the file.
func (c *csvFile) record(width int, noHeader bool) (bool, error) {
	ok, err := c.sp.next()
	if err != nil {
		return false, c.locate(err, c.rows+1)
	}
	if !ok {
		return false, nil
	}
	c.rows++
	return true, c.checkWidth(width, noHeader)
}

// checkWidth checks that the current record has width fields.
func (c *csvFile) checkWidth(width int, noHeader bool) error {
	if n := len(c.sp.fields); n != width {
		against := "the header has"
		if noHeader {
			against = "the first row has"
		}
		return &Error{Path: c.in.name, Line: c.sp.recLine, Row: c.rows, Msg: fmt.Sprintf(
			"row %d has %s, %s %d (check the delimiter and quoting)", c.rows, fields(n), against, width)}
	}
	return nil
}

// fields says "1 field" or "n fields".
func fields(n int) string {
	if n == 1 {
		return "1 field"
	}
	return fmt.Sprintf("%d fields", n)
}

// locate turns a splitter error at data row row (0: the header) into an
// *Error.
func (c *csvFile) locate(err error, row int64) error {
	var se *splitError
	if !errors.As(err, &se) {
		return err
	}
	e := &Error{Path: c.in.name, Line: se.line, Row: row, Err: se.err}
	where := "header"
	if row > 0 {
		where = fmt.Sprintf("row %d", row)
	}
	if se.field >= 0 {
		if se.field < len(c.in.names) {
			e.Column = c.in.names[se.field]
			where += fmt.Sprintf(", column %q", e.Column)
		} else {
			where += fmt.Sprintf(", column %d", se.field+1)
		}
	}
	e.Msg = where + ": " + se.msg
	return e
}

// inspectCSV reads the header of a CSV input and infers its column types
// from its first SampleRows rows.
func (s *Set) inspectCSV(in *input) error {
	c, err := s.openCSV(in)
	if err != nil {
		return err
	}
	defer c.close()
	if err := c.first(s.opts.NoHeader); err != nil {
		return err
	}
	width := len(c.sp.fields)
	fit := make([]uint8, width)
	for j := range fit {
		fit[j] = fitAll
	}
	sample := func() {
		for j, f := range c.sp.fields {
			if b := c.sp.field(f); !s.nulls.has(b) {
				fit[j] &= fits(b)
			}
		}
	}
	if s.opts.NoHeader {
		in.names = columnNames(width)
		c.rows = 1
		sample()
	} else {
		in.names = make([]string, width)
		for j, f := range c.sp.fields {
			in.names[j] = string(c.sp.field(f))
		}
		if err := checkNames(in, c.sp.recLine); err != nil {
			return err
		}
	}
	for c.rows < int64(s.opts.SampleRows) {
		ok, err := c.record(width, s.opts.NoHeader)
		if err != nil {
			return err
		}
		if !ok {
			break
		}
		sample()
	}
	in.types = make([]arrow.DataType, width)
	for j := range fit {
		in.types[j] = inferKind(fit[j]).dataType()
	}
	return nil
}

// scanCSV reads input i in batches of BatchRows rows. The fields of skipped
// columns are split out of each record but not converted; only the length
// of a skipped string column's text is counted, so that batches end where
// Scan ends them.
func (s *Set) scanCSV(ctx context.Context, i int, sc *scan, first int64) (int64, error) {
	in := s.inputs[i]
	c, err := s.openCSV(in)
	if err != nil {
		return 0, err
	}
	defer c.close()
	width := len(in.names)
	noHeader := s.opts.NoHeader
	pending := false // the first record, read already, is data
	if err := c.first(noHeader); err != nil {
		return 0, err
	}
	if noHeader {
		c.rows, pending = 1, true
		if err := c.checkWidth(width, true); err != nil {
			return 0, err
		}
	}

	batchRows := s.opts.BatchRows
	capRows := batchRows // rows in a batch
	if !in.Gzip {
		// A row takes at least one byte per field, so a small file needs
		// small buffers.
		capRows = int(min(int64(batchRows), c.size/int64(max(width, 1))+1))
	}
	if workers := s.parseWorkers(); workers > 1 && !noHeader {
		done, err := s.scanCSVParallel(ctx, i, sc, first, c, capRows, workers)
		if done || err != nil {
			return c.rows, err
		}
		// The text from c.sp on is read as below.
	}
	b := s.newCSVBatch(in, sc, capRows)
	for done := false; !done; {
		if err := ctx.Err(); err != nil {
			return c.rows, err
		}
		b.start()
		for !b.full() {
			if !pending {
				ok, err := c.record(width, noHeader)
				if err != nil {
					b.release()
					return c.rows, err
				}
				if !ok {
					done = true
					break
				}
			}
			pending = false
			b.add(c.sp)
		}
		if len(b.lines) == 0 {
			b.release()
			break
		}
		bt := b.finish(i, first+c.rows-int64(len(b.lines)), c.read.n)
		err := sc.fn(bt)
		bt.Release()
		if err != nil {
			return c.rows, err
		}
	}
	return c.rows, nil
}

// csvBatch builds batches from the records of one CSV input, keeping its
// column buffers' size guesses from batch to batch.
type csvBatch struct {
	s       *Set
	sc      *scan
	capRows int
	cols    []*column // by column of the batches; nil when skipped
	slots   []*column // by position in the file; nil when not read
	// With ScanText, raw[k] keeps the cells of cols[k] as written: a string
	// column with no null token.
	raw, rawSlots []*column
	skipped       []skippedText
	texts         []*column // the string columns, read or raw
	lines         []int64   // of the batch under way

	// The fields of records gathered by gather and not converted yet,
	// record after record.
	pending []span
}

func (s *Set) newCSVBatch(in *input, sc *scan, capRows int) *csvBatch {
	width := len(in.names)
	b := &csvBatch{s: s, sc: sc, capRows: capRows, cols: make([]*column, len(sc.proj)), slots: make([]*column, width)}
	for k, c := range sc.proj {
		kd, _ := kindOf(sc.schema.Field(k).Type)
		if sc.skipped(k) {
			if kd == kString {
				b.skipped = append(b.skipped, skippedText{pos: in.pos[c]})
			}
			continue
		}
		b.cols[k] = newColumn(kd, s.nulls, s.opts.Allocator)
		b.slots[in.pos[c]] = b.cols[k]
		if kd == kString {
			b.texts = append(b.texts, b.cols[k])
		}
	}
	if s.text {
		b.raw, b.rawSlots = make([]*column, len(sc.proj)), make([]*column, width)
		verbatim := newNullSet(nil)
		for k, c := range sc.proj {
			b.raw[k] = newColumn(kString, verbatim, s.opts.Allocator)
			b.rawSlots[in.pos[c]] = b.raw[k]
		}
		b.texts = append(b.texts, b.raw...)
	}
	return b
}

// start readies the buffers of a batch.
func (b *csvBatch) start() {
	for _, col := range b.cols {
		if col != nil {
			col.start(b.capRows)
		}
	}
	for _, col := range b.raw {
		col.start(b.capRows)
	}
	for k := range b.skipped {
		b.skipped[k].dlen = 0
	}
	b.lines = make([]int64, 0, b.capRows)
	b.pending = b.pending[:0]
}

// full reports whether the batch has all the rows, or all the text, it
// may take.
func (b *csvBatch) full() bool {
	return len(b.lines) >= b.capRows || full(b.texts, b.skipped)
}

// add appends the record sp holds.
func (b *csvBatch) add(sp *splitter) {
	buf, slots := sp.buf, b.slots[:len(sp.fields)]
	for j, f := range sp.fields {
		if col := slots[j]; col != nil {
			col.append(buf[f.start:f.end])
		}
	}
	if b.raw != nil {
		for j, f := range sp.fields {
			if col := b.rawSlots[j]; col != nil {
				col.append(buf[f.start:f.end])
			}
		}
	}
	for k := range b.skipped {
		sk := &b.skipped[k]
		if cell := sp.field(sp.fields[sk.pos]); !b.s.nulls.has(cell) {
			sk.dlen += len(cell)
		}
	}
	b.lines = append(b.lines, sp.recLine)
}

// gatherRows is how many records gather keeps before flush converts them.
const gatherRows = 64

// gather keeps the fields of the record sp holds, to be converted by flush
// with those of the records gathered before it, column by column: the
// loop over a column's cells takes the same branches cell after cell,
// where add changes column, and so cell grammar, at every cell. The fields
// are slices of sp's text, so gather serves only where that text stays in
// place until flush: a piece of parallel parsing. A batch's cells are
// counted in the text limit of full only once flushed; a piece, at most
// maxPieceBytes, cannot reach it.
func (b *csvBatch) gather(sp *splitter) {
	b.pending = append(b.pending, sp.fields...)
	b.lines = append(b.lines, sp.recLine)
	if len(b.pending) >= gatherRows*len(sp.fields) {
		b.flush(sp.buf, len(sp.fields))
	}
}

// flush converts the records gathered, each of width fields of buf.
func (b *csvBatch) flush(buf []byte, width int) {
	cells := b.pending
	if len(cells) == 0 {
		return
	}
	for j := range width {
		col := b.slots[j]
		var raw *column
		if b.raw != nil {
			raw = b.rawSlots[j]
		}
		switch {
		case raw == nil && col == nil:
			continue
		case raw == nil:
			col.appendCells(buf, cells[j:], width)
			continue
		}
		for k := j; k < len(cells); k += width {
			cell := buf[cells[k].start:cells[k].end]
			if col != nil {
				col.append(cell)
			}
			if raw != nil {
				raw.append(cell)
			}
		}
	}
	for k := range b.skipped {
		sk := &b.skipped[k]
		for r := sk.pos; r < len(cells); r += width {
			if cell := buf[cells[r].start:cells[r].end]; !b.s.nulls.has(cell) {
				sk.dlen += len(cell)
			}
		}
	}
	b.pending = cells[:0]
}

// finish makes the batch of the rows added, the first of them data row
// firstRow, of input i.
func (b *csvBatch) finish(i int, firstRow, offset int64) *Batch {
	n := len(b.lines)
	schema := b.sc.schema
	arrs := make([]arrow.Array, len(b.cols))
	var invalid map[int][]InvalidCell
	for k, col := range b.cols {
		if col == nil {
			arrs[k] = b.sc.nulls.get(schema.Field(k).Type, n)
			continue
		}
		if col.invalid != nil {
			if invalid == nil {
				invalid = make(map[int][]InvalidCell)
			}
			invalid[k] = col.invalid
		}
		arrs[k] = col.finish()
	}
	bt := &Batch{
		Record:   array.NewRecordBatch(schema, arrs, int64(n)),
		Source:   i,
		FirstRow: firstRow,
		Lines:    b.lines,
		Invalid:  invalid,
		Offset:   offset,
	}
	for _, col := range b.raw {
		bt.Text = append(bt.Text, col.finish().(*array.String))
	}
	for _, a := range arrs {
		a.Release()
	}
	b.lines = nil
	return bt
}

// release lets go of the buffers of the batch under way.
func (b *csvBatch) release() {
	releaseColumns(b.cols, b.raw)
	b.lines = nil
}

// skippedText counts the text of a skipped string column in a batch.
type skippedText struct {
	pos  int // the column's position in the file
	dlen int // bytes of its cells that are not null tokens, as a column's dlen
}

// full reports whether a string column, read or skipped, holds as much text
// as a batch may.
func full(texts []*column, skipped []skippedText) bool {
	for _, c := range texts {
		if c.dlen >= maxBatchBytes {
			return true
		}
	}
	for _, sk := range skipped {
		if sk.dlen >= maxBatchBytes {
			return true
		}
	}
	return false
}

// releaseColumns lets go of the buffers of the columns being filled.
func releaseColumns(cols, raw []*column) {
	for _, col := range cols {
		if col != nil {
			col.release()
		}
	}
	for _, col := range raw {
		col.release()
	}
}
