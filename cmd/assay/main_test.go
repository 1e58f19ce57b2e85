package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"encoding/xml"
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

var update = flag.Bool("update", false, "rewrite golden files")

// TestMain lets the test binary stand in for the command: with
// ASSAY_RUN_MAIN set it runs main, so end-to-end tests exercise the real
// process (exit codes, standard streams) without a separate build.
func TestMain(m *testing.M) {
	if os.Getenv("ASSAY_RUN_MAIN") == "1" {
		main()
		return
	}
	os.Exit(m.Run())
}

type outcome struct {
	code   int
	stdout string
	stderr string
}

// assay runs the command as a child process with args and stdin.
func assay(t *testing.T, stdin string, args ...string) outcome {
	t.Helper()
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "ASSAY_RUN_MAIN=1", "NO_COLOR=1")
	cmd.Stdin = strings.NewReader(stdin)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatalf("running assay %v: %v", args, err)
	}
	return outcome{code: code, stdout: out.String(), stderr: errb.String()}
}

const pol = "testdata/soil/policy.yaml"

func TestExitCodes(t *testing.T) {
	good, err := os.ReadFile("testdata/soil/good.csv")
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name  string
		stdin string
		args  []string
		code  int
		want  []string // substrings of stdout
	}{
		{"pass", "", []string{"check", pol, "testdata/soil/good.csv"}, 0, []string{"verdict: PASS"}},
		{"fail", "", []string{"check", pol, "testdata/soil/bad.csv"}, 1, []string{"verdict: FAIL", "FAIL   columns.moisture_pct.maximum"}},
		{"warn passes", "", []string{"check", pol, "testdata/soil/warn.csv"}, 0, []string{"verdict: WARN", "WARN   columns.moisture_pct.nulls"}},
		{"strict warn fails", "", []string{"check", "--strict", pol, "testdata/soil/warn.csv"}, 1, []string{"verdict: WARN"}},
		{"flags after args", "", []string{"check", pol, "testdata/soil/warn.csv", "--strict"}, 1, nil},
		{"standard input", string(good), []string{"check", pol, "-"}, 0, []string{"10 rows"}},
		{"several files", "", []string{"check", pol, "testdata/soil/good.csv", "testdata/soil/bad.csv"}, 1, []string{"18 rows from 2 files", "testdata/soil/bad.csv"}},
		{"glob", "", []string{"check", pol, "testdata/soil/batches/*.csv"}, 0, []string{"13 rows from 2 files"}},
		{"output - is standard output", "", []string{"check", pol, "testdata/soil/good.csv", "--output", "-"}, 0, []string{"verdict: PASS"}},
		{"no rows listed", "", []string{"check", "--max-rows-listed", "0", pol, "testdata/soil/bad.csv"}, 1, []string{"verdict: FAIL"}},
		{"temporary folder", string(good), []string{"check", "--temp-dir", os.TempDir(), pol, "-"}, 0, []string{"10 rows"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := assay(t, tt.stdin, tt.args...)
			if got.code != tt.code {
				t.Fatalf("exit code %d, want %d\nstdout:\n%s\nstderr:\n%s", got.code, tt.code, got.stdout, got.stderr)
			}
			for _, w := range tt.want {
				if !strings.Contains(got.stdout, w) {
					t.Errorf("stdout lacks %q:\n%s", w, got.stdout)
				}
			}
		})
	}
}

