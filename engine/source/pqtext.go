package source

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/bitutil"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/metadata"
)

// textPages reads the pages of one dictionary-encoded BYTE_ARRAY column
// chunk of a flat column itself, instead of through arrow-go's column
// chunk reader, so that a page of dictionary indices (RLE_DICTIONARY or
// PLAIN_DICTIONARY) yields the indices: the texts of its rows are gathered
// from the dictionary (see gather) and the indices become the batch's
// codes. Pages the writer fell back to PLAIN for are copied value by value.
// The layouts read are those of the Parquet format specification (Apache
// Parquet, parquet-format, Encodings.md: "Plain", "Dictionary Encoding",
// "Run Length Encoding / Bit-Packing Hybrid"; README.md "Data Pages").
//
// Only chunks that have a dictionary page and whose encodings are all
// among these are read this way (see readsPages); the others go through
// the column chunk reader.
type textPages struct {
	pr  file.PageReader
	opt bool // optional: pages hold definition levels

	dict  *array.String // the chunk's dictionary; nil before its page
	doffs []int32       // offsets of the dictionary's values in ddata
	ddata []byte        // the dictionary's values end to end, then wordPad bytes
	words []dictWord    // the values, when none is longer than 8 bytes

	left    int    // levels (rows) of the current data page not read yet
	indexed bool   // the current page holds dictionary indices, not plain values
	levels  hybrid // definition levels of the current page (optional columns)
	index   hybrid // dictionary indices of the current page
	plain   []byte // plain values of the current page not read yet

	lv    []int32 // definition levels of a part, reused
	dense []int32 // indices of a part when o keeps no codes, reused
}

// dictWord is a dictionary value of at most 8 bytes: its bytes as a
// little-endian word, zero-padded, and its length.
type dictWord struct {
	bytes uint64
	size  int
}

// wordPad is the slack kept after the bytes of a dictionary and of a batch's
// text buffer, so that a value can be copied in whole 8-byte words.
const wordPad = 8

// readsPages tells whether the chunk md of a flat BYTE_ARRAY column is read
// by textPages: it has a dictionary page, and its pages use no encoding
// but PLAIN and dictionary indices for values and RLE for definition levels.
// BIT_PACKED, which old writers list for the repetition levels a flat column
// does not have, is accepted when the column is required, as then no page
// holds levels at all.
func readsPages(md *metadata.ColumnChunkMetaData, opt bool) bool {
	if !md.HasDictionaryPage() {
		return false
	}
	for _, e := range md.Encodings() {
		switch e {
		case parquet.Encodings.Plain, parquet.Encodings.RLE, parquet.Encodings.RLEDict, parquet.Encodings.PlainDict:
		case parquet.Encodings.BitPacked:
			if opt {
				return false
			}
		default:
			return false
		}
	}
	return true
}

// close lets go of the page reader and of the chunk's reference to its
// dictionary.
func (tp *textPages) close() {
	_ = tp.pr.Close()
	if tp.dict != nil {
		tp.dict.Release()
		tp.dict = nil
	}
}

// textOut is the batch a flat text column is being read into.
type textOut struct {
	offs  []int32        // n+1 offsets
	data  *memory.Buffer // the texts, end to end
	dbuf  []byte         // data.Buf()
	bits  []byte         // validity bits of an optional column
	codes []int32        // dictionary indices by row, nil when none are kept
	nulls int
	plain bool // some rows were read from plain values
}

// reserve makes room for end bytes of text and wordPad more.
func (o *textOut) reserve(end int) {
	if end+wordPad > len(o.dbuf) {
		o.data.Reserve(max(end+wordPad, 2*len(o.dbuf)))
		o.dbuf = o.data.Buf()
	}
}

// errTextSize is a batch whose text does not fit int32 offsets.
var errTextSize = errors.New("the text of a column exceeds 2 GiB in one batch")

