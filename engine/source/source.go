package source

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// DefaultNulls are the cell texts read as null when Options.Nulls is nil.
var DefaultNulls = []string{"", "NA", "N/A", "null", "NULL"}

// Defaults of Options.
const (
	DefaultBatchRows  = 65536
	DefaultSampleRows = 10000
)

// Options says how to read the inputs. The zero value reads comma-separated
// text with a header, double quotes and the default null tokens.
type Options struct {
	Delimiter rune     // CSV field separator, one ASCII character; 0 means ','
	Quote     rune     // CSV quote character, one ASCII character; 0 means '"'
	NoQuote   bool     // quotes are ordinary text
	NoHeader  bool     // the first CSV line is data; columns are named column_1, column_2, ...
	Nulls     []string // cell texts read as null; nil means DefaultNulls, empty means none

	// Types declares column types by name. Each must be one of
	// arrow.PrimitiveTypes.Int64, arrow.PrimitiveTypes.Float64,
	// arrow.BinaryTypes.String, arrow.FixedWidthTypes.Boolean,
	// arrow.FixedWidthTypes.Timestamp_us (UTC) or arrow.FixedWidthTypes.Date32.
	// A declared type takes precedence over CSV type inference and over the
	// type a Parquet or Arrow file stores. Names absent from the data are
	// ignored.
	Types map[string]arrow.DataType

	BatchRows int // rows per CSV batch; 0 means DefaultBatchRows
	// ParseWorkers is how many goroutines parse the batches of a CSV file
	// with a header at once; 0 means min(GOMAXPROCS, 4), 1 parses on the
	// goroutine that calls Scan. The batches, their rows and lines and the
	// errors are the same whatever the number.
	ParseWorkers int
	SampleRows   int // CSV rows per file used to infer types; 0 means DefaultSampleRows

	TempDir   string           // folder for temporary files (the copy of standard input, spills); "" means os.TempDir()
	Stdin     io.Reader        // what "-" reads; nil means os.Stdin
	Allocator memory.Allocator // nil means memory.DefaultAllocator

	bufferSize int // first size of the CSV read buffer; 0 means defaultBufferSize (tests shrink it)
}

// File describes one input of a Set.
type File struct {
	Path   string // as given or matched; "-" for standard input
	Format Format
	Gzip   bool  // gzip-compressed CSV
	Rows   int64 // data rows; -1 until known (Parquet knows at Open, others after a full Scan)
	Size   int64 // bytes as stored (for standard input, of its temporary copy)
}

// Set is a list of input files read as one table: the same columns in every
// file, data rows numbered across the files in order. A Set is not safe for
// concurrent use.
type Set struct {
	opts   Options
	nulls  *nullSet
	inputs []*input
	schema *arrow.Schema
	spool  string    // the copy of standard input, removed by Close
	text   bool      // the scan under way keeps CSV cell texts (ScanText)
	pool   *recycler // the memory of Parquet pages and of flat columns' batches but text bytes
}

// input is one file of a Set and how to read it.
type input struct {
	File
	name  string           // in messages: Path, or "stdin"
	open  string           // what to open: Path, or the copy of standard input
	names []string         // columns in the file's order
	types []arrow.DataType // CSV: inferred; others: as stored
	pos   []int            // for each column of the Set, its position in the file
	conv  []converter      // Parquet and Arrow: for each column of the Set, nil when stored as read
}

// Open prepares to read the files at paths as one table.
//
// Each path is a file, a glob pattern (matches sorted; a pattern matching
// nothing is an error) or "-" for standard input, which is copied to a
// temporary file so that it can be read more than once. A file named twice
// is read once. The format comes from the content: Parquet by its "PAR1"
// magic, an Arrow IPC file by "ARROW1", an Arrow IPC stream by its leading
// continuation marker, gzip-compressed CSV by the gzip magic; otherwise from
// the extension (.parquet, .pq, .arrow, .feather, .arrows), and CSV for
// anything else.
//
// Open reads every file's header or schema and a sample of each CSV file to
// infer its types (see inferKind), and checks that all files have the same
// column names (their order may differ). A column's type is the declared
// one, else the type its files agree on: integer and number columns join as
// number, CSV inferences that disagree otherwise as string, and a Parquet or
// Arrow type wins over a CSV inference.
func Open(paths []string, opts Options) (*Set, error) {
	o, err := opts.normalize()
	if err != nil {
		return nil, err
	}
	s := &Set{opts: o, nulls: newNullSet(o.Nulls), pool: newRecycler(o.Allocator)}
	if err := s.init(paths); err != nil {
		_ = s.Close()
		return nil, err
	}
	return s, nil
}

