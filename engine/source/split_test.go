package source

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// splitAll splits text with a splitter reading it in reads of at most
// chunk bytes into a buffer of bufSize, and returns each record as its
// line and fields, then the error that ended the text if any.
func splitAll(text []byte, chunk, bufSize int, quotes bool) []string {
	sp := newSplitter(&chunkReader{data: text, chunk: chunk}, ',', '"', quotes, bufSize)
	var out []string
	if err := sp.skipBOM(); err != nil {
		return append(out, "error: "+err.Error())
	}
	for {
		ok, err := sp.next()
		if err != nil {
			var se *splitError
			if !errors.As(err, &se) {
				return append(out, "error: "+err.Error())
			}
			return append(out, fmt.Sprintf("error on line %d in field %d: %s", se.line, se.field, se.msg))
		}
		if !ok {
			return out
		}
		rec := fmt.Sprintf("line %d:", sp.recLine)
		for _, f := range sp.fields {
			rec += fmt.Sprintf(" %q", sp.field(f))
		}
		out = append(out, rec)
	}
}

// chunkReader hands out data in reads of at most chunk bytes.
type chunkReader struct {
	data  []byte
	chunk int
}

func (r *chunkReader) Read(p []byte) (int, error) {
	if len(r.data) == 0 {
		return 0, io.EOF
	}
	n := copy(p[:min(len(p), r.chunk)], r.data)
	r.data = r.data[n:]
	return n, nil
}

// TestSplitBlocks checks the block path of the splitter (plainLine on
// whole 64-byte blocks of a large buffer) against the byte path it takes
// when the buffer holds no whole block (a buffer grown one record at a
// time from reads of a few bytes): on random texts of long and short
// lines mixing plain bytes with delimiters, quotes, CR, LF, NUL, UTF-8 and
// invalid bytes, both must give the same records, lines, cells and errors.
func TestSplitBlocks(t *testing.T) {
	alphabet := [][]byte{[]byte("a"), []byte("7"), []byte(","), []byte(","), []byte("\n"), []byte("\r\n"),
		[]byte("\""), []byte("\r"), []byte("\x00"), []byte("é"), []byte("\xff"), []byte("\"\""), []byte("x,y")}
	rng := rand.New(rand.NewPCG(5, 6))
	for n := range 3000 {
		var text []byte
		for range 1 + rng.IntN(400) {
			switch r := rng.IntN(100); {
			case r < 70:
				text = append(text, "abcdefghij0123456789"[rng.IntN(20)])
			case r < 85:
				text = append(text, ',')
			case r < 90:
				text = append(text, '\n')
			default:
				text = append(text, alphabet[rng.IntN(len(alphabet))]...)
			}
		}
		quotes := n%3 != 0
		want := splitAll(text, 3, 1, quotes)
		for _, bufSize := range []int{64, 1 << 20} {
			if got := splitAll(text, len(text)+1, bufSize, quotes); !slices.Equal(got, want) {
				t.Fatalf("text %q, quotes %v, buffer %d:\n got %q\nwant %q", text, quotes, bufSize, got, want)
			}
		}
	}
}

// TestSplitLongLines checks records that span several blocks, with the
// delimiter, CRLF, non-ASCII bytes and quoted cells (holding a delimiter
// and a doubled quote, in otherwise ASCII text) at each position of a
// block.
func TestSplitLongLines(t *testing.T) {
	for width := 1; width <= 70; width += 3 {
		var text bytes.Buffer
		var want []string
		for row := range 40 {
			cells := make([]string, 1+row%5)
			rec := fmt.Sprintf("line %d:", row+1)
			for k := range cells {
				c := bytes.Repeat([]byte{'a' + byte(k)}, width+row%7)
				if row%4 == 1 {
					c[len(c)/2] = 0xc3 // "é" in the middle
					c = append(c[:len(c)/2+1], append([]byte{0xa9}, c[len(c)/2+1:]...)...)
				}
				cells[k] = string(c)
				if row%4 == 2 && k == len(cells)-1 { // quoted, with a delimiter and a quote
					c = append(c, ',', '"')
					cells[k] = `"` + strings.ReplaceAll(string(c), `"`, `""`) + `"`
				}
				rec += fmt.Sprintf(" %q", c)
			}
			text.WriteString(strings.Join(cells, ","))
			if row%3 == 0 {
				text.WriteString("\r")
			}
			text.WriteString("\n")
			want = append(want, rec)
		}
		if got := splitAll(text.Bytes(), text.Len()+1, 1<<20, true); !slices.Equal(got, want) {
			t.Fatalf("width %d:\n got %q\nwant %q", width, got, want)
		}
	}
}