// read reads m rows into o from row row on, crossing pages as needed.
func (tp *textPages) read(o *textOut, row, m int) error {
	for m > 0 {
		if tp.left == 0 {
			if err := tp.next(); err != nil {
				return err
			}
		}
		k := min(m, tp.left)
		var lv []int32
		defined := k
		if tp.opt {
			lv = grow(&tp.lv, k)
			if err := tp.levels.read(lv); err != nil {
				return fmt.Errorf("definition levels: %w", err)
			}
			// Levels of width 1 are 0 or 1: hybrid refuses wider values.
			defined = 0
			for i, l := range lv {
				if l == 1 {
					defined++
					bitutil.SetBit(o.bits, row+i)
				}
			}
			o.nulls += k - defined
		}
		var err error
		if tp.indexed {
			err = tp.gather(o, row, k, lv, defined)
		} else {
			o.plain = true
			err = tp.copyPlain(o, row, k, lv)
		}
		if err != nil {
			return err
		}
		tp.left -= k
		row += k
		m -= k
	}
	return nil
}

// grow returns (*s)[:n], reallocating *s when it is too short.
func grow(s *[]int32, n int) []int32 {
	if cap(*s) < n {
		*s = make([]int32, n)
	}
	return (*s)[:n]
}

// gather reads the dictionary indices of k rows, defined of them defined
// (lv gives the levels of an optional column, nil for a required one), and
// writes the rows' texts into o from row on. When no dictionary value is
// longer than 8 bytes, gatherWords does it in one loop; else first every
// offset, in one loop over the indices, then the bytes, each value copied
// as whole 8-byte words (the copies of later values overwrite what a word
// wrote past a value's end, and the buffers keep wordPad bytes of slack).
// Null rows get index 0.
func (tp *textPages) gather(o *textOut, row, k int, lv []int32, defined int) error {
	var idx []int32
	if o.codes != nil {
		idx = o.codes[row : row+k]
	} else {
		idx = grow(&tp.dense, k)
	}
	// The indices of the defined rows are read to the front of idx, then
	// spread to their rows from the back, in place.
	if err := tp.index.read(idx[:defined]); err != nil {
		return fmt.Errorf("dictionary indices: %w", err)
	}
	if lv != nil {
		j := defined - 1
		for i := k - 1; i >= 0; i-- {
			if lv[i] == 1 {
				idx[i] = idx[j]
				j--
			} else {
				idx[i] = 0
			}
		}
	}
	doffs := tp.doffs
	nd := uint32(len(doffs) - 1)
	offs := o.offs[row+1 : row+1+k]
	end := int(o.offs[row])
	if tp.words != nil && end+8*k <= math.MaxInt32 {
		return gatherWords(o, end, offs, idx, lv, tp.words)
	}
	for i, j := range idx {
		if lv == nil || lv[i] == 1 {
			if uint32(j) >= nd {
				return fmt.Errorf("dictionary index %d of a dictionary of %d values", j, nd)
			}
			end += int(doffs[j+1] - doffs[j])
		}
		offs[i] = int32(end)
	}
	if end > math.MaxInt32 {
		return errTextSize
	}
	o.reserve(end)
	dst, src := o.dbuf, tp.ddata
	p := int(o.offs[row])
	for i, j := range idx {
		e := int(offs[i])
		for s := int(doffs[j]); p < e; s, p = s+8, p+8 {
			binary.LittleEndian.PutUint64(dst[p:p+8], binary.LittleEndian.Uint64(src[s:s+8]))
		}
		p = e
	}
	return nil
}