// parseWorkers returns the goroutines that parse CSV batches at once.
func (s *Set) parseWorkers() int {
	if s.opts.ParseWorkers > 0 {
		return s.opts.ParseWorkers
	}
	return min(runtime.GOMAXPROCS(0), 4)
}

// normalize fills in defaults and checks the options.
func (o Options) normalize() (Options, error) {
	if o.Delimiter == 0 {
		o.Delimiter = ','
	}
	if o.Quote == 0 {
		o.Quote = '"'
	}
	if o.Nulls == nil {
		o.Nulls = DefaultNulls
	}
	if o.BatchRows <= 0 {
		o.BatchRows = DefaultBatchRows
	}
	if o.SampleRows <= 0 {
		o.SampleRows = DefaultSampleRows
	}
	if o.Allocator == nil {
		o.Allocator = memory.DefaultAllocator
	}
	if o.Stdin == nil {
		o.Stdin = os.Stdin
	}
	bad := func(r rune) bool {
		return r >= utf8.RuneSelf || r == '\n' || r == '\r' || r == 0
	}
	switch {
	case bad(o.Delimiter):
		return o, &Error{Msg: fmt.Sprintf("the CSV delimiter %q must be one ASCII character other than a line break", o.Delimiter)}
	case !o.NoQuote && bad(o.Quote):
		return o, &Error{Msg: fmt.Sprintf("the CSV quote %q must be one ASCII character other than a line break", o.Quote)}
	case !o.NoQuote && o.Quote == o.Delimiter:
		return o, &Error{Msg: fmt.Sprintf("the CSV quote and delimiter are both %q; they must differ", o.Quote)}
	}
	names := make([]string, 0, len(o.Types))
	for name := range o.Types {
		names = append(names, name)
	}
	slices.Sort(names)
	for _, name := range names {
		if _, ok := kindOf(o.Types[name]); !ok {
			return o, &Error{Column: name, Msg: fmt.Sprintf(
				"column %q: cannot read a column as %s (declare integer, number, string, boolean, timestamp or date)", name, o.Types[name])}
		}
	}
	return o, nil
}

func (s *Set) init(paths []string) error {
	if len(paths) == 0 {
		return &Error{Msg: "no data files given (name files, patterns, or - for standard input)"}
	}
	if err := s.expand(paths); err != nil {
		return err
	}
	for _, in := range s.inputs {
		if err := s.inspect(in); err != nil {
			return err
		}
	}
	return s.unify()
}

// expand turns paths into s.inputs.
func (s *Set) expand(paths []string) error {
	seen := make(map[string]bool)
	add := func(p string) {
		if !seen[p] {
			seen[p] = true
			s.inputs = append(s.inputs, &input{File: File{Path: p, Rows: -1}, name: p, open: p})
		}
	}
	for _, p := range paths {
		switch {
		case p == "-":
			if seen[p] {
				continue
			}
			if err := s.spoolStdin(); err != nil {
				return err
			}
			add(p)
			in := s.inputs[len(s.inputs)-1]
			in.name, in.open = "stdin", s.spool
		case strings.ContainsAny(p, "*?["):
			matches, err := filepath.Glob(p)
			if err != nil {
				return errorf(p, "malformed pattern (check its brackets)")
			}
			slices.Sort(matches)
			found := false
			for _, m := range matches {
				if fi, err := os.Stat(m); err == nil && fi.Mode().IsRegular() {
					add(m)
					found = true
				}
			}
			if !found {
				return errorf(p, "no file matches this pattern (check the folder and the spelling)")
			}
		default:
			fi, err := os.Stat(p)
			switch {
			case errors.Is(err, fs.ErrNotExist):
				return &Error{Path: p, Msg: "no such file (check the path)", Err: err}
			case err != nil:
				return &Error{Path: p, Msg: "cannot read the file: " + pathErrText(err), Err: err}
			case fi.IsDir():
				return errorf(p, "is a folder (name the files, or a pattern such as %s)", filepath.Join(p, "*.csv"))
			}
			add(p)
		}
	}
	return nil
}

