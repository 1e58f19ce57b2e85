package source

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
)

// inspectArrowFile reads the schema of an Arrow IPC file input. The file
// format ends with its footer and "ARROW1"; a file that does not was cut
// short.
func (s *Set) inspectArrowFile(in *input, f *os.File, size int64) error {
	r, err := s.openArrowFile(in, f, size)
	if err != nil {
		return err
	}
	defer r.Close()
	setColumns(in, r.Schema())
	return checkNames(in, 0)
}

func (s *Set) openArrowFile(in *input, f *os.File, size int64) (*ipc.FileReader, error) {
	tail := make([]byte, len(arrowMagic))
	if size >= int64(2*len(arrowMagic)) {
		if _, err := f.ReadAt(tail, size-int64(len(tail))); err != nil {
			return nil, &Error{Path: in.name, Msg: "cannot read the file: " + pathErrText(err), Err: err}
		}
	}
	if !bytes.Equal(tail, arrowMagic) {
		return nil, errorf(in.name, "the Arrow file is truncated: it does not end with \"ARROW1\" (it was cut short; copy it again)")
	}
	r, err := ipc.NewFileReader(f, s.ipcOptions(size)...)
	if err != nil {
		return nil, &Error{Path: in.name, Err: err, Msg: "cannot read the Arrow file: " + err.Error() + " (the file is damaged; copy it again)"}
	}
	return r, nil
}

// inspectArrowStream reads the schema of an Arrow IPC stream input.
func (s *Set) inspectArrowStream(in *input, f *os.File, size int64) error {
	r, err := s.openArrowStream(in, f, size)
	if err != nil {
		return err
	}
	defer r.Release()
	setColumns(in, r.Schema())
	return checkNames(in, 0)
}

// ipcOptions are the reader options for an Arrow file of size bytes: no
// message can be larger than the file, so a damaged length fails at once
// instead of allocating what it claims; and none that fits is refused.
func (s *Set) ipcOptions(size int64) []ipc.Option {
	return []ipc.Option{ipc.WithAllocator(s.opts.Allocator), ipc.WithMetadataSizeLimit(size), ipc.WithBodySizeLimit(size)}
}

func (s *Set) openArrowStream(in *input, f *os.File, size int64) (*ipc.Reader, error) {
	// ipc.NewReader does not pass the size limits on to its message reader
	// (arrow-go v18.8.0), so build the two here.
	opts := s.ipcOptions(size)
	r, err := ipc.NewReaderFromMessageReader(ipc.NewMessageReader(f, opts...), opts...)
	if err != nil {
		return nil, &Error{Path: in.name, Err: err, Msg: "cannot read the Arrow stream's schema: " + err.Error() +
			" (the file is damaged or not an Arrow stream)"}
	}
	return r, nil
}

// scanArrow reads input i, an Arrow IPC file or stream, one stored record
// batch at a time. Skipped columns are decoded with the batch and dropped.
func (s *Set) scanArrow(ctx context.Context, i int, sc *scan, first int64) (int64, error) {
	in := s.inputs[i]
	f, size, err := openFile(in)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	// next returns the next stored batch, owned by the caller, or io.EOF.
	var next func() (arrow.RecordBatch, error)
	if in.Format == ArrowFile {
		r, err := s.openArrowFile(in, f, size)
		if err != nil {
			return 0, err
		}
		defer r.Close()
		k := 0
		next = func() (arrow.RecordBatch, error) {
			if k == r.NumRecords() {
				return nil, io.EOF
			}
			k++
			return r.RecordBatchAt(k - 1)
		}
	} else {
		r, err := s.openArrowStream(in, f, size)
		if err != nil {
			return 0, err
		}
		defer r.Release()
		next = func() (arrow.RecordBatch, error) {
			if !r.Next() {
				if err := r.Err(); err != nil {
					return nil, err
				}
				return nil, io.EOF
			}
			rec := r.RecordBatch()
			rec.Retain()
			return rec, nil
		}
	}
	stored := make([]arrow.Array, len(sc.proj))
	var rows int64
	for {
		if err := ctx.Err(); err != nil {
			return rows, err
		}
		rec, err := guard(next)
		if err == io.EOF {
			return rows, nil
		}
		if err != nil {
			msg := fmt.Sprintf("cannot read the Arrow data after row %d: %v (the file is damaged; copy it again)", rows, err)
			if errors.Is(err, io.ErrUnexpectedEOF) {
				msg = fmt.Sprintf("the Arrow stream ends inside a message after row %d (it was cut short; copy it again)", rows)
			}
			return rows, &Error{Path: in.name, Row: rows + 1, Err: err, Msg: msg}
		}
		n := rec.NumRows()
		if n > 0 {
			for k, c := range sc.proj {
				stored[k] = rec.Column(in.pos[c])
			}
			err = s.deliver(in, i, sc, stored, nil, n, first+rows)
		}
		rec.Release()
		if err != nil {
			return rows, err
		}
		rows += n
	}
}
