package source

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math/bits"
	"unicode/utf8"
)

// Sizes of the splitter's buffer.
const (
	defaultBufferSize = 1 << 20  // first read size; the buffer grows only for longer records
	maxRecordBytes    = 64 << 20 // a longer record is an error, usually an unclosed quote
)

// span locates one field of the current record in the splitter's buffer.
type span struct {
	start, end int
	doubled    bool // quoted, with doubled quotes still to undo
}

// splitter cuts CSV text into records and fields. It reads large blocks into
// one buffer and hands out fields as slices of it, valid until the next call
// of next.
//
// Syntax: fields are separated by the delimiter and records end at "\n" or
// "\r\n" (a lone "\r" is an ordinary character). A field that starts with the
// quote character runs to the matching closing quote; inside it the
// delimiter and line breaks are text and a doubled quote stands for one
// quote; after the closing quote comes the delimiter, a line break or the
// end of the input. A quote anywhere else is an ordinary character. Lines
// with no characters are skipped. The text must be UTF-8 without NUL bytes.
type splitter struct {
	r      io.Reader
	buf    []byte
	pos    int         // start of unread data
	end    int         // end of data read
	eof    bool        // r has no more data
	rerr   *splitError // r failed
	line   int64       // line number of buf[pos]
	delim  byte
	quote  byte
	quotes bool // quoting on

	stop  [256]bool // bytes that end an unquoted run
	qstop [256]bool // bytes that end a run inside quotes

	// The bitmaps of plainLine's block of buf at blockAt (see classify);
	// blockAt is -1 when none is cached.
	blockAt                       int
	delimBits, stopBits, wideBits uint64

	// The record last read.
	fields   []span
	undo     bool  // some field has doubled quotes to undo
	recLine  int64 // line on which it starts
	recStart int
	recEnd   int
}

// splitError is a syntax error of the text, to be located by the caller.
type splitError struct {
	line  int64 // line of the offending byte, or where an unclosed quote opened
	field int   // 0-based field index within the record
	msg   string
	err   error
}

func (e *splitError) Error() string { return e.msg }

const nulMessage = "NUL byte in the text (is this a binary or UTF-16 file? save it as UTF-8 text)"

// errNeedMore tells that the record runs past the data in the buffer.
var errNeedMore = errors.New("need more data")

func newSplitter(r io.Reader, delim, quote byte, quotes bool, bufSize int) *splitter {
	if bufSize <= 0 {
		bufSize = defaultBufferSize
	}
	s := &splitter{r: r, buf: make([]byte, bufSize), line: 1, delim: delim, quote: quote, quotes: quotes, blockAt: -1}
	for _, c := range []byte{delim, '\n', '\r', 0} {
		s.stop[c] = true
	}
	for _, c := range []byte{quote, '\n', 0} {
		s.qstop[c] = true
	}
	return s
}

// reset sets s to split data, starting on line line: the whole input when
// eof, else a part of it after which s.scan reports errNeedMore (s.next,
// which would read s.r, must not be called).
func (s *splitter) reset(data []byte, eof bool, line int64) {
	s.buf, s.pos, s.end, s.eof, s.rerr, s.line = data, 0, len(data), eof, nil, line
	s.blockAt = -1
}

// skipBOM drops a UTF-8 byte order mark at the start of the input.
func (s *splitter) skipBOM() error {
	for s.end-s.pos < 3 && !s.eof {
		if err := s.fill(); err != nil {
			return err
		}
	}
	if bytes.HasPrefix(s.buf[s.pos:s.end], []byte("\xef\xbb\xbf")) {
		s.pos += 3
	}
	return nil
}

// next reads the next record into s.fields. It returns false at the end of
// the input.
func (s *splitter) next() (bool, error) {
	for {
		err := s.scan()
		if err == nil {
			return len(s.fields) > 0, nil
		}
		if err != errNeedMore {
			return false, err
		}
		if err := s.fill(); err != nil {
			return false, err
		}
	}
}

// field returns the bytes of field f of the current record.
func (s *splitter) field(f span) []byte { return s.buf[f.start:f.end] }

