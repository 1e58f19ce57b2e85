// Command assay checks data files against a declarative, statistical policy.
//
//	assay check POLICY [DATA...]   evaluate a policy; exit 0 pass or warn, 1 fail, 2 trouble
//	assay baseline DATA... -o FILE save a summary of trusted data for drift rules
//	assay explain POLICY           print the resolved rules of a policy
//	assay profile DATA... [-o F]   draft a policy from trusted data
//	assay schema                   print the JSON Schema of policy files
//	assay version                  print the version
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime/debug"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/gate"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// Exit codes.
const (
	exitPass    = 0 // every rule passed or warned
	exitFail    = 1 // a rule failed (or warned, with --strict)
	exitTrouble = 2 // bad policy, unreadable data, bad flags, or a rule that could not run
)

// gcPercent is the garbage collector's target when GOGC is not set: a new
// cycle once the heap has grown by a quarter since the last, where Go's
// default waits for it to double. A run's heap is mostly large slices
// without pointers (kept values, hashes, samples), which the collector
// does not scan, so collecting more often costs little CPU and keeps the
// process near its live memory. Measured on bench/run.sh's 10-million-row
// Parquet run: peak RSS 1.48 GB with the default, 1.03 GB with 25, user
// CPU time unchanged (10.7 s both).
const gcPercent = 25

func main() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(gcPercent)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	code := run(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

const usage = `usage: assay <command> [arguments]

commands:
  check POLICY [DATA...]   evaluate a policy on data (CSV, Parquet, Arrow; "-" reads standard input)
  baseline DATA... -o F    save a compact summary of trusted data for drift rules (JSON)
  explain POLICY           print the resolved rules: id, check, columns, measure, thresholds
  profile DATA... [-o F]   draft a policy from trusted data (types, nulls, ranges, families, pairs, keys)
  schema                   print the JSON Schema of policy files
  version                  print the version

exit codes: 0 pass or warn, 1 fail, 2 trouble
run "assay <command> -h" for a command's flags
`

// run is the whole program with its environment passed in, so that tests
// can drive it.
func run(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return exitTrouble
	}
	switch args[0] {
	case "check":
		return runCheck(ctx, args[1:], stdin, stdout, stderr)
	case "baseline":
		return runBaseline(ctx, args[1:], stderr)
	case "explain":
		return runExplain(args[1:], stdout, stderr)
	case "profile":
		return runProfile(ctx, args[1:], stdin, stdout, stderr)
	case "schema":
		if _, err := stdout.Write(rules.JSONSchema); err != nil {
			return trouble(stderr, err)
		}
		return exitPass
	case "version", "--version", "-version":
		fmt.Fprintf(stdout, "assay %s\n", engine.Version)
		return exitPass
	case "help", "-h", "--help", "-help":
		fmt.Fprint(stdout, usage)
		return exitPass
	}
	fmt.Fprintf(stderr, "assay: unknown command %q\n\n%s", args[0], usage)
	return exitTrouble
}

func trouble(stderr io.Writer, err error) int {
	if errors.Is(err, context.Canceled) {
		// Ctrl-C: say so in the user's words, not the context's.
		fmt.Fprintln(stderr, "assay: interrupted")
		return exitTrouble
	}
	fmt.Fprintf(stderr, "assay: %v\n", err)
	return exitTrouble
}

func runExplain(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("explain", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() { fmt.Fprintln(stderr, "usage: assay explain POLICY") }
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return exitTrouble
	}
	if len(pos) != 1 {
		fs.Usage()
		return exitTrouble
	}
	pol, err := rules.Load(pos[0])
	if err != nil {
		return trouble(stderr, err)
	}
	if err := engine.Validate(pol); err != nil {
		return trouble(stderr, err)
	}
	if err := rules.Explain(stdout, pol); err != nil {
		return trouble(stderr, err)
	}
	return exitPass
}

type checkFlags struct {
	format        string
	output        string
	reports       reportList
	strict        bool
	maxRowsListed int
	color         string
	accepted      string
	rejected      string
	quiet         bool
	tempDir       string
}

// formats are the report formats --format and --report take.
var formats = []string{"text", "json", "junit", "markdown", "html"}

// reportSpec is one --report FORMAT=PATH.
type reportSpec struct {
	format, path string
}

// reportList collects the --report flags.
type reportList []reportSpec

