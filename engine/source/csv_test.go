package source

import (
	"bytes"
	"compress/gzip"
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

// gz compresses s.
func gz(t *testing.T, s string) string {
	t.Helper()
	var b bytes.Buffer
	w := gzip.NewWriter(&b)
	if _, err := w.Write([]byte(s)); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

type readCase struct {
	name  string
	files []inFile
	paths []string // relative to the folder of files; nil: the files in order
	opts  Options
	cols  []string
	want  string
}

// runReadCases runs each case with the default read buffer and with tiny
// ones, which make every record cross a buffer refill somewhere, parsing
// on the calling goroutine and on three workers.
func runReadCases(t *testing.T, cases []readCase) {
	t.Helper()
	for _, tc := range cases {
		for _, run := range []struct{ bufSize, workers int }{{0, 1}, {1, 1}, {3, 1}, {17, 1}, {0, 3}, {3, 3}} {
			bufSize := run.bufSize
			t.Run(fmt.Sprintf("%s/buffer=%d/workers=%d", tc.name, bufSize, run.workers), func(t *testing.T) {
				dir := t.TempDir()
				paths := writeFiles(t, dir, tc.files)
				if tc.paths != nil {
					paths = nil
					for _, p := range tc.paths {
						paths = append(paths, filepath.Join(dir, p))
					}
				}
				opts := tc.opts
				opts.Allocator = checkedMem(t)
				opts.bufferSize = bufSize
				opts.ParseWorkers = run.workers
				diff(t, openDump(t, paths, opts, tc.cols), tc.want)
			})
		}
	}
}

func TestCSV(t *testing.T) {
	runReadCases(t, []readCase{{
		name: "inference",
		files: []inFile{{"inference.csv", "id,weight,name,ok,at,day,empty\n" +
			"1,2.5,ann,true,2024-01-02T03:04:05Z,2024-01-02,\n" +
			"2,-3,\"bob, jr\",FALSE,2024-01-02 03:04:05.5+01:00,2024-02-29,NA\n"}},
		want: `schema: id:integer weight:number name:string ok:boolean at:timestamp day:date empty:string
batch source=0 first=1 rows=2
  row 1 line 2: id=1 weight=2.5 name="ann" ok=true at=2024-01-02T03:04:05Z day=2024-01-02 empty=null
  row 2 line 3: id=2 weight=-3 name="bob, jr" ok=false at=2024-01-02T02:04:05.5Z day=2024-02-29 empty=null
file inference.csv csv gzip=false rows=2
`,
	}, {
		name:  "quoting and CRLF",
		files: []inFile{{"q.csv", "a,b\r\n\"x \"\"q\"\" y\",\"multi\r\nline\"\r\n\"\",plain\r\n\"a,b\",\r\n\"\"\"\",\"\"\"\"\"\"\r\n"}},
		want: `schema: a:string b:string
batch source=0 first=1 rows=4
  row 1 line 2: a="x \"q\" y" b="multi\r\nline"
  row 2 line 4: a=null b="plain"
  row 3 line 5: a="a,b" b=null
  row 4 line 6: a="\"" b="\"\""
file q.csv csv gzip=false rows=4
`,
	}, {
		name:  "blank lines and no final line break",
		files: []inFile{{"b.csv", "\na,b\n\n1,2\n\r\n3,4"}},
		want: `schema: a:integer b:integer
batch source=0 first=1 rows=2
  row 1 line 4: a=1 b=2
  row 2 line 6: a=3 b=4
file b.csv csv gzip=false rows=2
`,
	}, {
		name:  "byte order mark",
		files: []inFile{{"bom.csv", "\xef\xbb\xbfid,v\n1,é\n"}},
		want: `schema: id:integer v:string
batch source=0 first=1 rows=1
  row 1 line 2: id=1 v="é"
file bom.csv csv gzip=false rows=1
`,
	}, {
		name:  "semicolon delimiter",
		files: []inFile{{"s.csv", "a;b\n1,5;2\n"}},
		opts:  Options{Delimiter: ';'},
		want: `schema: a:string b:integer
batch source=0 first=1 rows=1
  row 1 line 2: a="1,5" b=2
file s.csv csv gzip=false rows=1
`,
	}, {
		name:  "tab delimiter",
		files: []inFile{{"t.tsv", "a\tb\n\"x\ty\"\t2\n"}},
		opts:  Options{Delimiter: '\t'},
		want: `schema: a:string b:integer
batch source=0 first=1 rows=1
  row 1 line 2: a="x\ty" b=2
file t.tsv csv gzip=false rows=1
`,
	}, {
		name:  "quoting off",
		files: []inFile{{"n.csv", "a,b\n\"x,\"y\"\n"}},
		opts:  Options{NoQuote: true},
		want: `schema: a:string b:string
batch source=0 first=1 rows=1
  row 1 line 2: a="\"x" b="\"y\""
file n.csv csv gzip=false rows=1
`,
	}, {
		name:  "other quote character",
		files: []inFile{{"o.csv", "a,b\n'x,y',\"z\"\n'it''s',2\n"}},
		opts:  Options{Quote: '\''},
		want: `schema: a:string b:string
batch source=0 first=1 rows=2
  row 1 line 2: a="x,y" b="\"z\""
  row 2 line 3: a="it's" b="2"
file o.csv csv gzip=false rows=2
`,
	}, {
		name:  "a quote inside an unquoted field is text",
		files: []inFile{{"i.csv", "a,b\n5\",x\"y\"\n"}},
		want: `schema: a:string b:string
batch source=0 first=1 rows=1
  row 1 line 2: a="5\"" b="x\"y\""
file i.csv csv gzip=false rows=1
`,
	}, {
		name:  "no header",
		files: []inFile{{"h.csv", "1,a\n2,b\n"}},
		opts:  Options{NoHeader: true},
		want: `schema: column_1:integer column_2:string
batch source=0 first=1 rows=2
  row 1 line 1: column_1=1 column_2="a"
  row 2 line 2: column_1=2 column_2="b"
file h.csv csv gzip=false rows=2
`,
	}, {
		name:  "own null tokens",
		files: []inFile{{"nu.csv", "a,b\n-,\n1,x\n"}},
		opts:  Options{Nulls: []string{"-"}},
		want: `schema: a:integer b:string
batch source=0 first=1 rows=2
  row 1 line 2: a=null b=""
  row 2 line 3: a=1 b="x"
file nu.csv csv gzip=false rows=2
`,
	}, {
		name:  "null tokens that look like values",
		files: []inFile{{"nv.csv", "n,b\n-999,TRUE\n5,true\n,x\n"}},
		opts:  Options{Nulls: []string{"-999", "TRUE"}, Types: map[string]arrow.DataType{"n": tInt64, "b": tBoolean}},
		want: `schema: n:integer b:boolean
batch source=0 first=1 rows=3
  row 1 line 2: n=null b=null
  row 2 line 3: n=5 b=true
  row 3 line 4: n=!"" b=!"x"
file nv.csv csv gzip=false rows=3
`,
	}, {
		name:  "no null tokens",
		files: []inFile{{"nn.csv", "a\n\"\"\nNA\n"}},
		opts:  Options{Nulls: []string{}},
		want: `schema: a:string
batch source=0 first=1 rows=2
  row 1 line 2: a=""
  row 2 line 3: a="NA"
file nn.csv csv gzip=false rows=2
`,
	}, {
		name:  "declared types win over inference",
		files: []inFile{{"d.csv", "id,n,t\n1,5,2024-01-01\n2,x,2024-01-02T10:00:00Z\n"}},
		opts:  Options{Types: map[string]arrow.DataType{"id": tString, "n": tInt64, "t": tTimestamp, "absent": tBoolean}},
		want: `schema: id:string n:integer t:timestamp
batch source=0 first=1 rows=2
  row 1 line 2: id="1" n=5 t=!"2024-01-01"
  row 2 line 3: id="2" n=!"x" t=2024-01-02T10:00:00Z
file d.csv csv gzip=false rows=2
`,
	}, {
		name:  "cells past the sample that do not parse",
		files: []inFile{{"p.csv", "n,b\n1,true\n2,false\n3.5,yes\n\n4,\n"}},
		opts:  Options{SampleRows: 2},
		want: `schema: n:integer b:boolean
batch source=0 first=1 rows=4
  row 1 line 2: n=1 b=true
  row 2 line 3: n=2 b=false
  row 3 line 4: n=!"3.5" b=!"yes"
  row 4 line 6: n=4 b=null
file p.csv csv gzip=false rows=4
`,
	}, {
		name:  "number grammar",
		files: []inFile{{"g.csv", "n\n\" 5\"\n1_000\nInf\n.5\n5.\n-1.5e3\n0x10\n1e400\n"}},
		opts:  Options{Types: map[string]arrow.DataType{"n": tFloat64}},
		want: `schema: n:number
batch source=0 first=1 rows=8
  row 1 line 2: n=!" 5"
  row 2 line 3: n=!"1_000"
  row 3 line 4: n=!"Inf"
  row 4 line 5: n=0.5
  row 5 line 6: n=5
  row 6 line 7: n=-1500
  row 7 line 8: n=!"0x10"
  row 8 line 9: n=!"1e400"
file g.csv csv gzip=false rows=8
`,
	}, {
		name:  "declared date and boolean",
		files: []inFile{{"db.csv", "d,b\n2024-02-29,True\n2023-02-29,1\n"}},
		opts:  Options{Types: map[string]arrow.DataType{"d": tDate, "b": tBoolean}},
		want: `schema: d:date b:boolean
batch source=0 first=1 rows=2
  row 1 line 2: d=2024-02-29 b=true
  row 2 line 3: d=!"2023-02-29" b=!"1"
file db.csv csv gzip=false rows=2
`,
	}, {
		name:  "a column of nulls is string",
		files: []inFile{{"z.csv", "a,b\n1,\n2,NA\n"}},
		want: `schema: a:integer b:string
batch source=0 first=1 rows=2
  row 1 line 2: a=1 b=null
  row 2 line 3: a=2 b=null
file z.csv csv gzip=false rows=2
`,
	}, {
		name:  "a lone carriage return is text",
		files: []inFile{{"cr.csv", "a,b\n1,x\ry\n"}},
		want: `schema: a:integer b:string
batch source=0 first=1 rows=1
  row 1 line 2: a=1 b="x\ry"
file cr.csv csv gzip=false rows=1
`,
	}, {
		name:  "batches and lines with line breaks in quotes",
		files: []inFile{{"l.csv", "id,note\n1,\"a\nb\"\n2,c\n3,\"d\n\ne\"\n4,f\n5,g\n"}},
		opts:  Options{BatchRows: 2},
		want: `schema: id:integer note:string
batch source=0 first=1 rows=2
  row 1 line 2: id=1 note="a\nb"
  row 2 line 4: id=2 note="c"
batch source=0 first=3 rows=2
  row 3 line 5: id=3 note="d\n\ne"
  row 4 line 8: id=4 note="f"
batch source=0 first=5 rows=1
  row 5 line 9: id=5 note="g"
file l.csv csv gzip=false rows=5
`,
	}, {
		name:  "projection",
		files: []inFile{{"pr.csv", "a,b,c\n1,x,true\n"}},
		cols:  []string{"c", "a"},
		want: `schema: a:integer b:string c:boolean
batch source=0 first=1 rows=1
  row 1 line 2: c=true a=1
file pr.csv csv gzip=false rows=1
`,
	}, {
		name:  "no columns",
		files: []inFile{{"e.csv", "a,b\n1,x\n2,y\n"}},
		cols:  []string{},
		want: `schema: a:integer b:string
batch source=0 first=1 rows=2
  row 1 line 2:
  row 2 line 3:
file e.csv csv gzip=false rows=2
`,
	}, {
		name:  "header only",
		files: []inFile{{"ho.csv", "a,b\n"}},
		want: `schema: a:string b:string
file ho.csv csv gzip=false rows=0
`,
	}, {
		name:  "several files",
		files: []inFile{{"a.csv", "id,v\n1,2\n2,3\n"}, {"b.csv", "v,id\n\n2.5,3\n"}},
		want: `schema: id:integer v:number
batch source=0 first=1 rows=2
  row 1 line 2: id=1 v=2
  row 2 line 3: id=2 v=3
batch source=1 first=3 rows=1
  row 3 line 3: id=3 v=2.5
file a.csv csv gzip=false rows=2
file b.csv csv gzip=false rows=1
`,
	}, {
		name:  "inferences that disagree make string",
		files: []inFile{{"a.csv", "k\n1\n"}, {"b.csv", "k\ntrue\n"}},
		want: `schema: k:string
batch source=0 first=1 rows=1
  row 1 line 2: k="1"
batch source=1 first=2 rows=1
  row 2 line 2: k="true"
file a.csv csv gzip=false rows=1
file b.csv csv gzip=false rows=1
`,
	}, {
		name:  "globs sorted and files read once",
		files: []inFile{{"b.csv", "k\n2\n"}, {"a.csv", "k\n1\n"}, {"c.txt", "k\n3\n"}, {"sub/d.csv", "k\n4\n"}},
		paths: []string{"a.csv", "*.csv", "a.csv", "c.*"},
		want: `schema: k:integer
batch source=0 first=1 rows=1
  row 1 line 2: k=1
batch source=1 first=2 rows=1
  row 2 line 2: k=2
batch source=2 first=3 rows=1
  row 3 line 2: k=3
file a.csv csv gzip=false rows=1
file b.csv csv gzip=false rows=1
file c.txt csv gzip=false rows=1
`,
	}, {
		name:  "gzip by content and by name",
		files: []inFile{{"a.csv.gz", gz(t, "id\n1\n")}, {"b.csv", gz(t, "id\n2\n")}},
		want: `schema: id:integer
batch source=0 first=1 rows=1
  row 1 line 2: id=1
batch source=1 first=2 rows=1
  row 2 line 2: id=2
file a.csv.gz csv gzip=true rows=1
file b.csv csv gzip=true rows=1
`,
	}})
}

func TestStdin(t *testing.T) {
	mem := checkedMem(t)
	tmp := t.TempDir()
	data := "a,b\n1,\"x\ny\"\n2,z\n"
	s, err := Open([]string{"-", "-"}, Options{Stdin: strings.NewReader(gz(t, data)), TempDir: tmp, Allocator: mem})
	if err != nil {
		t.Fatal(err)
	}
	spooled, _ := filepath.Glob(filepath.Join(tmp, "*"))
	if len(spooled) != 1 {
		t.Fatalf("temporary folder holds %q; want one copy of standard input", spooled)
	}
	want := `batch source=0 first=1 rows=2
  row 1 line 2: a=1 b="x\ny"
  row 2 line 4: a=2 b="z"
`
	for pass := 1; pass <= 2; pass++ { // a second pass reads the copy again
		diff(t, scanDump(t, s, nil), want)
	}
	if f := s.Files(); len(f) != 1 || f[0].Path != "-" || !f[0].Gzip || f[0].Rows != 2 {
		t.Errorf("Files() = %+v", f)
	}
	if err := s.Close(); err != nil {
		t.Fatal(err)
	}
	if left, _ := filepath.Glob(filepath.Join(tmp, "*")); len(left) != 0 {
		t.Errorf("Close left %q", left)
	}
}

// TestScanStops checks that an error from the callback and a cancelled
// context end the scan, whether it reads its column or skips it.
func TestScanStops(t *testing.T) {
	mem := checkedMem(t)
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", "k\n1\n2\n3\n"}})
	s, err := Open(paths, Options{Allocator: mem, BatchRows: 1})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for _, skip := range [][]bool{nil, {true}} {
		stop := errors.New("stop")
		calls := 0
		err = s.ScanSome(context.Background(), nil, skip, func(*Batch) error { calls++; return stop })
		if err != stop || calls != 1 {
			t.Errorf("skip %v: scan returned %v after %d calls; want the callback's error after 1", skip, err, calls)
		}
		ctx, cancel := context.WithCancel(context.Background())
		calls = 0
		err = s.ScanSome(ctx, nil, skip, func(*Batch) error { calls++; cancel(); return nil })
		if !errors.Is(err, context.Canceled) || calls != 1 {
			t.Errorf("skip %v: scan returned %v after %d calls; want context.Canceled after 1", skip, err, calls)
		}
	}
}

// TestRetainedBatch checks that a record the callback retains outlives the
// batch, and that the allocator still ends at zero once it is released.
func TestRetainedBatch(t *testing.T) {
	mem := checkedMem(t)
	paths := writeFiles(t, t.TempDir(), []inFile{{"a.csv", "k,s\n1,x\n2,y\n"}})
	s, err := Open(paths, Options{Allocator: mem})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var kept arrow.RecordBatch
	err = s.Scan(context.Background(), nil, func(b *Batch) error {
		b.Record.Retain()
		kept = b.Record
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if kept.NumRows() != 2 || kept.Column(1).ValueStr(1) != "y" {
		t.Errorf("retained record lost its data: %v", kept)
	}
	kept.Release()
}

func TestMain(m *testing.M) {
	code := m.Run()
	removeBenchData()
	os.Exit(code)
}
