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

	proj, schema := sc.proj, sc.schema
	cols := make([]*column, len(proj)) // nil when skipped
	slots := make([]*column, width)    // by position in the file; nil when not read
	var texts []*column
	var skipped []skippedText
	for k, c := range proj {
		kd, _ := kindOf(schema.Field(k).Type)
		if sc.skipped(k) {
			if kd == kString {
				skipped = append(skipped, skippedText{pos: in.pos[c]})
			}
			continue
		}
		cols[k] = newColumn(kd, s.nulls, s.opts.Allocator)
		slots[in.pos[c]] = cols[k]
		if kd == kString {
			texts = append(texts, cols[k])
		}
	}
	// With ScanText, raw[k] keeps the cells of cols[k] as written: a string
	// column with no null token.
	var raw, rawSlots []*column
	if s.text {
		raw, rawSlots = make([]*column, len(proj)), make([]*column, width)
		verbatim := newNullSet(nil)
		for k, c := range proj {
			raw[k] = newColumn(kString, verbatim, s.opts.Allocator)
			rawSlots[in.pos[c]] = raw[k]
		}
		texts = append(texts, raw...)
	}
	batchRows := s.opts.BatchRows
	capRows := batchRows // room for rows in a batch's buffers
	if !in.Gzip {
		// A row takes at least one byte per field, so a small file needs
		// small buffers.
		capRows = int(min(int64(batchRows), c.size/int64(max(width, 1))+1))
	}
	for done := false; !done; {
		if err := ctx.Err(); err != nil {
			return c.rows, err
		}
		for _, col := range cols {
			if col != nil {
				col.start(capRows)
			}
		}
		for _, col := range raw {
			col.start(capRows)
		}
		for k := range skipped {
			skipped[k].dlen = 0
		}
		lines := make([]int64, 0, capRows)
		for len(lines) < capRows {
			if !pending {
				ok, err := c.record(width, noHeader)
				if err != nil {
					releaseColumns(cols, raw)
					return c.rows, err
				}
				if !ok {
					done = true
					break
				}
			}
			pending = false
			for j, f := range c.sp.fields {
				if col := slots[j]; col != nil {
					col.append(c.sp.field(f))
				}
				if raw != nil && rawSlots[j] != nil {
					rawSlots[j].append(c.sp.field(f))
				}
			}
			for k := range skipped {
				sk := &skipped[k]
				if b := c.sp.field(c.sp.fields[sk.pos]); !s.nulls.has(b) {
					sk.dlen += len(b)
				}
			}
			lines = append(lines, c.sp.recLine)
			if full(texts, skipped) {
				break
			}
		}
		n := len(lines)
		if n == 0 {
			releaseColumns(cols, raw)
			break
		}
		arrs := make([]arrow.Array, len(cols))
		var invalid map[int][]InvalidCell
		for k, col := range cols {
			if col == nil {
				arrs[k] = sc.nulls.get(schema.Field(k).Type, n)
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
		b := &Batch{
			Record:   array.NewRecordBatch(schema, arrs, int64(n)),
			Source:   i,
			FirstRow: first + c.rows - int64(n),
			Lines:    lines,
			Invalid:  invalid,
			Offset:   c.read.n,
		}
		for _, col := range raw {
			b.Text = append(b.Text, col.finish().(*array.String))
		}
		for _, a := range arrs {
			a.Release()
		}
		err := sc.fn(b)
		b.Release()
		if err != nil {
			return c.rows, err
		}
	}
	return c.rows, nil
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