func (l *reportList) String() string {
	var parts []string
	for _, r := range *l {
		parts = append(parts, r.format+"="+r.path)
	}
	return strings.Join(parts, " ")
}

func (l *reportList) Set(s string) error {
	format, path, ok := strings.Cut(s, "=")
	if !ok || format == "" || path == "" {
		return fmt.Errorf("want FORMAT=PATH, such as junit=assay.xml")
	}
	*l = append(*l, reportSpec{format: format, path: path})
	return nil
}

func runCheck(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	var f checkFlags
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.StringVar(&f.format, "format", "text", "report format on standard output (or --output): "+orList(formats))
	fs.StringVar(&f.output, "output", "", "write the report to this file (atomically) instead of standard output; - is standard output")
	fs.Var(&f.reports, "report", "also write a report in FORMAT to PATH (atomically), as FORMAT=PATH; repeatable")
	fs.BoolVar(&f.strict, "strict", false, "count a warning as a failure in the exit code")
	fs.IntVar(&f.maxRowsListed, "max-rows-listed", engine.DefaultMaxRowsListed, "offending rows listed per rule (counts stay exact)")
	fs.StringVar(&f.color, "color", "auto", "colour in text reports: auto (terminal, unless NO_COLOR is set), always or never")
	fs.StringVar(&f.accepted, "accepted", "", "write the rows that break no row-level rule to this .csv or .parquet file (atomically)")
	fs.StringVar(&f.rejected, "rejected", "", "write the rows that break a row-level rule to this .csv or .parquet file (atomically), with a column naming the rules")
	fs.BoolVar(&f.quiet, "quiet", false, "no progress bar and no line saying where the rows went, on standard error")
	fs.StringVar(&f.tempDir, "temp-dir", "", "folder for temporary files (the copy of standard input, the columns a second pass rereads); default the system's")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: assay check POLICY [DATA...] [flags]\n\nflags:")
		fs.PrintDefaults()
	}
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return exitTrouble
	}
	if len(pos) == 0 {
		fs.Usage()
		return exitTrouble
	}
	if f.output == "-" {
		f.output = ""
	}
	if err := f.validate(); err != nil {
		return trouble(stderr, err)
	}

	pol, err := rules.Load(pos[0])
	if err != nil {
		return trouble(stderr, err)
	}
	opts := engine.Options{MaxRowsListed: f.maxRowsListed}
	if f.maxRowsListed == 0 {
		opts.MaxRowsListed = -1
	}
	opts.Source.Stdin = stdin
	opts.Source.TempDir = f.tempDir
	g, err := startGate(f.accepted, f.rejected)
	if err != nil {
		return trouble(stderr, err)
	}
	if g != nil {
		opts.Gate = g.w
	}
	var bar *progressBar
	if showProgress(f.quiet, isTerminal(stderr), os.Getenv) {
		bar = newProgressBar(stderr, time.Now)
		opts.Progress = bar.update
	}
	rep, err := engine.Run(ctx, pol, pos[1:], opts)
	if bar != nil {
		bar.clear()
	}
	if err != nil {
		g.discard()
		return trouble(stderr, err)
	}

	// The files are written whatever the verdict (the accepted file is the
	// clean part of a failing batch), but not when a rule could not run:
	// the split would ignore that rule.
	var out outputs
	switch {
	case g == nil:
	case rep.Counts.Error > 0:
		g.discard()
		fmt.Fprintf(stderr, "assay: %s not written: %s could not run\n", strings.Join(g.named(), " and "), rulesCount(rep.Counts.Error))
	default:
		if err := g.finish(); err != nil {
			g.discard()
			return trouble(stderr, err)
		}
		out = append(out, g.files...)
	}
	for _, r := range f.reports {
		err := out.write(r.path, func(file *os.File) error { return render(file, r.format, rep, f, false) })
		if err != nil {
			out.discard()
			return trouble(stderr, err)
		}
	}
	if f.output != "" {
		if err := out.write(f.output, func(file *os.File) error { return render(file, f.format, rep, f, false) }); err != nil {
			out.discard()
			return trouble(stderr, err)
		}
	}
	if err := out.overwrites(rep.Sources); err != nil {
		out.discard()
		return trouble(stderr, err)
	}
	if err := out.commit(); err != nil {
		return trouble(stderr, err)
	}
	if g != nil && rep.Counts.Error == 0 && !f.quiet {
		fmt.Fprintf(stderr, "assay: %s\n", g.summary())
	}
	if f.output == "" {
		if err := render(stdout, f.format, rep, f, wantColor(f.color, stdout)); err != nil {
			return trouble(stderr, err)
		}
	}
	return exitCode(rep, f.strict)
}