// TestTrouble checks that every kind of bad input ends with exit code 2
// and a message that names the place.
func TestTrouble(t *testing.T) {
	dir := t.TempDir()
	truncated := filepath.Join(dir, "truncated.parquet")
	writeParquet(t, truncated)
	data, err := os.ReadFile(truncated)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(truncated, data[:len(data)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	// More damaged inputs: a NUL byte in a cell, a gzip file cut short, Arrow
	// IPC file and stream cut short.
	nul := filepath.Join(dir, "nul.csv")
	gzCut := filepath.Join(dir, "cut.csv.gz")
	arrowCut := filepath.Join(dir, "cut.arrow")
	streamCut := filepath.Join(dir, "cut.arrows")
	good, err := os.ReadFile("testdata/soil/good.csv")
	if err != nil {
		t.Fatal(err)
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	if _, err := zw.Write(bytes.Repeat(good, 50)); err != nil {
		t.Fatal(err)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	writeIPC(t, arrowCut, streamCut)
	for _, cut := range []struct {
		path string
		data []byte
	}{
		{nul, bytes.Replace(good, []byte("31.5"), []byte("31\x005"), 1)},
		{gzCut, gz.Bytes()[:gz.Len()/2]},
		{arrowCut, readHalf(t, arrowCut)},
		{streamCut, readHalf(t, streamCut)},
	} {
		if err := os.WriteFile(cut.path, cut.data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	tests := []struct {
		name string
		args []string
		want []string // substrings of stderr
	}{
		{"nul byte", []string{"check", pol, nul}, []string{"nul.csv:2", "NUL"}},
		{"truncated gzip", []string{"check", pol, gzCut}, []string{"cut.csv.gz:", "cut short"}},
		{"truncated arrow file", []string{"check", pol, arrowCut}, []string{"cut.arrow:", "cut short"}},
		{"truncated arrow stream", []string{"check", pol, streamCut}, []string{"cut.arrows"}},
		{"ragged row", []string{"check", pol, "testdata/soil/ragged.csv"}, []string{"ragged.csv:3"}},
		{"unterminated quote", []string{"check", pol, "testdata/soil/unterminated.csv"}, []string{"unterminated.csv:3"}},
		{"invalid utf-8", []string{"check", pol, "testdata/soil/badutf8.csv"}, []string{"badutf8.csv:3"}},
		{"empty file", []string{"check", pol, "testdata/soil/empty.csv"}, []string{"empty.csv"}},
		{"text named parquet", []string{"check", pol, "testdata/soil/notparquet.parquet"}, []string{"notparquet.parquet"}},
		{"truncated parquet", []string{"check", pol, truncated}, []string{"truncated.parquet"}},
		{"missing file", []string{"check", pol, "testdata/soil/nothere.csv"}, []string{"nothere.csv"}},
		{"glob matching nothing", []string{"check", pol, "testdata/soil/none-*.csv"}, []string{"none-*.csv"}},
		{"unknown column", []string{"check", "testdata/soil/typo.yaml", "testdata/soil/good.csv"}, []string{"typo.yaml:3:3", `did you mean "moisture_pct"`}},
		{"bad policy", []string{"check", "testdata/soil/badpolicy.yaml", "testdata/soil/good.csv"}, []string{"badpolicy.yaml:4:11", "badpolicy.yaml:5:5", `"maximum"`, "badpolicy.yaml:6"}},
		{"missing policy", []string{"check", "testdata/soil/nopolicy.yaml", "testdata/soil/good.csv"}, []string{"nopolicy.yaml"}},
		{"no data", []string{"check", pol}, []string{"names no data"}},
		{"unknown format", []string{"check", "--format", "xml", pol, "testdata/soil/good.csv"}, []string{"--format"}},
		{"expression types without data", []string{"explain", "testdata/soil/mixed.yaml"}, []string{"mixed.yaml:7:18", "mismatched types number and string"}},
		{"unknown flag", []string{"check", "--fast", pol}, []string{"-fast"}},
		{"temporary folder absent", []string{"check", "--temp-dir", filepath.Join(dir, "absent"), pol, "testdata/soil/good.csv"}, []string{"--temp-dir", "absent is not a folder"}},
		{"unknown command", []string{"chek"}, []string{`unknown command "chek"`}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := assay(t, "", tt.args...)
			if got.code != 2 {
				t.Fatalf("exit code %d, want 2\nstdout:\n%s\nstderr:\n%s", got.code, got.stdout, got.stderr)
			}
			for _, w := range tt.want {
				if !strings.Contains(got.stderr, w) {
					t.Errorf("stderr lacks %q:\n%s", w, got.stderr)
				}
			}
			if strings.Contains(got.stderr, "panic") || strings.Contains(got.stderr, "goroutine ") {
				t.Errorf("stderr shows a panic:\n%s", got.stderr)
			}
		})
	}
}

// TestOutputFile checks that --output writes the whole report and that a
// run ending in trouble leaves no file behind.
func TestOutputFile(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "report.json")
	got := assay(t, "", "check", pol, "testdata/soil/bad.csv", "--format", "json", "--output", out)
	if got.code != 1 || got.stdout != "" {
		t.Fatalf("exit code %d, stdout %q, stderr %s", got.code, got.stdout, got.stderr)
	}
	var rep map[string]any
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(data, &rep); err != nil {
		t.Fatalf("report is not JSON: %v", err)
	}
	if rep["verdict"] != "fail" {
		t.Errorf("verdict %v, want fail", rep["verdict"])
	}

	out2 := filepath.Join(dir, "never.json")
	got = assay(t, "", "check", pol, "testdata/soil/ragged.csv", "--format", "json", "--output", out2)
	if got.code != 2 {
		t.Fatalf("exit code %d, want 2", got.code)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) != 1 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v, want only report.json", names)
	}
}

// TestBinaryFormats runs the policy on the good rows as Parquet, Arrow IPC
// file and Arrow IPC stream.
func TestBinaryFormats(t *testing.T) {
	dir := t.TempDir()
	pq := filepath.Join(dir, "good.parquet")
	writeParquet(t, pq)
	arrowFile := filepath.Join(dir, "good.arrow")
	arrowStream := filepath.Join(dir, "good.arrows")
	writeIPC(t, arrowFile, arrowStream)
	for _, path := range []string{pq, arrowFile, arrowStream} {
		got := assay(t, "", "check", pol, path, "--format", "json")
		if got.code != 0 {
			t.Fatalf("%s: exit code %d\n%s\n%s", path, got.code, got.stdout, got.stderr)
		}
		var rep struct {
			Rows int64 `json:"rows"`
		}
		if err := json.Unmarshal([]byte(got.stdout), &rep); err != nil {
			t.Fatal(err)
		}
		if rep.Rows != 4 {
			t.Errorf("%s: %d rows, want 4", path, rep.Rows)
		}
	}
}

// TestGolden compares the reports of the failing fixture in every format
// with golden files (run with -update to rewrite them). The start time and
// duration are blanked, as they change with every run.
func TestGolden(t *testing.T) {
	for _, format := range formats {
		t.Run(format, func(t *testing.T) {
			var out, errb bytes.Buffer
			code := run(context.Background(), []string{"check", pol, "testdata/soil/bad.csv", "--format", format}, nil, &out, &errb)
			if code != 1 {
				t.Fatalf("exit code %d, stderr %s", code, errb.String())
			}
			got := out.Bytes()
			switch format {
			case "json":
				got = blankTimes(t, got)
			case "junit":
				got = xmlTimes.ReplaceAll(got, []byte(`$1="(blanked)"`))
			case "html":
				got = htmlStarted.ReplaceAll(got, []byte(`<time datetime="(blanked)">(blanked)</time>`))
				got = htmlDuration.ReplaceAll(got, []byte(`<dd class="duration">(blanked)</dd>`))
			}
			golden := filepath.Join("testdata", "soil", "bad."+format+".golden")
			if *update {
				if err := os.WriteFile(golden, got, 0o644); err != nil {
					t.Fatal(err)
				}
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("report differs from %s (run go test -update to accept):\ngot:\n%s", golden, got)
			}
		})
	}
}

// xmlTimes matches the time attributes of a JUnit report.
var xmlTimes = regexp.MustCompile(`\b(time|timestamp)="[^"]*"`)

// htmlStarted and htmlDuration match the start time and the duration of an
// HTML report.
var (
	htmlStarted  = regexp.MustCompile(`<time datetime="[^"]*">[^<]*</time>`)
	htmlDuration = regexp.MustCompile(`<dd class="duration">[^<]*</dd>`)
)

func blankTimes(t *testing.T, data []byte) []byte {
	t.Helper()
	var rep map[string]json.RawMessage
	if err := json.Unmarshal(data, &rep); err != nil {
		t.Fatalf("report is not JSON: %v", err)
	}
	for _, k := range []string{"started", "duration_seconds"} {
		if _, ok := rep[k]; !ok {
			t.Fatalf("report lacks %q", k)
		}
	}
	lines := strings.Split(string(data), "\n")
	for i, l := range lines {
		if strings.HasPrefix(l, `  "started":`) || strings.HasPrefix(l, `  "duration_seconds":`) {
			key := l[:strings.Index(l, ":")]
			lines[i] = key + `: "(blanked)",`
		}
	}
	return []byte(strings.Join(lines, "\n"))
}

// goodRecord builds four rows that pass the soil policy.
func goodRecord(mem memory.Allocator) arrow.RecordBatch {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "probe", Type: arrow.BinaryTypes.String},
		{Name: "depth_cm", Type: arrow.PrimitiveTypes.Int64},
		{Name: "moisture_pct", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	b.Field(0).(*array.StringBuilder).AppendValues([]string{"P01", "P01", "P01", "P02"}, nil)
	b.Field(1).(*array.Int64Builder).AppendValues([]int64{10, 30, 60, 10}, nil)
	b.Field(2).(*array.Float64Builder).AppendValues([]float64{31.5, 35, 38.2, 28.4}, nil)
	b.Field(3).(*array.Float64Builder).AppendValues([]float64{14.2, 12.9, 11, 15.1}, nil)
	return b.NewRecordBatch()
}

// readHalf returns the first half of the file at path.
func readHalf(t *testing.T, path string) []byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return data[:len(data)/2]
}

func writeParquet(t *testing.T, path string) {
	t.Helper()
	rec := goodRecord(memory.DefaultAllocator)
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(rec.Schema(), f, nil, pqarrow.DefaultWriterProps())
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
}

func writeIPC(t *testing.T, filePath, streamPath string) {
	t.Helper()
	rec := goodRecord(memory.DefaultAllocator)
	defer rec.Release()
	f, err := os.Create(filePath)
	if err != nil {
		t.Fatal(err)
	}
	fw, err := ipc.NewFileWriter(f, ipc.WithSchema(rec.Schema()))
	if err != nil {
		t.Fatal(err)
	}
	if err := fw.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := fw.Close(); err != nil {
		t.Fatal(err)
	}
	f.Close()
	s, err := os.Create(streamPath)
	if err != nil {
		t.Fatal(err)
	}
	sw := ipc.NewWriter(s, ipc.WithSchema(rec.Schema()))
	if err := sw.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := sw.Close(); err != nil {
		t.Fatal(err)
	}
	s.Close()
}

// TestReports writes every format in one run with --report, beside the
// report on standard output, and checks each file's content.
func TestReports(t *testing.T) {
	dir := t.TempDir()
	path := func(name string) string { return filepath.Join(dir, name) }
	got := assay(t, "", "check", pol, "testdata/soil/bad.csv",
		"--report", "junit="+path("assay.xml"), "--report", "markdown="+path("summary.md"),
		"--report", "json="+path("report.json"), "--report", "text="+path("report.txt"),
		"--format", "json", "--output", path("out.json"))
	if got.code != 1 || got.stdout != "" {
		t.Fatalf("exit code %d, stdout %q, stderr %s", got.code, got.stdout, got.stderr)
	}
	read := func(name string) []byte {
		t.Helper()
		data, err := os.ReadFile(path(name))
		if err != nil {
			t.Fatal(err)
		}
		return data
	}
	var doc struct {
		Failures int `xml:"failures,attr"`
	}
	if err := xml.Unmarshal(read("assay.xml"), &doc); err != nil || doc.Failures != 6 {
		t.Errorf("assay.xml: %d failures (error %v), want 6", doc.Failures, err)
	}
	if md := string(read("summary.md")); !strings.HasPrefix(md, "### assay: FAIL") {
		t.Errorf("summary.md starts %.40q", md)
	}
	for _, name := range []string{"report.json", "out.json"} {
		var rep struct{ Verdict string }
		if err := json.Unmarshal(read(name), &rep); err != nil || rep.Verdict != "fail" {
			t.Errorf("%s: verdict %q (error %v), want fail", name, rep.Verdict, err)
		}
	}
	if txt := string(read("report.txt")); !strings.Contains(txt, "verdict: FAIL") || strings.Contains(txt, "\x1b[") {
		t.Errorf("report.txt lacks the verdict or has colour:\n%s", txt)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) != 5 {
		t.Errorf("folder holds %d files, want the 5 reports and no temporary file", len(entries))
	}

	// Standard output keeps its report when --report writes files.
	got = assay(t, "", "check", pol, "testdata/soil/warn.csv", "--report", "markdown="+path("warn.md"))
	if got.code != 0 || !strings.Contains(got.stdout, "verdict: WARN") {
		t.Errorf("exit code %d, stdout:\n%s", got.code, got.stdout)
	}
	if md := string(read("warn.md")); !strings.Contains(md, "| WARN | `columns.moisture_pct.nulls` |") {
		t.Errorf("warn.md:\n%s", md)
	}
}

// TestReportTrouble checks that bad --report flags and runs that end in
// trouble exit 2 and write no file at all.
func TestReportTrouble(t *testing.T) {
	dir := t.TempDir()
	xmlPath := filepath.Join(dir, "assay.xml")
	tests := []struct {
		name string
		args []string
		want string // in stderr
	}{
		{"unknown format", []string{"--report", "pdf=" + filepath.Join(dir, "out.pdf")}, `unknown report format "pdf"`},
		{"no path", []string{"--report", "junit"}, "FORMAT=PATH"},
		{"same path twice", []string{"--report", "junit=" + xmlPath, "--output", xmlPath}, "name the same file"},
		{"unreadable data", []string{"--report", "junit=" + xmlPath, "--report", "markdown=" + filepath.Join(dir, "s.md"), "testdata/soil/ragged.csv"}, "ragged.csv:3"},
		{"missing folder", []string{"--report", "junit=" + xmlPath, "--report", "markdown=" + filepath.Join(dir, "no", "s.md")}, "s.md"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			args := append([]string{"check", pol}, tt.args...)
			if !strings.HasSuffix(args[len(args)-1], ".csv") {
				args = append(args, "testdata/soil/bad.csv")
			}
			troubleWritesNothing(t, dir, tt.want, args...)
		})
	}
}

// troubleWritesNothing runs assay with args and checks that it exits 2
// with want in its standard error and leaves dir empty.
func troubleWritesNothing(t *testing.T, dir, want string, args ...string) {
	t.Helper()
	got := assay(t, "", args...)
	if got.code != 2 || !strings.Contains(got.stderr, want) {
		t.Errorf("exit code %d, stderr %q; want 2 and %q", got.code, got.stderr, want)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		t.Errorf("%s was written", e.Name())
	}
}

// TestInterrupted checks that a run stopped by Ctrl-C (its context
// cancelled) says so, exits 2 and writes no output file.
func TestInterrupted(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	out := filepath.Join(t.TempDir(), "report.json")
	var stdout, stderr bytes.Buffer
	code := run(ctx, []string{"check", "--output", out, pol, "testdata/soil/good.csv"}, nil, &stdout, &stderr)
	if code != 2 || stderr.String() != "assay: interrupted\n" {
		t.Errorf("got exit code %d, stderr %q; want 2, %q", code, stderr.String(), "assay: interrupted\n")
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("%s written by an interrupted run (stat: %v)", out, err)
	}
}
