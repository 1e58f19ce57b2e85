package source

import (
	"bufio"
	"context"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"maps"
	"os"
	"slices"
	"strconv"
	"sync/atomic"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Spill is a copy of some columns of the batches of one scan, kept in a
// temporary file so that a later scan of those columns reads the copy
// instead of the inputs: no CSV line is split or parsed twice.
//
// The file is uncompressed Arrow IPC with one record batch per batch
// written, so a scan of the copy yields the batches of the original scan:
// the same boundaries, row and line numbers, sources, progress offsets and
// invalid cells (each record batch carries these in its custom metadata,
// see spillMeta), and the same bits in every cell. Numeric columns are
// packed to half their width, batch by batch, where that is exact (see
// packing); the file is a run of IPC streams, a new one starting whenever
// a batch is packed otherwise than the one before, with the schema of its
// packing. Written batch by batch, the copy costs disk (or page cache),
// not memory. A goroutine of its own writes it, so that the scan does not
// wait on the file system; at most spillQueue batches wait for it.
//
// The file lives in Options.TempDir and is removed when the spill is
// closed, or at once where the system lets an open file lose its name
// (Unix), so that even a killed run leaves none behind.
type Spill struct {
	mem     memory.Allocator
	file    *os.File
	path    string        // to remove at Close; "" once removed
	buf     *bufio.Writer // over file, used by the writing goroutine
	columns []string      // of the scan written
	schema  *arrow.Schema // of its batches
	kept    []int         // by column of the batches, its position in the file, -1 when not kept
	stored  *arrow.Schema // of the file: the kept columns
	cols    []arrow.Array // scratch of Write

	queue  chan arrow.RecordBatch // to the writing goroutine; nil once finished
	done   chan error             // the writing goroutine's first failure, or nil, when it ends
	failed atomic.Bool            // the writing goroutine has failed: Write stops sending
	size   int64                  // bytes written, once finished
	err    error                  // the first failure; the copy is then unusable
}

// Sizes of a spill's write buffer (the IPC writer writes a message as many
// small pieces) and of its queue of batches.
const (
	spillBufferSize = 1 << 20
	spillQueue      = 2
)

// NewSpill starts a copy of the batches of a scan of columns (nil: all, as
// for Scan), keeping the columns marked in keep (nil: all). The caller
// passes every batch of that scan to Write, in order, then calls Finish,
// and closes the spill whatever happens.
func (s *Set) NewSpill(columns []string, keep []bool) (*Spill, error) {
	_, schema, err := s.project(columns)
	if err != nil {
		return nil, err
	}
	if keep != nil && len(keep) != schema.NumFields() {
		return nil, &Error{Msg: fmt.Sprintf("%d keep flags for %d columns (give one per column)", len(keep), schema.NumFields())}
	}
	sp := &Spill{mem: s.opts.Allocator, columns: slices.Clone(columns), schema: schema, kept: make([]int, schema.NumFields())}
	var fields []arrow.Field
	for k := range sp.kept {
		sp.kept[k] = -1
		if keep == nil || keep[k] {
			sp.kept[k] = len(fields)
			fields = append(fields, schema.Field(k))
		}
	}
	sp.stored = arrow.NewSchema(fields, nil)
	sp.cols = make([]arrow.Array, len(fields))
	f, err := os.CreateTemp(s.opts.TempDir, "assay-spill-*.arrows")
	if err != nil {
		return nil, fmt.Errorf("cannot make the temporary copy of the data: %w", err)
	}
	sp.file, sp.path = f, f.Name()
	if os.Remove(sp.path) == nil {
		sp.path = ""
	}
	sp.buf = bufio.NewWriterSize(f, spillBufferSize)
	sp.queue, sp.done = make(chan arrow.RecordBatch, spillQueue), make(chan error, 1)
	go sp.drain(sp.queue)
	return sp, nil
}

// drain writes the record batches of queue, in order, until the queue is
// closed, packing their numeric columns (see packer.pack); after a
// failure (a panic of the writer included) it releases the rest unwritten.
// Batches packed alike go to one IPC stream; a batch packed otherwise ends
// the stream and starts the next, with the schema of the new packing. It
// sends the first failure, or nil, on sp.done.
func (sp *Spill) drain(queue <-chan arrow.RecordBatch) {
	var (
		err    error
		w      *ipc.Writer
		pk     packer
		schema *arrow.Schema // of the stream of w
		last   []packing     // of its columns
		packs  = make([]packing, sp.stored.NumFields())
		params = make([]int64, len(packs))
		cols   = make([]arrow.Array, len(packs))
		fields = make([]arrow.Field, len(packs))
	)
	for rec := range queue {
		if err == nil {
			for j, a := range rec.Columns() {
				cols[j], packs[j], params[j] = pk.pack(j, a)
			}
			if w == nil || !slices.Equal(packs, last) {
				if w != nil {
					_, err = guard(func() (bool, error) { return true, w.Close() })
				}
				for j, f := range sp.stored.Fields() {
					f.Type = packedType(f.Type, packs[j])
					fields[j] = f
				}
				schema = arrow.NewSchema(fields, nil)
				w = ipc.NewWriter(sp.buf, ipc.WithSchema(schema), ipc.WithAllocator(sp.mem))
				last = slices.Clone(packs)
			}
			if err == nil {
				var meta arrow.Metadata
				if rm, ok := rec.(arrow.RecordBatchWithMetadata); ok {
					meta = rm.Metadata()
				}
				if pm := appendPackings(nil, packs, params); len(pm) > 0 {
					meta = arrow.NewMetadata(append(meta.Keys(), metaPacking), append(meta.Values(), string(pm)))
				}
				packed := array.NewRecordBatchWithMetadata(schema, cols, rec.NumRows(), meta)
				_, err = guard(func() (bool, error) { return true, w.Write(packed) })
				packed.Release()
			}
			for j := range cols {
				cols[j].Release()
				cols[j] = nil
			}
			if err != nil {
				sp.failed.Store(true)
			}
		}
		rec.Release()
	}
	if w != nil {
		if _, cerr := guard(func() (bool, error) { return true, w.Close() }); err == nil {
			err = cerr
		}
	}
	if err == nil {
		err = sp.buf.Flush()
	}
	sp.done <- err
}

// Write appends batch b of the scan to the copy: it hands the kept columns
// to the writing goroutine, waiting while spillQueue batches wait. A
// failure (a full disk) makes the copy unusable and the later calls do
// nothing; Finish returns it.
func (sp *Spill) Write(b *Batch) {
	if sp.err != nil || sp.queue == nil || sp.failed.Load() {
		return
	}
	if !b.Record.Schema().Equal(sp.schema) {
		sp.err = errors.New("cannot copy a batch of other columns than those of the temporary copy")
		return
	}
	for k, j := range sp.kept {
		if j >= 0 {
			sp.cols[j] = b.Record.Column(k)
		}
	}
	sp.queue <- array.NewRecordBatchWithMetadata(sp.stored, sp.cols, b.Record.NumRows(), spillMeta(b, sp.kept))
	clear(sp.cols)
}

// Finish ends the copy, once the writing goroutine has written every batch,
// and returns the first failure of the writing, if any; the spill can then
// be scanned.
func (sp *Spill) Finish() error {
	if sp.queue == nil {
		return sp.err
	}
	close(sp.queue)
	sp.queue = nil
	if err := <-sp.done; err != nil && sp.err == nil {
		sp.err = fmt.Errorf("cannot write the temporary copy of the data: %w", err)
	}
	if fi, err := sp.file.Stat(); err == nil {
		sp.size = fi.Size()
	} else if sp.err == nil {
		sp.err = fmt.Errorf("cannot read the temporary copy of the data: %w", err)
	}
	return sp.err
}

// Close removes the copy. It may be called more than once, and on a nil
// spill.
func (sp *Spill) Close() error {
	if sp == nil || sp.file == nil {
		return nil
	}
	_ = sp.Finish() // stops the writing goroutine
	err := sp.file.Close()
	sp.file = nil
	if sp.path != "" {
		if rerr := os.Remove(sp.path); err == nil {
			err = rerr
		}
		sp.path = ""
	}
	if sp.err == nil {
		sp.err = errors.New("the temporary copy of the data is closed")
	}
	return err
}

// ScanSome reads the copy as Set.ScanSome reads the inputs: columns must be
// those the spill was made for and every column kept out of the copy must
// be skipped. Skipped columns come as all-null arrays, with no invalid
// cells. The spill must be finished without failure.
func (sp *Spill) ScanSome(ctx context.Context, columns []string, skip []bool, fn func(*Batch) error) error {
	switch {
	case sp.err != nil:
		return sp.err
	case sp.queue != nil:
		return errors.New("the temporary copy of the data is still being written")
	case !slices.Equal(columns, sp.columns):
		return fmt.Errorf("the temporary copy holds columns %s, not %s", quoteList(sp.columns), quoteList(columns))
	case skip != nil && len(skip) != len(sp.kept):
		return &Error{Msg: fmt.Sprintf("%d skip flags for %d columns (give one per column)", len(skip), len(sp.kept))}
	}
	for k, j := range sp.kept {
		if j < 0 && (skip == nil || !skip[k]) {
			return fmt.Errorf("column %q is not in the temporary copy", sp.schema.Field(k).Name)
		}
	}
	opts := []ipc.Option{ipc.WithAllocator(sp.mem), ipc.WithMetadataSizeLimit(sp.size), ipc.WithBodySizeLimit(sp.size)}
	in := bufio.NewReaderSize(io.NewSectionReader(sp.file, 0, sp.size), spillBufferSize)
	var (
		r      *ipc.Reader // of the current stream; nil between streams
		packs  []packing   // of its columns
		params = make([]int64, len(sp.stored.Fields()))
	)
	defer func() {
		if r != nil {
			r.Release()
		}
	}()
	nulls := newNullArrays(sp.mem)
	defer nulls.release()
	cols := make([]arrow.Array, len(sp.kept))
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		if r == nil {
			if _, err := in.Peek(1); err == io.EOF {
				return nil
			}
			var err error
			if r, err = ipc.NewReaderFromMessageReader(ipc.NewMessageReader(in, opts...), opts...); err != nil {
				return fmt.Errorf("cannot read the temporary copy of the data: %w", err)
			}
			if packs, err = streamPackings(r.Schema(), sp.stored); err != nil {
				return fmt.Errorf("cannot read the temporary copy of the data: %w", err)
			}
		}
		ok, err := guard(func() (bool, error) { return r.Next(), r.Err() })
		if err != nil {
			return fmt.Errorf("cannot read the temporary copy of the data: %w", err)
		}
		if !ok { // the end of a stream
			r.Release()
			r = nil
			continue
		}
		rec := r.RecordBatch()
		b, err := readSpillMeta(rec, len(sp.kept), skip, packs, params)
		if err != nil {
			return fmt.Errorf("cannot read the temporary copy of the data: %w", err)
		}
		n := rec.NumRows()
		for k, j := range sp.kept {
			switch {
			case skip != nil && skip[k]:
				cols[k] = nulls.get(sp.schema.Field(k).Type, int(n))
			case packs[j] != packedPlain:
				cols[k] = unpackColumn(sp.mem, sp.schema.Field(k).Type, rec.Column(j), packs[j], params[j])
			default:
				cols[k] = rec.Column(j)
				cols[k].Retain()
			}
		}
		b.Record = array.NewRecordBatch(sp.schema, cols, n)
		for k := range cols {
			cols[k].Release()
			cols[k] = nil
		}
		err = fn(b)
		b.Release()
		if err != nil {
			return err
		}
	}
}