// fill reads more input, first moving unread data to the front of the
// buffer and growing the buffer when the unread data fills it.
func (s *splitter) fill() error {
	if s.rerr != nil {
		s.rerr.line = s.line // where the rows read stop
		return s.rerr
	}
	s.blockAt = -1 // the text moves
	if s.pos > 0 {
		n := copy(s.buf, s.buf[s.pos:s.end])
		s.pos, s.end = 0, n
	}
	if s.end == len(s.buf) {
		if len(s.buf) >= maxRecordBytes {
			return &splitError{line: s.line, field: -1, msg: fmt.Sprintf(
				"the row starting on this line is longer than %d MiB (is a quote opened here never closed? double quotes inside quoted text, or turn quoting off)",
				maxRecordBytes>>20)}
		}
		nb := make([]byte, min(2*len(s.buf), maxRecordBytes))
		copy(nb, s.buf[:s.end])
		s.buf = nb
	}
	start := s.end
	for s.end < len(s.buf) {
		n, err := s.r.Read(s.buf[s.end:])
		s.end += n
		if err == io.EOF {
			s.eof = true
			return nil
		}
		if err != nil {
			// Deliver the rows read so far; the error comes with the
			// next read, located at the row it cuts.
			msg := "cannot read the file: " + err.Error()
			if errors.Is(err, io.ErrUnexpectedEOF) {
				msg = "the compressed data ends early (the file was cut short; copy it again)"
			}
			s.rerr = &splitError{line: s.line, field: -1, msg: msg, err: err}
			if s.end > start {
				return nil
			}
			return s.rerr
		}
	}
	return nil
}

// scan parses one record from s.buf[s.pos:s.end]. It returns errNeedMore
// when the record may continue past s.end, leaving s.pos unchanged.
func (s *splitter) scan() error {
	buf := s.buf[:s.end]
	stop, qstop := &s.stop, &s.qstop
	i, line := s.pos, s.line
	s.fields = s.fields[:0]
	// Skip empty lines.
	for {
		if i == len(buf) {
			if !s.eof {
				return errNeedMore
			}
			s.pos, s.line = i, line
			return nil
		}
		if buf[i] == '\n' {
			i++
			line++
			continue
		}
		if buf[i] == '\r' {
			if i+1 == len(buf) {
				if !s.eof {
					return errNeedMore
				}
				s.pos, s.line = i+1, line
				return nil
			}
			if buf[i+1] == '\n' {
				i += 2
				line++
				continue
			}
		}
		break
	}
	s.recLine, s.recStart, s.undo = line, i, false
	if ok, err := s.plainLine(buf, i, line); ok {
		return err
	}
	var seen byte // OR of the bytes in the record, to spot non-ASCII
	for {
		if s.quotes && i < len(buf) && buf[i] == s.quote {
			open := line
			j := i + 1
			start, end := j, -1
			doubled := false
			for end < 0 {
				for j < len(buf) && !qstop[buf[j]] {
					seen |= buf[j]
					j++
				}
				if j == len(buf) {
					if !s.eof {
						return errNeedMore
					}
					return &splitError{line: open, field: len(s.fields), msg: "quoted text opened on this line is never closed " +
						"(a stray quote? inside quoted text write a quote twice, or set quote to \"\" to read quotes as text)"}
				}
				switch buf[j] {
				case '\n':
					line++
					j++
				case 0:
					return &splitError{line: line, field: len(s.fields), msg: nulMessage}
				default: // the quote
					if j+1 == len(buf) && !s.eof {
						return errNeedMore
					}
					if j+1 < len(buf) && buf[j+1] == s.quote {
						doubled, s.undo = true, true
						j += 2
						continue
					}
					end = j
					j++
				}
			}
			s.fields = append(s.fields, span{start: start, end: end, doubled: doubled})
			if j == len(buf) {
				if !s.eof {
					return errNeedMore
				}
				return s.finish(j, j, line, seen)
			}
			switch c := buf[j]; {
			case c == s.delim:
				i = j + 1
				continue
			case c == '\n':
				return s.finish(j, j+1, line+1, seen)
			case c == '\r' && j+1 == len(buf):
				if !s.eof {
					return errNeedMore
				}
				return s.finish(j, j+1, line, seen)
			case c == '\r' && buf[j+1] == '\n':
				return s.finish(j, j+2, line+1, seen)
			}
			return &splitError{line: line, field: len(s.fields) - 1,
				msg: "text follows the closing quote (inside quoted text write a quote twice)"}
		}
		// An unquoted field: runs to the delimiter or the end of the line.
		j := i
		for {
			for j < len(buf) && !stop[buf[j]] {
				seen |= buf[j]
				j++
			}
			if j == len(buf) {
				if !s.eof {
					return errNeedMore
				}
				s.fields = append(s.fields, span{start: i, end: j})
				return s.finish(j, j, line, seen)
			}
			c := buf[j]
			if c != '\r' {
				break
			}
			if j+1 == len(buf) {
				if !s.eof {
					return errNeedMore
				}
				break
			}
			if buf[j+1] == '\n' {
				break
			}
			j++ // a lone carriage return is text
		}
		s.fields = append(s.fields, span{start: i, end: j})
		switch buf[j] {
		case s.delim:
			i = j + 1
			continue
		case '\n':
			return s.finish(j, j+1, line+1, seen)
		case '\r':
			if j+1 < len(buf) {
				return s.finish(j, j+2, line+1, seen)
			}
			return s.finish(j, j+1, line, seen)
		}
		return &splitError{line: line, field: len(s.fields) - 1, msg: nulMessage}
	}
}

