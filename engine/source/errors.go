package source

import (
	"fmt"
	"strconv"
	"strings"
)

// Error is a problem with the input, located as precisely as the reader
// knows it. Every error this package returns about a file, a row or a cell
// is an *Error; errors the caller's own callback returns pass through
// unchanged.
//
// It prints as "path:line: message", or "path: message" when no line is
// known; Msg says what is wrong and what to do about it.
type Error struct {
	Path   string // the file as the user named it; "stdin" for standard input
	Line   int64  // 1-based line of a text file; 0 when not known or not text
	Row    int64  // 1-based data row within the file, header excluded; 0 when not about a row
	Column string // the column concerned; "" when not about one column
	Msg    string // lower case, no final period
	Err    error  // the underlying error, if any, for errors.Is and errors.As
}

func (e *Error) Error() string {
	var b strings.Builder
	if e.Path != "" {
		b.WriteString(e.Path)
		if e.Line > 0 {
			b.WriteByte(':')
			b.WriteString(strconv.FormatInt(e.Line, 10))
		}
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying error.
func (e *Error) Unwrap() error { return e.Err }

// errorf makes an *Error about a whole file.
func errorf(path string, format string, args ...any) *Error {
	return &Error{Path: path, Msg: fmt.Sprintf(format, args...)}
}

// quoteList writes names as `"a", "b"` for messages.
func quoteList(names []string) string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = strconv.Quote(n)
	}
	return strings.Join(q, ", ")
}