// Keys of the custom metadata of a spilled record batch.
const (
	metaSource  = "source"  // Batch.Source, in decimal
	metaFirst   = "first"   // Batch.FirstRow, in decimal
	metaOffset  = "offset"  // Batch.Offset, in decimal
	metaLines   = "lines"   // Batch.Lines, see appendLines; absent when nil
	metaInvalid = "invalid" // Batch.Invalid, see appendInvalid; absent when nil
	metaPacking = "packing" // the parameters of the packed columns, see appendPackings; absent when none
)

// spillMeta is the custom metadata that keeps what a batch holds besides
// its columns, with the invalid cells of the columns kept (kept[k] >= 0),
// under their index in the batch.
func spillMeta(b *Batch, kept []int) arrow.Metadata {
	keys := []string{metaSource, metaFirst, metaOffset}
	vals := []string{strconv.Itoa(b.Source), strconv.FormatInt(b.FirstRow, 10), strconv.FormatInt(b.Offset, 10)}
	if len(b.Lines) > 0 {
		keys, vals = append(keys, metaLines), append(vals, string(appendLines(nil, b.Lines)))
	}
	var inv []byte
	for _, k := range slices.Sorted(maps.Keys(b.Invalid)) {
		if cells := b.Invalid[k]; len(cells) > 0 && k < len(kept) && kept[k] >= 0 {
			inv = appendInvalid(inv, k, cells)
		}
	}
	if inv != nil {
		keys, vals = append(keys, metaInvalid), append(vals, string(inv))
	}
	return arrow.NewMetadata(keys, vals)
}