// plainLine is the fast path of scan for the common record: a whole line
// in the buffer with no quote character and no NUL byte. Such a line splits
// at every delimiter. It returns false, having done nothing, for any other
// record.
//
// The buffer is looked at in aligned blocks of 64 bytes, each classified
// once into bitmaps (see classify) that stay cached while the records of
// the block are split, so a record costs a few word operations per eight
// bytes plus one step per field; the bytes of a line that ends before a
// full block (at the end of the data) are read one by one.
func (s *splitter) plainLine(buf []byte, i int, line int64) (bool, error) {
	fields := s.fields
	start, at := i, i&^63
	var high uint64 // nonzero when the line has non-ASCII bytes
	for ; at+64 <= len(buf); at += 64 {
		if at != s.blockAt {
			s.delimBits, s.stopBits, s.wideBits = s.classify((*[64]byte)(buf[at : at+64]))
			s.blockAt = at
		}
		keep := ^uint64(0) << uint(max(i-at, 0)) // the bits from i on
		delims, stops, wide := s.delimBits&keep, s.stopBits&keep, s.wideBits&keep
		end := -1
		if stops != 0 {
			k := bits.TrailingZeros64(stops)
			if buf[at+k] != '\n' {
				return false, nil
			}
			below := uint64(1)<<k - 1
			delims &= below
			wide &= below
			end = at + k
		}
		high |= wide
		for ; delims != 0; delims &= delims - 1 {
			k := at + bits.TrailingZeros64(delims)
			fields = append(fields, span{start: start, end: k})
			start = k + 1
		}
		if end >= 0 {
			return true, s.endPlain(fields, start, end, line, high != 0)
		}
	}
	for j := max(at, i); j < len(buf); j++ {
		switch c := buf[j]; {
		case c == '\n':
			return true, s.endPlain(fields, start, j, line, high != 0)
		case c == 0 || s.quotes && c == s.quote:
			return false, nil
		case c == s.delim:
			fields = append(fields, span{start: start, end: j})
			start = j + 1
		case c >= utf8.RuneSelf:
			high = 1
		}
	}
	return false, nil
}

// endPlain ends a record of plainLine whose fields before the last are
// fields, the last starting at start, with the line feed at end.
func (s *splitter) endPlain(fields []span, start, end int, line int64, nonASCII bool) error {
	// The last field ends before "\n" or "\r\n"; scan skipped blank
	// lines, so the line has a byte before its line feed.
	text := end
	if s.buf[end-1] == '\r' {
		text--
	}
	s.fields = append(fields, span{start: start, end: text})
	var seen byte
	if nonASCII {
		seen = utf8.RuneSelf
	}
	return s.finish(text, end+1, line+1, seen)
}

// classify returns bitmaps of the 64 bytes of block, bit k for byte k: the
// delimiters; the bytes that stop plainLine (line feed, quote when quoting
// is on, NUL); the non-ASCII bytes ("wide"). It reads the block as eight
// 64-bit words (SWAR, "SIMD within a register"), tests every byte of a word
// at once with nonzeroBytes and gathers the high bits of the result into a
// byte with byteBits. Quotes, NUL and non-ASCII bytes are rare, so the
// first reading only notes whether the block has any; only then does
// rareBits map them.
func (s *splitter) classify(block *[64]byte) (delims, stops, wide uint64) {
	const ones = 0x0101010101010101
	dl, nl, qt := ones*uint64(s.delim), ones*uint64('\n'), s.quoteWord()
	var rare, high uint64 // some quote or NUL; some non-ASCII byte
	for k := 0; k < 64; k += 8 {
		w := binary.LittleEndian.Uint64(block[k : k+8])
		delims |= byteBits(^nonzeroBytes(w^dl)&highBits) << k
		stops |= byteBits(^nonzeroBytes(w^nl)&highBits) << k
		rare |= ^(nonzeroBytes(w^qt) & nonzeroBytes(w))
		high |= w
	}
	if (rare|high)&highBits != 0 {
		quoted, wide := s.rareBits(block)
		return delims, stops | quoted, wide
	}
	return delims, stops, 0
}