// rulesCount writes "1 rule" or "n rules".
func rulesCount(n int) string {
	if n == 1 {
		return "1 rule"
	}
	return strconv.Itoa(n) + " rules"
}

// validate checks the flags that need no data, so that a mistake costs no
// run.
func (f *checkFlags) validate() error {
	if !slices.Contains(formats, f.format) {
		return fmt.Errorf("unknown --format %q: use %s", f.format, orList(formats))
	}
	if f.color != "auto" && f.color != "always" && f.color != "never" {
		return fmt.Errorf("unknown --color %q: use auto, always or never", f.color)
	}
	if f.maxRowsListed < 0 {
		return fmt.Errorf("--max-rows-listed must be 0 or more, not %d", f.maxRowsListed)
	}
	if f.tempDir != "" {
		if fi, err := os.Stat(f.tempDir); err != nil || !fi.IsDir() {
			return fmt.Errorf("--temp-dir %s is not a folder", f.tempDir)
		}
	}
	paths := map[string]string{} // cleaned path -> the flag that names it
	claim := func(flagText, path string) error {
		key := filepath.Clean(path)
		if other, ok := paths[key]; ok {
			return fmt.Errorf("%s and %s name the same file: give each output its own path", other, flagText)
		}
		paths[key] = flagText
		return nil
	}
	if f.output != "" {
		if err := claim("--output "+f.output, f.output); err != nil {
			return err
		}
	}
	for _, r := range f.reports {
		if !slices.Contains(formats, r.format) {
			return fmt.Errorf("unknown report format %q in --report %s=%s: use %s", r.format, r.format, r.path, orList(formats))
		}
		if err := claim("--report "+r.format+"="+r.path, r.path); err != nil {
			return err
		}
	}
	for _, o := range [][2]string{{"--accepted", f.accepted}, {"--rejected", f.rejected}} {
		if o[1] == "" {
			continue
		}
		if _, err := gate.FormatOf(o[1]); err != nil {
			return fmt.Errorf("%s %w", o[0], err)
		}
		if err := claim(o[0]+" "+o[1], o[1]); err != nil {
			return err
		}
	}
	return nil
}

// render writes the report in format to w.
func render(w io.Writer, format string, rep *report.Report, f checkFlags, color bool) error {
	switch format {
	case "json":
		return report.WriteJSON(w, rep)
	case "junit":
		return report.WriteJUnit(w, rep, report.JUnitOptions{Strict: f.strict})
	case "markdown":
		return report.WriteMarkdown(w, rep)
	case "html":
		return report.WriteHTML(w, rep)
	}
	return report.WriteText(w, rep, report.TextOptions{Color: color})
}

// orList writes "a, b or c".
func orList(words []string) string {
	if len(words) == 1 {
		return words[0]
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}

// exitCode maps a report to the process's exit code.
func exitCode(rep *report.Report, strict bool) int {
	switch {
	case rep.Counts.Error > 0:
		return exitTrouble
	case rep.Verdict == report.Fail:
		return exitFail
	case rep.Verdict == report.Warn && strict:
		return exitFail
	}
	return exitPass
}

// wantColor decides whether a text report on standard output gets colour:
// never when NO_COLOR is set (https://no-color.org), and with "auto" only
// on a terminal. Reports written to files never get colour.
func wantColor(mode string, stdout io.Writer) bool {
	switch {
	case mode == "never":
		return false
	case mode == "always":
		return true
	case os.Getenv("NO_COLOR") != "":
		return false
	}
	return isTerminal(stdout)
}

// isTerminal reports whether w is a terminal (a character device).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// parseInterleaved parses flags that may stand before, between or after the
// positional arguments, and returns the positional ones. "--" ends flags.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return pos, nil
		}
		if len(args) > len(rest) && args[len(args)-len(rest)-1] == "--" {
			return append(pos, rest...), nil
		}
		pos = append(pos, rest[0])
		args = rest[1:]
	}
}