// appendLines appends lines to buf as unsigned varints: the first line,
// then, unless every row starts on the line after the previous one (the
// common case, which takes no more), the gap before each next row's line.
func appendLines(buf []byte, lines []int64) []byte {
	buf = binary.AppendUvarint(buf, uint64(lines[0]))
	for i := 1; i < len(lines); i++ {
		if lines[i] != lines[i-1]+1 {
			for i := 1; i < len(lines); i++ {
				buf = binary.AppendUvarint(buf, uint64(lines[i]-lines[i-1]))
			}
			break
		}
	}
	return buf
}

// errDamaged says that a spilled batch's metadata does not decode, which
// only a failing disk can cause.
var errDamaged = errors.New("damaged batch metadata")

// readLines reverses appendLines for n rows.
func readLines(data []byte, n int) ([]int64, error) {
	first, k := binary.Uvarint(data)
	if k <= 0 {
		return nil, errDamaged
	}
	data = data[k:]
	lines := make([]int64, n)
	consecutive := len(data) == 0
	for i := range lines {
		if i == 0 {
			lines[0] = int64(first)
			continue
		}
		gap := uint64(1)
		if !consecutive {
			if gap, k = binary.Uvarint(data); k <= 0 {
				return nil, errDamaged
			}
			data = data[k:]
		}
		lines[i] = lines[i-1] + int64(gap)
	}
	if len(data) != 0 {
		return nil, errDamaged
	}
	return lines, nil
}

