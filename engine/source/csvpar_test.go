package source

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

// manyRows returns a header and n rows whose cells take turns being plain,
// quoted with a delimiter, doubled quotes or a line break, and empty.
func manyRows(n int) string {
	var b strings.Builder
	b.WriteString("id,note,x\n")
	for i := range n {
		note := [...]string{"plain", "\"a, b\"", "\"say \"\"hi\"\"\"", "\"two\nlines\"", ""}[i%5]
		fmt.Fprintf(&b, "%d,%s,%d.5\n", i, note, i%7)
	}
	return b.String()
}

// TestCSVParallel reads texts that put the cuts of parallel parsing in
// every awkward place (a quote inside an unquoted field, which fools the
// cutter, quoted line breaks, blank lines and CRLF at the cuts, errors in
// later batches, a truncated gzip stream) and checks that three workers
// give what one gives: the same batches, rows, lines, cells and errors.
func TestCSVParallel(t *testing.T) {
	long := manyRows(3000)
	var typed strings.Builder // cells of every kind, some null, some invalid
	typed.WriteString("i,f,t,d,b,s\n")
	for k := range 1000 {
		fmt.Fprintf(&typed, "%s,%s,%s,%s,%s,%s\n",
			[...]string{fmt.Sprint(k), "-1", "", "x", "12345678901"}[k%5],
			[...]string{fmt.Sprintf("%d.%d", k, k%7), "-1", "", "1e5", "1_5", "-.25"}[k%6],
			[...]string{"2024-01-02T03:04:05Z", "2024-01-02T03:04:06Z", "", "2024-02-30T00:00:00Z"}[k%4],
			[...]string{"2024-01-02", "2024-01-02", "NA", "2024-01-32", "2024-01-03"}[k%5],
			[...]string{"true", "false", "", "yes"}[k%4],
			[...]string{"a", "-1", "", "NULL"}[k%4])
	}
	types := map[string]arrow.DataType{"i": tInt64, "f": tFloat64, "t": tTimestamp, "d": tDate, "b": tBoolean, "s": tString}
	cases := []struct {
		name  string
		text  string
		gzip  bool
		opts  Options
		fails bool // the scan ends with an error
	}{
		{name: "many rows", text: long, opts: Options{BatchRows: 64}},
		{name: "many rows, one batch", text: long},
		{name: "many rows gzip", text: long, gzip: true, opts: Options{BatchRows: 100}},
		{name: "typed cells, nulls and invalid cells", text: typed.String(), opts: Options{BatchRows: 150, Types: types}},
		{name: "typed cells, null tokens that are numbers", text: typed.String(),
			opts: Options{BatchRows: 150, Types: types, Nulls: []string{"", "-1", "NA"}}},
		{name: "stray quotes in unquoted fields", opts: Options{BatchRows: 2},
			text: "a,b\n1,x\"y\n2,z\n3,\"q\"\n4,5\"\n6,7\n8,\"9\n10\"\n11,12\n"},
		{name: "stray quote then a long quoted field", opts: Options{BatchRows: 3},
			text: "a,b\n1,x\"\n2,\"m\n\nn\"\n3,y\n4,z\n5,w\"\n6,v\n"},
		{name: "quoted line breaks across cuts", opts: Options{BatchRows: 1},
			text: "a,b\n\"x\ny\",1\n\"\n\",2\n3,\"z\r\n\"\n"},
		{name: "blank lines and CRLF at cuts", opts: Options{BatchRows: 2},
			text: "a,b\r\n\r\n1,2\r\n\n\n3,4\r\n5,6\n\r\n\n7,8\n\n"},
		{name: "no final line break", opts: Options{BatchRows: 2}, text: "a,b\n1,2\n3,4\n5,6"},
		{name: "lone carriage return at the end", opts: Options{BatchRows: 2}, text: "a,b\n1,2\n3,4\n\r"},
		{name: "carriage return in a cell", opts: Options{BatchRows: 1}, text: "a,b\n1,x\ry\n2,\r\n"},
		{name: "width error in a later batch", opts: Options{BatchRows: 2, SampleRows: 1},
			text: "a,b\n1,2\n3,4\n5,6\n7\n9,10\n", fails: true},
		{name: "bad UTF-8 in a later batch", opts: Options{BatchRows: 2, SampleRows: 1},
			text: "a,b\n1,2\n3,4\n5,\xff\n7,8\n", fails: true},
		{name: "NUL in a later batch", opts: Options{BatchRows: 2, SampleRows: 1},
			text: "a,b\n1,2\n3,4\n5,6\n7,\x00\n", fails: true},
		{name: "text after a closing quote", opts: Options{BatchRows: 2, SampleRows: 1},
			text: "a,b\n1,2\n3,\"4\"x\n", fails: true},
		{name: "quote never closed", opts: Options{BatchRows: 2, SampleRows: 1},
			text: "a,b\n1,2\n3,4\n5,\"6\n7,8\n", fails: true},
		{name: "truncated gzip", gzip: true, opts: Options{BatchRows: 50, SampleRows: 5, bufferSize: 64}, fails: true,
			text: long[:len(long)/2]},
		{name: "truncated gzip, larger than a read", gzip: true, opts: Options{BatchRows: 5000, SampleRows: 5}, fails: true,
			text: manyRows(60000)},
		{name: "stray quote early in a file larger than a read", opts: Options{BatchRows: 100},
			text: strings.Replace(manyRows(60000), "\n5,plain,5.5\n", "\n5,pl\"ain,5.5\n", 1)},
		{name: "no quoting", opts: Options{BatchRows: 2, NoQuote: true},
			text: "a,b\n\"1,2\n3\",\"4\n"},
		{name: "semicolons and single quotes", opts: Options{BatchRows: 2, Delimiter: ';', Quote: '\''},
			text: "a;b\n'x;y';1\n'it''s';2\n'm\nl';3\n"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			data := tc.text
			if tc.gzip {
				data = gz(t, data)
				if tc.fails {
					data = data[:len(data)*3/4]
				}
			}
			paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", data}})
			var dumps [2]string
			for k, workers := range []int{1, 3} {
				opts := tc.opts
				opts.Allocator = checkedMem(t)
				opts.ParseWorkers = workers
				s, err := Open(paths, opts)
				if err != nil {
					t.Fatal(err)
				}
				dumps[k] = scanDump(t, s, nil)
				s.Close()
			}
			if got := strings.Contains(dumps[0], "error: "); got != tc.fails {
				t.Fatalf("one worker (error %v, want %v):\n%s", got, tc.fails, dumps[0])
			}
			diff(t, dumps[1], dumps[0])
		})
	}
}