// quoteWord returns the quote character in each byte of a word, or, with
// quoting off, the line feed, which no test of a quote then tells apart
// from what it tests already.
func (s *splitter) quoteWord() uint64 {
	if s.quotes {
		return 0x0101010101010101 * uint64(s.quote)
	}
	return 0x0101010101010101 * uint64('\n')
}

// rareBits maps the quotes and NUL bytes, and the non-ASCII bytes, of a
// block, as classify does.
func (s *splitter) rareBits(block *[64]byte) (stops, wide uint64) {
	qt := s.quoteWord()
	for k := 0; k < 64; k += 8 {
		w := binary.LittleEndian.Uint64(block[k : k+8])
		stops |= byteBits(^(nonzeroBytes(w^qt)&nonzeroBytes(w))&highBits) << k
		wide |= byteBits(w&highBits) << k
	}
	return stops, wide
}

// byteBits gathers the high bits of the eight bytes of x, whose other bits
// are zero, into the low eight bits, byte k's into bit k. After shifting
// the flags to the bytes' low bits, the multiplier adds byte k's flag at
// bit 56+k, and no two of its 64 partial products land on the same bit,
// so nothing carries into the top byte.
func byteBits(x uint64) uint64 {
	return (x >> 7) * 0x0102040810204080 >> 56
}

// highBits selects the high bit of each byte of a word.
const highBits = 0x8080808080808080

// nonzeroBytes returns a word whose byte k has its high bit set when byte k
// of x is not zero. Adding 0x7f to the low seven bits of a byte sets its
// high bit unless they are all zero, and cannot carry into the next byte;
// OR-ing x adds the bytes whose own high bit is set. Unlike the shorter
// test for a zero byte, (x - 0x01...) & ^x & 0x80..., it marks no byte
// falsely, so every byte can be told apart (Warren 2012, "Hacker's
// Delight", 2nd ed., section 6-1). Only the high bits are meaningful.
func nonzeroBytes(x uint64) uint64 {
	const low7 = 0x7f7f7f7f7f7f7f7f
	return (x&low7 + low7) | x
}

// finish ends the record at recEnd, with the next one starting at next on
// line nextLine: it checks the encoding and undoes doubled quotes.
func (s *splitter) finish(recEnd, next int, nextLine int64, seen byte) error {
	s.recEnd = recEnd
	if seen >= utf8.RuneSelf {
		if err := s.checkUTF8(); err != nil {
			return err
		}
	}
	s.pos, s.line = next, nextLine
	if !s.undo {
		return nil
	}
	s.blockAt = -1 // the text changes
	for k := range s.fields {
		f := &s.fields[k]
		if !f.doubled {
			continue
		}
		w := f.start
		for r := f.start; r < f.end; r++ {
			s.buf[w] = s.buf[r]
			w++
			if s.buf[r] == s.quote {
				r++ // skip the second quote of the pair
			}
		}
		f.end, f.doubled = w, false
	}
	return nil
}

// checkUTF8 finds the first field of the record that is not valid UTF-8.
func (s *splitter) checkUTF8() error {
	if utf8.Valid(s.buf[s.recStart:s.recEnd]) {
		return nil
	}
	for k, f := range s.fields {
		b := s.buf[f.start:f.end]
		for off := 0; off < len(b); {
			r, size := utf8.DecodeRune(b[off:])
			if r == utf8.RuneError && size == 1 {
				line := s.recLine + int64(bytes.Count(s.buf[s.recStart:f.start+off], []byte{'\n'}))
				return &splitError{line: line, field: k, msg: fmt.Sprintf(
					"invalid UTF-8: byte %#02x at byte %d of the cell (save the file as UTF-8)", b[off], off+1)}
			}
			off += size
		}
	}
	// Delimiters, quotes and line breaks are ASCII, so the bad bytes must lie
	// in a field; this is a fallback that keeps the error if they do not.
	return &splitError{line: s.recLine, field: -1, msg: "invalid UTF-8 (save the file as UTF-8)"}
}
