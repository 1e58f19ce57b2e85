package source

import (
	"bytes"
	"context"
	"errors"
	"io"
	"sync"
)

// Parallel CSV parsing.
//
// The goroutine that calls Scan cuts the text after the header into one
// piece per batch (csvCutter), hands the pieces to parse workers and
// delivers their batches in order. Cutting only finds where records end:
// a line break ends a record when the quote characters since the record's
// start are even in number, which is true of every quote that opens a
// quoted field, doubles a quote in it or closes it, but not of a quote in
// the middle of an unquoted field, which the syntax reads as text. So the
// cuts are a guess, and each worker checks its piece with the splitter
// itself, which starts at a record's start if the previous piece was
// right: the piece must hold exactly the records the cutter counted and
// end with the last of them. Pieces are checked in order, so all pieces
// before a wrong one were right; from the first wrong one (or when the
// cutter gives up: a piece larger than maxPieceBytes, a read error) the
// text is read again by the sequential reader, from that piece's start.
// Batches, row and line numbers and errors are thus those of the
// sequential reader; only Batch.Offset, a progress figure, may differ.

// maxPieceBytes bounds the text of one piece; a batch with more falls back
// to the sequential reader, which also splits batches whose text exceeds
// maxBatchBytes.
const maxPieceBytes = 256 << 20

// csvPiece is the text of one batch and, once parsed, its batch or error.
type csvPiece struct {
	data   []byte // whole records; ends after a line break unless last
	last   bool   // data runs to the end of the input
	quoted bool   // data holds a quote character
	line   int64  // line of data[0]
	rows   int64  // data rows of the file before the piece
	want   int    // records the cutter counted
	offset int64  // bytes of the file read when the piece was cut

	batch *Batch // the batch, when right
	err   error  // an error of the text inside the piece
	wrong bool   // the records do not end where the cutter said
	done  chan struct{}
}

// csvCutter cuts the text of a CSV input into pieces of want records.
type csvCutter struct {
	r      io.Reader // the rest of the input after buf
	rerr   error     // r failed with this
	eof    bool      // r has no more data
	buf    []byte    // text read and not yet cut, in buf[:n]
	n      int
	line   int64 // line of buf[0]
	rows   int64 // records before buf
	quote  byte
	quotes bool
	read   *counter
	free   [][]byte // buffers of delivered pieces
	failed bool     // the cutter gave up at buf
}

// next cuts the next piece of want records, or fewer at the end of the
// input. It returns nil at the end of the input, or when it gives up.
func (c *csvCutter) next(want int) *csvPiece {
	pos, recs, quoted := 0, 0, false
	for {
		// pos is at a record's start, or at blank lines before one.
		if recs == want {
			return c.cut(pos, recs, quoted, false)
		}
		for pos < c.n && (c.buf[pos] == '\n' || c.buf[pos] == '\r' && pos+1 < c.n && c.buf[pos+1] == '\n') {
			pos++
			if c.buf[pos-1] == '\r' {
				pos++
			}
		}
		end, q, ok := c.record(pos)
		if !ok {
			if !c.more() {
				if c.failed {
					return nil
				}
				if pos == c.n && recs == 0 {
					return nil // only blank lines, if any, are left
				}
				// The last record runs to the end of the input.
				if pos < c.n {
					recs++
					quoted = quoted || bytes.IndexByte(c.buf[pos:c.n], c.quote) >= 0 && c.quotes
				}
				return c.cut(c.n, recs, quoted, true)
			}
			continue // read more, and look at this record again
		}
		pos, quoted = end, quoted || q
		recs++
	}
}

// record finds the end of the record starting at pos: the position after
// the line break that ends it, whether it holds a quote, and false when
// the text read so far does not show its end.
func (c *csvCutter) record(pos int) (int, bool, bool) {
	odd, quoted := false, false
	for {
		k := bytes.IndexByte(c.buf[pos:c.n], '\n')
		if k < 0 {
			return 0, false, false
		}
		if c.quotes {
			if q := bytes.Count(c.buf[pos:pos+k], []byte{c.quote}); q > 0 {
				quoted = true
				odd = odd != (q%2 == 1)
			}
		}
		pos += k + 1
		if !odd {
			return pos, quoted, true
		}
	}
}

// more reads more of the input into buf; false at its end, on a read
// error, or when a piece would exceed maxPieceBytes (then c.failed).
func (c *csvCutter) more() bool {
	if c.eof || c.rerr != nil {
		c.failed = c.failed || c.rerr != nil
		return false
	}
	if c.n == len(c.buf) {
		if len(c.buf) >= maxPieceBytes {
			c.failed = true
			return false
		}
		nb := make([]byte, min(max(2*len(c.buf), 1<<20), maxPieceBytes))
		copy(nb, c.buf[:c.n])
		c.buf = nb
	}
	m, err := c.r.Read(c.buf[c.n:min(len(c.buf), c.n+1<<20)])
	c.n += m
	switch {
	case err == io.EOF:
		c.eof = true
	case err != nil:
		c.rerr = err
	}
	return true
}

// cut makes a piece of buf[:end], which holds recs records, and keeps the
// rest of buf for the next piece.
func (c *csvCutter) cut(end, recs int, quoted, last bool) *csvPiece {
	p := &csvPiece{data: c.buf[:end], last: last, quoted: quoted, line: c.line, rows: c.rows, want: recs,
		offset: c.read.n, done: make(chan struct{})}
	c.line += int64(bytes.Count(p.data, []byte{'\n'}))
	c.rows += int64(recs)
	// The next piece goes into the buffer of a delivered one, which held
	// a piece of about the same size, or a new one with room to spare.
	var nb []byte
	if k := len(c.free); k > 0 && cap(c.free[k-1]) >= max(end, c.n-end) {
		nb, c.free = c.free[k-1], c.free[:k-1]
	} else {
		nb = make([]byte, max(end+end/4, c.n-end))
	}
	nb = nb[:cap(nb)]
	c.n = copy(nb, c.buf[end:c.n])
	c.buf = nb
	return p
}