// TestCSVParallelText checks ScanText and ScanSome on three workers
// against one.
func TestCSVParallelText(t *testing.T) {
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", manyRows(500)}})
	var dumps [2]string
	for k, workers := range []int{1, 3} {
		s, err := Open(paths, Options{Allocator: checkedMem(t), ParseWorkers: workers, BatchRows: 37})
		if err != nil {
			t.Fatal(err)
		}
		var b strings.Builder
		err = s.ScanText(context.Background(), []string{"note", "x"}, func(bt *Batch) error {
			for i := range int(bt.Record.NumRows()) {
				fmt.Fprintf(&b, "%d:%d %q %s\n", bt.Row(i), bt.Line(i), bt.Text[0].Value(i), bt.Text[1].Value(i))
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		b.WriteString(skipDump(t, s, []string{"x", "note", "id"}, []bool{false, true, false}, true))
		dumps[k] = b.String()
		s.Close()
	}
	diff(t, dumps[1], dumps[0])
}

// TestCSVParallelStops checks that a callback error and a cancelled
// context stop a parallel scan, its workers ending and its batches
// released (the checked allocator ends at zero).
func TestCSVParallelStops(t *testing.T) {
	mem := checkedMem(t)
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", manyRows(1000)}})
	s, err := Open(paths, Options{Allocator: mem, ParseWorkers: 3, BatchRows: 10})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	stop := errors.New("stop")
	calls := 0
	err = s.Scan(context.Background(), nil, func(*Batch) error { calls++; return stop })
	if err != stop || calls != 1 {
		t.Errorf("scan returned %v after %d calls; want the callback's error after 1", err, calls)
	}
	ctx, cancel := context.WithCancel(context.Background())
	calls = 0
	err = s.Scan(ctx, nil, func(*Batch) error { calls++; cancel(); return nil })
	if !errors.Is(err, context.Canceled) || calls != 1 {
		t.Errorf("scan returned %v after %d calls; want context.Canceled after 1", err, calls)
	}
}

// TestCutterCounts checks that the cutter's pieces hold exactly the
// records it counted, as the splitter reads them, and end where they
// end, on texts of many plain lines with blank lines (LF and CRLF), quoted
// fields with line breaks and doubled quotes, and no final line break:
// where the cutter counts right no piece is read again.
func TestCutterCounts(t *testing.T) {
	var long strings.Builder
	for i := range 5000 {
		fmt.Fprintf(&long, "%d,plain text of some length,%d.25\n", i, i%13)
		switch i % 997 {
		case 5:
			long.WriteString("\n\n")
		case 6:
			long.WriteString("\r\n")
		case 7:
			long.WriteString("x,\"quoted, with\nline break\",\"\"\"\"\n")
		}
	}
	texts := []string{long.String(), manyRows(3000)[len("id,note,x\n"):], "1,2\n\n3,4\r\n\r\n5,6", "\n\n1\n", "a\n\"b\nc\"\nd"}
	for _, text := range texts {
		for _, want := range []int{1, 3, 100, 65536} {
			c := &csvCutter{r: strings.NewReader(text), quote: '"', quotes: true, line: 1, read: &counter{}}
			var all strings.Builder
			for p := c.next(want); p != nil; p = c.next(want) {
				all.Write(p.data)
				sp := newSplitter(nil, ',', '"', true, 1)
				sp.reset(append([]byte(nil), p.data...), true, p.line)
				recs := 0
				for {
					ok, err := sp.next()
					if err != nil {
						t.Fatalf("piece at line %d: %v", p.line, err)
					}
					if !ok {
						break
					}
					recs++
				}
				if recs != p.want || p.want > want || p.want < want && !p.last {
					t.Fatalf("text %.40q, want %d: piece at line %d holds %d records; the cutter counted %d (last %v)",
						text, want, p.line, recs, p.want, p.last)
				}
			}
			// Only blank lines, if any, follow the last piece.
			if rest, ok := strings.CutPrefix(text, all.String()); c.failed || !ok || strings.Trim(rest, "\r\n") != "" {
				t.Fatalf("text %.40q, want %d: the pieces do not make up the text (failed %v)", text, want, c.failed)
			}
		}
	}
}