// pathErrText is the reason of a file-system error without the path, which
// the message already names.
func pathErrText(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// spoolStdin copies standard input to a temporary file.
func (s *Set) spoolStdin() error {
	f, err := os.CreateTemp(s.opts.TempDir, "assay-stdin-*")
	if err != nil {
		return &Error{Path: "stdin", Err: err,
			Msg: "cannot make a temporary copy: " + pathErrText(err) + " (set a writable temporary folder)"}
	}
	s.spool = f.Name()
	_, err = io.Copy(f, s.opts.Stdin)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return &Error{Path: "stdin", Err: err, Msg: "cannot copy standard input to a temporary file: " + pathErrText(err)}
	}
	return nil
}

// Close removes the temporary copy of standard input, if any, and gives
// the memory kept for reuse back to the allocator of Options.
func (s *Set) Close() error {
	s.pool.close()
	if s.spool == "" {
		return nil
	}
	err := os.Remove(s.spool)
	s.spool = ""
	return err
}

// Schema returns the columns of the set, with the types they are read as.
func (s *Set) Schema() *arrow.Schema { return s.schema }

// Files returns the inputs in reading order.
func (s *Set) Files() []File {
	out := make([]File, len(s.inputs))
	for i, in := range s.inputs {
		out[i] = in.File
	}
	return out
}

// headSize is how much of a file detection looks at.
const headSize = 512

// inspect detects the format of in and reads its columns.
func (s *Set) inspect(in *input) error {
	f, size, err := openFile(in)
	if err != nil {
		return err
	}
	defer f.Close()
	in.Size = size
	if size == 0 {
		return errorf(in.name, "the file is empty (0 bytes); expected CSV with a header line, Parquet or Arrow")
	}
	head := make([]byte, min(size, headSize))
	if _, err := f.ReadAt(head, 0); err != nil {
		return &Error{Path: in.name, Msg: "cannot read the file: " + pathErrText(err), Err: err}
	}
	in.Format, in.Gzip, err = detect(in.name, head)
	if err != nil {
		return err
	}
	switch in.Format {
	case Parquet:
		return s.inspectParquet(in, f, size)
	case ArrowFile:
		return s.inspectArrowFile(in, f, size)
	case ArrowStream:
		return s.inspectArrowStream(in, f, size)
	}
	return s.inspectCSV(in)
}

// openFile opens the file of in and returns its size.
func openFile(in *input) (*os.File, int64, error) {
	f, err := os.Open(in.open)
	if err != nil {
		return nil, 0, &Error{Path: in.name, Msg: "cannot open the file: " + pathErrText(err), Err: err}
	}
	fi, err := f.Stat()
	if err != nil {
		_ = f.Close()
		return nil, 0, &Error{Path: in.name, Msg: "cannot read the file: " + pathErrText(err), Err: err}
	}
	return f, fi.Size(), nil
}

// Leading bytes of the binary formats.
var (
	parquetMagic = []byte("PAR1")
	arrowMagic   = []byte("ARROW1")
	streamMagic  = []byte{0xff, 0xff, 0xff, 0xff} // the continuation marker before the schema message
	gzipMagic    = []byte{0x1f, 0x8b}
)

// detect tells the format of a file from its first bytes, else from its
// name.
func detect(name string, head []byte) (Format, bool, error) {
	switch {
	case bytes.HasPrefix(head, parquetMagic):
		return Parquet, false, nil
	case bytes.HasPrefix(head, arrowMagic):
		return ArrowFile, false, nil
	case bytes.HasPrefix(head, streamMagic) && len(head) >= 8:
		return ArrowStream, false, nil
	case bytes.HasPrefix(head, gzipMagic):
		return CSV, true, nil
	}
	looks := "does not look like text either"
	if utf8.Valid(trimPartialRune(head)) && bytes.IndexByte(head, 0) < 0 {
		looks = "looks like text (if it is CSV, name it .csv)"
	}
	ext := strings.ToLower(filepath.Ext(name))
	switch ext {
	case ".parquet", ".pq", ".parq":
		return 0, false, errorf(name, "not a Parquet file: it does not start with \"PAR1\" and %s", looks)
	case ".arrow", ".feather", ".ipc":
		return 0, false, errorf(name, "not an Arrow IPC file: it does not start with \"ARROW1\" and %s", looks)
	case ".arrows":
		return ArrowStream, false, nil
	case ".gz", ".gzip":
		return 0, false, errorf(name, "not gzip-compressed: it does not start with the gzip magic bytes 1f 8b and %s", looks)
	}
	return CSV, false, nil
}