// gatherWords is gather for a dictionary of values of at most 8 bytes, in
// one loop: each row's value is written as one word at the end of the
// text so far (the next value overwrites the word's padding), room for a
// word a row being made for each block of wordBlock rows first. end is
// the text's length before the rows, offs their offsets to fill.
func gatherWords(o *textOut, end int, offs, idx, lv []int32, words []dictWord) error {
	nd := uint32(len(words))
	for lo := 0; lo < len(idx); lo += wordBlock {
		hi := min(lo+wordBlock, len(idx))
		o.reserve(end + 8*(hi-lo))
		dst := o.dbuf
		for i := lo; i < hi; i++ {
			if lv == nil || lv[i] == 1 {
				j := idx[i]
				if uint32(j) >= nd {
					return fmt.Errorf("dictionary index %d of a dictionary of %d values", j, nd)
				}
				w := words[j]
				binary.LittleEndian.PutUint64(dst[end:end+8], w.bytes)
				end += w.size
			}
			offs[i] = int32(end)
		}
	}
	return nil
}

// wordBlock is how many rows gatherWords makes room for at once: the text
// buffer grows by at most 8 bytes a row of the block beyond what it holds.
const wordBlock = 1024

// copyPlain copies the plain values of k rows (lv gives the levels of an
// optional column, nil for a required one) into o from row on. A plain
// BYTE_ARRAY value is its length, 4 bytes little-endian, then its bytes.
func (tp *textPages) copyPlain(o *textOut, row, k int, lv []int32) error {
	end := int(o.offs[row])
	for i := range k {
		if lv == nil || lv[i] == 1 {
			if len(tp.plain) < 4 {
				return errors.New("a page holds fewer values than its rows")
			}
			n := int(binary.LittleEndian.Uint32(tp.plain))
			if n > len(tp.plain)-4 {
				return fmt.Errorf("a value of %d bytes in a page with %d bytes left", n, len(tp.plain)-4)
			}
			if end+n > math.MaxInt32 {
				return errTextSize
			}
			o.reserve(end + n)
			copy(o.dbuf[end:], tp.plain[4:4+n])
			tp.plain = tp.plain[4+n:]
			end += n
		}
		o.offs[row+i+1] = int32(end)
	}
	return nil
}

// next moves to the next data page that holds rows, reading the
// dictionary page on the way.
func (tp *textPages) next() error {
	for {
		more, err := guard(func() (bool, error) { return tp.pr.Next(), tp.pr.Err() })
		if err != nil {
			return err
		}
		if !more {
			return errShort
		}
		var vals []byte
		var enc parquet.Encoding
		var rows int32
		switch p := tp.pr.Page().(type) {
		case *file.DictionaryPage:
			if err := tp.readDict(p); err != nil {
				return err
			}
			continue
		case *file.DataPageV1:
			vals, enc, rows = p.Data(), parquet.Encoding(p.Encoding()), p.NumValues()
			if tp.opt {
				if e := p.DefinitionLevelEncoding(); e != parquet.Encodings.RLE {
					return fmt.Errorf("definition levels in encoding %s, not RLE", e)
				}
				if len(vals) < 4 {
					return errors.New("a data page too short for its definition levels")
				}
				n := int(binary.LittleEndian.Uint32(vals))
				if n > len(vals)-4 {
					return fmt.Errorf("definition levels of %d bytes in a page of %d", n, len(vals))
				}
				tp.levels = hybrid{buf: vals[4 : 4+n], width: 1}
				vals = vals[4+n:]
			}
		case *file.DataPageV2:
			vals, enc, rows = p.Data(), parquet.Encoding(p.Encoding()), p.NumValues()
			rl, dl := int(p.RepetitionLevelByteLen()), int(p.DefinitionLevelByteLen())
			if rl < 0 || dl < 0 || rl+dl > len(vals) {
				return fmt.Errorf("levels of %d and %d bytes in a page of %d", rl, dl, len(vals))
			}
			if tp.opt {
				tp.levels = hybrid{buf: vals[rl : rl+dl], width: 1}
			}
			vals = vals[rl+dl:]
		default:
			continue // an index page
		}
		if rows < 0 {
			return fmt.Errorf("a data page of %d values", rows)
		}
		switch enc {
		case parquet.Encodings.RLEDict, parquet.Encodings.PlainDict:
			if tp.dict == nil {
				return errors.New("a page of dictionary indices before the dictionary page")
			}
			if len(vals) < 1 || vals[0] > 32 {
				return errors.New("a page of dictionary indices without a valid bit width")
			}
			tp.index = hybrid{buf: vals[1:], width: uint(vals[0])}
			tp.indexed = true
		case parquet.Encodings.Plain:
			tp.plain = vals
			tp.indexed = false
		default:
			return fmt.Errorf("a data page in encoding %s, which the chunk's metadata does not list", enc)
		}
		tp.left = int(rows)
		if tp.left > 0 {
			return nil
		}
	}
}