// rest returns the text not cut yet followed by the rest of the input, and
// its read error if it had one.
func (c *csvCutter) rest() io.Reader {
	rs := []io.Reader{bytes.NewReader(c.buf[:c.n])}
	switch {
	case c.rerr != nil:
		rs = append(rs, failing{c.rerr})
	case !c.eof:
		rs = append(rs, c.r)
	}
	return io.MultiReader(rs...)
}

// failing is a reader that fails with err.
type failing struct{ err error }

func (f failing) Read([]byte) (int, error) { return 0, f.err }

// scanCSVParallel reads the records of c, positioned after its header, on
// workers goroutines, and delivers their batches in order. It returns true
// when it has read the whole input (or fails); false after setting c.sp
// and c.rows for the sequential reader to go on from the first wrong
// piece.
func (s *Set) scanCSVParallel(ctx context.Context, i int, sc *scan, first int64, c *csvFile, capRows, workers int) (bool, error) {
	sp := c.sp
	if sp.rerr != nil {
		return false, nil
	}
	cut := &csvCutter{r: sp.r, eof: sp.eof, line: sp.line, quote: sp.quote, quotes: sp.quotes, read: c.read}
	cut.buf = append(make([]byte, 0, max(sp.end-sp.pos, 1<<20)), sp.buf[sp.pos:sp.end]...)
	cut.n, cut.buf = len(cut.buf), cut.buf[:cap(cut.buf)]

	pieces := make(chan *csvPiece)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s.parsePieces(c.in, i, sc, first, capRows, pieces)
		}()
	}
	var queue []*csvPiece // cut, in order, not delivered
	// stop ends the workers and drops the batches not delivered.
	stop := func() {
		close(pieces)
		wg.Wait()
		for _, p := range queue {
			if p.batch != nil {
				p.batch.Release()
			}
		}
	}
	for {
		for len(queue) <= workers && !cut.failed { // one piece per worker, and one to deliver
			p := cut.next(capRows)
			if p == nil {
				break
			}
			queue = append(queue, p)
			pieces <- p
		}
		if len(queue) == 0 {
			stop()
			if !cut.failed {
				return true, nil
			}
			c.rows = cut.rows
			c.sp = newSplitter(cut.rest(), sp.delim, sp.quote, sp.quotes, len(sp.buf))
			c.sp.line = cut.line
			return false, nil
		}
		p := queue[0]
		<-p.done
		switch {
		case p.wrong:
			stop()
			rs := make([]io.Reader, 0, len(queue)+1)
			for _, q := range queue {
				rs = append(rs, bytes.NewReader(q.data))
			}
			c.rows = p.rows
			c.sp = newSplitter(io.MultiReader(append(rs, cut.rest())...), sp.delim, sp.quote, sp.quotes, len(sp.buf))
			c.sp.line = p.line
			return false, nil
		case p.err != nil:
			stop()
			c.rows = p.rows
			return true, p.err
		}
		if err := ctx.Err(); err != nil {
			stop()
			c.rows = p.rows
			return true, err
		}
		b := p.batch
		p.batch = nil
		queue = queue[1:]
		c.rows = p.rows + int64(p.want)
		err := sc.fn(b)
		b.Release()
		if err != nil {
			stop()
			return true, err
		}
		cut.free = append(cut.free, p.data[:0])
	}
}

// parsePieces parses the pieces it receives into batches of input i until
// the channel closes.
func (s *Set) parsePieces(in *input, i int, sc *scan, first int64, capRows int, pieces <-chan *csvPiece) {
	b := s.newCSVBatch(in, sc, capRows)
	sp := newSplitter(nil, byte(s.opts.Delimiter), byte(s.opts.Quote), !s.opts.NoQuote, 1)
	var scratch []byte
	for p := range pieces {
		data := p.data
		if p.quoted {
			// Undoing doubled quotes rewrites the text; keep the piece as
			// read for the sequential reader in case it is wrong.
			scratch = append(scratch[:0], data...)
			data = scratch
		}
		sp.reset(data, p.last, p.line)
		s.parsePiece(in, i, sc, first, b, sp, p)
		close(p.done)
	}
}

// parsePiece parses piece p with sp, set on its text, into a batch.
func (s *Set) parsePiece(in *input, i int, sc *scan, first int64, b *csvBatch, sp *splitter, p *csvPiece) {
	c := &csvFile{in: in, sp: sp, rows: p.rows}
	width := len(in.names)
	b.start()
	for len(b.lines) < p.want {
		if b.full() {
			p.wrong = true // the sequential reader would end the batch here
			b.release()
			return
		}
		err := sp.scan()
		if errors.Is(err, errNeedMore) || err == nil && len(sp.fields) == 0 {
			p.wrong = true // the piece ends inside a record, or before want records
			b.release()
			return
		}
		if err == nil {
			c.rows++
			err = c.checkWidth(width, false)
		} else {
			err = c.locate(err, c.rows+1)
		}
		if err != nil {
			p.err = err
			b.release()
			return
		}
		b.gather(sp)
	}
	b.flush(sp.buf, width)
	// The piece must end with its last record: no text may follow, or at
	// the end of the input only blank lines.
	if p.last {
		err := sp.scan()
		p.wrong = err != nil || len(sp.fields) > 0
	} else {
		p.wrong = sp.pos != len(sp.buf)
	}
	if p.wrong {
		b.release()
		return
	}
	p.batch = b.finish(i, first+p.rows, p.offset)
}