// trimPartialRune drops a multi-byte character cut off at the end of b.
func trimPartialRune(b []byte) []byte {
	for i := len(b) - 1; i >= 0 && i >= len(b)-utf8.UTFMax; i-- {
		if utf8.RuneStart(b[i]) {
			if !utf8.FullRune(b[i:]) {
				return b[:i]
			}
			break
		}
	}
	return b
}

// unify checks that all inputs have the same columns and settles each
// column's type.
func (s *Set) unify() error {
	first := s.inputs[0]
	for _, in := range s.inputs[1:] {
		if err := sameColumns(first, in); err != nil {
			return err
		}
	}
	fields := make([]arrow.Field, len(first.names))
	for k, name := range first.names {
		t, err := s.columnType(name)
		if err != nil {
			return err
		}
		fields[k] = arrow.Field{Name: name, Type: t, Nullable: true}
	}
	s.schema = arrow.NewSchema(fields, nil)
	for _, in := range s.inputs {
		in.pos = make([]int, len(fields))
		if in.Format != CSV {
			in.conv = make([]converter, len(fields))
		}
		for k, f := range fields {
			j := slices.Index(in.names, f.Name)
			in.pos[k] = j
			if in.Format == CSV {
				continue
			}
			conv, ok := newConverter(in.types[j], f.Type)
			if !ok {
				return &Error{Path: in.name, Column: f.Name, Msg: fmt.Sprintf(
					"column %q is stored as %s and cannot be read as %s (change its declared type)",
					f.Name, typeName(in.types[j]), typeName(f.Type))}
			}
			in.conv[k] = conv
		}
	}
	return nil
}

// sameColumns checks that in has the columns of first.
func sameColumns(first, in *input) error {
	var missing, extra []string
	for _, n := range first.names {
		if !slices.Contains(in.names, n) {
			missing = append(missing, n)
		}
	}
	for _, n := range in.names {
		if !slices.Contains(first.names, n) {
			extra = append(extra, n)
		}
	}
	if missing == nil && extra == nil {
		return nil
	}
	var parts []string
	if missing != nil {
		parts = append(parts, "lacks "+quoteList(missing))
	}
	if extra != nil {
		parts = append(parts, "has "+quoteList(extra)+" in addition")
	}
	return errorf(in.name, "its columns differ from those of %s: it %s (all files must have the same columns)",
		first.name, strings.Join(parts, " and "))
}

// columnType settles the type of the named column over all inputs.
func (s *Set) columnType(name string) (arrow.DataType, error) {
	if t, ok := s.opts.Types[name]; ok {
		return t, nil
	}
	var stored, inferred arrow.DataType
	var storedIn *input
	for _, in := range s.inputs {
		t := in.types[slices.Index(in.names, name)]
		if in.Format == CSV {
			inferred = joinInferred(inferred, t)
			continue
		}
		t = normalType(t)
		switch {
		case stored == nil:
			stored, storedIn = t, in
		case arrow.TypeEqual(stored, t):
		case isNumber(stored) && isNumber(t):
			stored = tFloat64
		default:
			return nil, &Error{Path: in.name, Column: name, Msg: fmt.Sprintf(
				"column %q is %s here but %s in %s (declare its type to read both)",
				name, typeName(t), typeName(stored), storedIn.name)}
		}
	}
	switch {
	case stored == nil:
		return inferred, nil
	case inferred == nil || arrow.TypeEqual(stored, inferred):
		return stored, nil
	case isNumber(stored) && isNumber(inferred):
		return tFloat64, nil
	}
	if _, ok := kindOf(stored); !ok {
		return nil, &Error{Path: storedIn.name, Column: name, Msg: fmt.Sprintf(
			"column %q is stored as %s, which the CSV files cannot hold (declare its type to read both)",
			name, typeName(stored))}
	}
	return stored, nil
}

// joinInferred joins two inferred CSV types: integer and number make
// number, other disagreements string.
func joinInferred(a, b arrow.DataType) arrow.DataType {
	switch {
	case a == nil || arrow.TypeEqual(a, b):
		return b
	case isNumber(a) && isNumber(b):
		return tFloat64
	}
	return tString
}

func isNumber(t arrow.DataType) bool {
	return arrow.TypeEqual(t, tInt64) || arrow.TypeEqual(t, tFloat64)
}

// Scan reads the inputs in order and calls fn with each batch of rows.
//
// columns selects the columns of the batches, in that order; nil means all
// columns of Schema. Batches number rows across files (FirstRow). Scan
// releases each batch after fn returns; fn retains the batch's Record to
// keep it longer. An error from fn stops the scan and is returned as is.
// Scan may be called again for another pass.
func (s *Set) Scan(ctx context.Context, columns []string, fn func(*Batch) error) error {
	return s.ScanSome(ctx, columns, nil, fn)
}