// readDict decodes the chunk's dictionary page: plain values.
func (tp *textPages) readDict(p *file.DictionaryPage) error {
	if tp.dict != nil {
		return errors.New("a column chunk with two dictionary pages")
	}
	if e := parquet.Encoding(p.Encoding()); e != parquet.Encodings.Plain && e != parquet.Encodings.PlainDict {
		return fmt.Errorf("a dictionary page in encoding %s", e)
	}
	n := int(p.NumValues())
	buf := p.Data()
	if n < 0 || n > len(buf)/4 {
		return fmt.Errorf("a dictionary page of %d values in %d bytes", n, len(buf))
	}
	doffs := make([]int32, n+1)
	ddata := make([]byte, 0, len(buf)-4*n+wordPad)
	for i := range n {
		if len(buf) < 4 {
			return errors.New("a dictionary page holds fewer values than it declares")
		}
		l := int(binary.LittleEndian.Uint32(buf))
		if l > len(buf)-4 {
			return fmt.Errorf("a dictionary value of %d bytes in a page with %d bytes left", l, len(buf)-4)
		}
		ddata = append(ddata, buf[4:4+l]...)
		doffs[i+1] = int32(len(ddata))
		buf = buf[4+l:]
	}
	size := len(ddata)
	ddata = append(ddata, make([]byte, wordPad)...)
	tp.doffs, tp.ddata, tp.words = doffs, ddata, nil
	short := true
	for i := range n {
		short = short && doffs[i+1]-doffs[i] <= 8
	}
	if short {
		tp.words = make([]dictWord, n)
		for i := range n {
			var b [8]byte
			copy(b[:], ddata[doffs[i]:doffs[i+1]])
			tp.words[i] = dictWord{binary.LittleEndian.Uint64(b[:]), int(doffs[i+1] - doffs[i])}
		}
	}
	data := array.NewData(arrow.BinaryTypes.String, n, []*memory.Buffer{nil,
		memory.NewBufferBytes(arrow.Int32Traits.CastToBytes(doffs)), memory.NewBufferBytes(ddata[:size])}, nil, 0, 0)
	tp.dict = array.NewStringData(data)
	data.Release()
	return nil
}

// hybrid decodes the RLE / bit-packing hybrid encoding of the Parquet
// format (parquet-format, Encodings.md, "Run Length Encoding / Bit-Packing
// Hybrid (RLE = 3)"): a sequence of runs, each opening with a ULEB128
// header h; when h is even, the value (width bits, stored little-endian in
// whole bytes) repeats h>>1 times; when h is odd, (h>>1)*8 values follow,
// packed width bits each from the least significant bit of each byte on.
type hybrid struct {
	buf    []byte // the runs not started yet
	width  uint   // bits per value, at most 32
	repeat int    // values left in the current repeated run
	value  int32  // its value
	packed []byte // the current bit-packed run
	at     int    // index of its next value
	end    int    // number of its values
}

// read fills out with the next len(out) values.
func (h *hybrid) read(out []int32) error {
	for len(out) > 0 {
		if h.repeat == 0 && h.at == h.end {
			if err := h.run(); err != nil {
				return err
			}
		}
		if h.repeat > 0 {
			n := min(h.repeat, len(out))
			v := h.value
			for i := range out[:n] {
				out[i] = v
			}
			h.repeat -= n
			out = out[n:]
			continue
		}
		n := min(h.end-h.at, len(out))
		if n == 0 {
			continue // an empty run
		}
		if err := unpack(out[:n], h.packed, h.at, h.width); err != nil {
			return err
		}
		h.at += n
		out = out[n:]
	}
	return nil
}