// appendInvalid appends the invalid cells of column k to buf: k, the
// number of cells, then each cell's row and the length of its text as
// unsigned varints, followed by the text.
func appendInvalid(buf []byte, k int, cells []InvalidCell) []byte {
	buf = binary.AppendUvarint(buf, uint64(k))
	buf = binary.AppendUvarint(buf, uint64(len(cells)))
	for _, c := range cells {
		buf = binary.AppendUvarint(buf, uint64(c.Row))
		buf = binary.AppendUvarint(buf, uint64(len(c.Text)))
		buf = append(buf, c.Text...)
	}
	return buf
}

// readInvalid reverses appendInvalid for a batch of rows rows and columns
// columns, leaving out the columns skip marks.
func readInvalid(data []byte, rows, columns int, skip []bool) (map[int][]InvalidCell, error) {
	var out map[int][]InvalidCell
	// next reads a varint below limit.
	next := func(limit int) (int, error) {
		v, k := binary.Uvarint(data)
		if k <= 0 || v >= uint64(limit) {
			return 0, errDamaged
		}
		data = data[k:]
		return int(v), nil
	}
	for len(data) > 0 {
		col, err := next(columns)
		if err != nil {
			return nil, err
		}
		n, err := next(rows + 1)
		if err != nil {
			return nil, err
		}
		cells := make([]InvalidCell, n)
		for i := range cells {
			row, err := next(rows)
			if err != nil {
				return nil, err
			}
			size, err := next(len(data) + 1)
			if err != nil {
				return nil, err
			}
			cells[i] = InvalidCell{Row: row, Text: string(data[:size])}
			data = data[size:]
		}
		if skip != nil && skip[col] {
			continue
		}
		if out == nil {
			out = make(map[int][]InvalidCell)
		}
		out[col] = cells
	}
	return out, nil
}

// readSpillMeta makes the batch of a spilled record batch, without its
// Record, and reads into params the parameters of its columns packed as
// packs says.
func readSpillMeta(rec arrow.RecordBatch, columns int, skip []bool, packs []packing, params []int64) (*Batch, error) {
	rm, ok := rec.(arrow.RecordBatchWithMetadata)
	if !ok {
		return nil, errors.New("a record batch without its metadata")
	}
	meta := rm.Metadata()
	get := func(key string) (string, bool) {
		i := meta.FindKey(key)
		if i < 0 {
			return "", false
		}
		return meta.Values()[i], true
	}
	num := func(key string) (int64, error) {
		v, _ := get(key)
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil {
			return 0, fmt.Errorf("damaged %s: %w", key, err)
		}
		return n, nil
	}
	b := &Batch{}
	src, err := num(metaSource)
	if err != nil {
		return nil, err
	}
	b.Source = int(src)
	if b.FirstRow, err = num(metaFirst); err != nil {
		return nil, err
	}
	if b.Offset, err = num(metaOffset); err != nil {
		return nil, err
	}
	if v, ok := get(metaLines); ok {
		if b.Lines, err = readLines([]byte(v), int(rec.NumRows())); err != nil {
			return nil, err
		}
	}
	if v, ok := get(metaInvalid); ok {
		if b.Invalid, err = readInvalid([]byte(v), int(rec.NumRows()), columns, skip); err != nil {
			return nil, err
		}
	}
	v, _ := get(metaPacking)
	if err := readPackings([]byte(v), packs, params); err != nil {
		return nil, err
	}
	return b, nil
}