// ScanSome is Scan that leaves out the values of some columns: skip[i]
// true skips columns[i] (with columns nil, the i-th column of Schema). The
// batches have the schema of Scan(columns), but a skipped column comes as
// an all-null array of its type, with no Invalid cells; row numbers, lines
// and batch boundaries are those of Scan. A nil skip is Scan.
//
// What a skipped column saves depends on the format: Parquet does not read
// its column chunks at all (so damage confined to them goes unnoticed), CSV
// still splits its fields but does not convert them, and Arrow IPC decodes
// the stored batch and drops the column.
func (s *Set) ScanSome(ctx context.Context, columns []string, skip []bool, fn func(*Batch) error) error {
	proj, schema, err := s.project(columns)
	if err != nil {
		return err
	}
	if skip != nil && len(skip) != len(proj) {
		return &Error{Msg: fmt.Sprintf("%d skip flags for %d columns (give one per column)", len(skip), len(proj))}
	}
	if !slices.Contains(skip, true) {
		skip = nil
	}
	sc := &scan{proj: proj, schema: schema, skip: skip, nulls: newNullArrays(s.opts.Allocator), fn: fn}
	defer sc.nulls.release()
	first := int64(1)
	for i, in := range s.inputs {
		var rows int64
		switch in.Format {
		case CSV:
			rows, err = s.scanCSV(ctx, i, sc, first)
		case Parquet:
			rows, err = s.scanParquet(ctx, i, sc, first)
		default:
			rows, err = s.scanArrow(ctx, i, sc, first)
		}
		if err != nil {
			return err
		}
		in.Rows = rows
		first += rows
	}
	return nil
}

// scan is what one Scan or ScanSome call reads and where it delivers.
type scan struct {
	proj   []int         // for each column of the batches, its index in the Set's schema
	schema *arrow.Schema // of the batches
	skip   []bool        // by column of the batches; nil when none is skipped
	nulls  *nullArrays   // the all-null stand-ins of skipped columns
	fn     func(*Batch) error
}

// skipped reports whether column k of the batches is skipped.
func (sc *scan) skipped(k int) bool { return sc.skip != nil && sc.skip[k] }

// ScanText is Scan with the cells of CSV inputs also kept as written, in
// Batch.Text, for a caller that copies rows out as they were (at the cost
// of a second copy of their text).
func (s *Set) ScanText(ctx context.Context, columns []string, fn func(*Batch) error) error {
	s.text = true
	defer func() { s.text = false }()
	return s.Scan(ctx, columns, fn)
}

// project maps column names to their indices in the schema and returns the
// schema of the batches.
func (s *Set) project(columns []string) ([]int, *arrow.Schema, error) {
	if columns == nil {
		proj := make([]int, s.schema.NumFields())
		for i := range proj {
			proj[i] = i
		}
		return proj, s.schema, nil
	}
	proj := make([]int, len(columns))
	fields := make([]arrow.Field, len(columns))
	for i, name := range columns {
		idx := s.schema.FieldIndices(name)
		if len(idx) == 0 {
			return nil, nil, &Error{Column: name, Msg: fmt.Sprintf("no column %q in the data (it has %s)",
				name, quoteList(s.inputs[0].names))}
		}
		if slices.Contains(columns[:i], name) {
			return nil, nil, &Error{Column: name, Msg: fmt.Sprintf("column %q is asked for twice", name)}
		}
		proj[i], fields[i] = idx[0], s.schema.Field(idx[0])
	}
	return proj, arrow.NewSchema(fields, nil), nil
}

// columnNames returns column_1 ... column_n.
func columnNames(n int) []string {
	names := make([]string, n)
	for i := range names {
		names[i] = "column_" + strconv.Itoa(i+1)
	}
	return names
}

// checkNames rejects empty and repeated column names of a file.
func checkNames(in *input, line int64) error {
	for i, n := range in.names {
		if n == "" {
			return &Error{Path: in.name, Line: line, Msg: fmt.Sprintf(
				"column %d has no name (name every column in the header, or read the file without a header)", i+1)}
		}
		if j := slices.Index(in.names[:i], n); j >= 0 {
			return &Error{Path: in.name, Line: line, Column: n, Msg: fmt.Sprintf(
				"column name %q appears twice, as columns %d and %d (rename one)", n, j+1, i+1)}
		}
	}
	return nil
}