// run opens the next run.
func (h *hybrid) run() error {
	hdr, n := binary.Uvarint(h.buf)
	if n <= 0 {
		return errors.New("the data ends before the values it should hold")
	}
	h.buf = h.buf[n:]
	if hdr&1 == 0 {
		bytes := int(h.width+7) / 8
		if len(h.buf) < bytes || hdr>>1 > math.MaxInt32 {
			return fmt.Errorf("a run of %d values in %d bytes", hdr>>1, len(h.buf))
		}
		var v uint32
		for i := range bytes {
			v |= uint32(h.buf[i]) << (8 * i)
		}
		if h.width < 32 && v>>h.width != 0 {
			return fmt.Errorf("a repeated value %d wider than %d bits", v, h.width)
		}
		h.repeat, h.value = int(hdr>>1), int32(v)
		h.buf = h.buf[bytes:]
		return nil
	}
	groups := hdr >> 1
	if groups > math.MaxInt32/8 {
		return fmt.Errorf("a bit-packed run of %d groups", groups)
	}
	// The last run of a page may stop short of its last group's bytes;
	// unpack fails only when a value read lies past the data.
	size := min(uint64(len(h.buf)), groups*uint64(h.width))
	h.packed, h.at, h.end = h.buf[:size], 0, int(groups)*8
	h.buf = h.buf[size:]
	return nil
}

// unpack decodes len(out) values of width bits from packed, from value
// first on: value i occupies bits [i*width, (i+1)*width) of packed, bit b
// being bit b%8 of byte b/8. Whole groups of 8 values (width bytes,
// starting on a byte) of width up to 16 are read in one or two 8-byte
// words; other values in one word each, or byte by byte at the end of
// packed.
func unpack(out []int32, packed []byte, first int, width uint) error {
	if width == 0 {
		clear(out)
		return nil
	}
	last := (first+len(out))*int(width) - 1 // the last bit read
	if last/8 >= len(packed) {
		return errors.New("a bit-packed run ends before its values")
	}
	mask := uint64(1)<<width - 1
	w := int(width)
	bit := first * w
	i := 0
	one := func() {
		if bit/8+8 <= len(packed) {
			out[i] = int32(binary.LittleEndian.Uint64(packed[bit/8:]) >> (bit % 8) & mask)
		} else {
			var v uint64
			for b, j := bit/8, 0; b < len(packed) && j < 8; b, j = b+1, j+1 {
				v |= uint64(packed[b]) << (8 * j)
			}
			out[i] = int32(v >> (bit % 8) & mask)
		}
		bit += w
	}
	for ; i < len(out) && (first+i)%8 != 0; i++ {
		one()
	}
	switch {
	case w <= 8:
		for ; i+8 <= len(out) && bit/8+8 <= len(packed); i += 8 {
			v := binary.LittleEndian.Uint64(packed[bit/8:])
			o := out[i : i+8 : i+8]
			for k := range o {
				o[k] = int32(v & mask)
				v >>= width
			}
			bit += 8 * w
		}
	case w <= 16:
		// Values 4 to 7 start at bit 4w of the group: byte w/2, bit 4 when
		// w is odd; 4w+4 bits fit a word.
		half, shift := 4*w/8, uint(4*w%8)
		for ; i+8 <= len(out) && bit/8+half+8 <= len(packed); i += 8 {
			lo := binary.LittleEndian.Uint64(packed[bit/8:])
			hi := binary.LittleEndian.Uint64(packed[bit/8+half:]) >> shift
			o := out[i : i+8 : i+8]
			for k := range 4 {
				o[k] = int32(lo & mask)
				o[k+4] = int32(hi & mask)
				lo >>= width
				hi >>= width
			}
			bit += 8 * w
		}
	}
	for ; i < len(out); i++ {
		one()
	}
	return nil
}
