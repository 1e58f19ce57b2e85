// Command assay checks data files against a declarative, statistical policy.
//
//	assay check POLICY [DATA...]   evaluate a policy; exit 0 pass or warn, 1 fail, 2 trouble
//	assay explain POLICY           print the resolved rules of a policy
//	assay schema                   print the JSON Schema of policy files
//	assay version                  print the version
package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/rules"
)

// Exit codes.
const (
	exitPass    = 0 // every rule passed or warned
	exitFail    = 1 // a rule failed (or warned, with --strict)
	exitTrouble = 2 // bad policy, unreadable data, bad flags, or a rule that could not run
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	code := run(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

const usage = `usage: assay <command> [arguments]

commands:
  check POLICY [DATA...]   evaluate a policy on data (CSV, Parquet, Arrow; "-" reads standard input)
  explain POLICY           print the resolved rules: id, check, columns, measure, thresholds
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
	case "explain":
		return runExplain(args[1:], stdout, stderr)
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
	if err := rules.Explain(stdout, pol); err != nil {
		return trouble(stderr, err)
	}
	return exitPass
}

type checkFlags struct {
	format        string
	output        string
	strict        bool
	maxRowsListed int
	color         string
}

func runCheck(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	var f checkFlags
	fs := flag.NewFlagSet("check", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.StringVar(&f.format, "format", "text", "report format: text or json")
	fs.StringVar(&f.output, "output", "", "write the report to this file (atomically) instead of standard output")
	fs.BoolVar(&f.strict, "strict", false, "count a warning as a failure in the exit code")
	fs.IntVar(&f.maxRowsListed, "max-rows-listed", engine.DefaultMaxRowsListed, "offending rows listed per rule (counts stay exact)")
	fs.StringVar(&f.color, "color", "auto", "colour in text reports: auto (terminal, unless NO_COLOR is set), always or never")
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
	if f.format != "text" && f.format != "json" {
		return trouble(stderr, fmt.Errorf("unknown --format %q: use text or json", f.format))
	}
	if f.color != "auto" && f.color != "always" && f.color != "never" {
		return trouble(stderr, fmt.Errorf("unknown --color %q: use auto, always or never", f.color))
	}
	if f.maxRowsListed < 0 {
		return trouble(stderr, fmt.Errorf("--max-rows-listed must be 0 or more, not %d", f.maxRowsListed))
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
	rep, err := engine.Run(ctx, pol, pos[1:], opts)
	if err != nil {
		return trouble(stderr, err)
	}

	render := func(w io.Writer) error {
		if f.format == "json" {
			return report.WriteJSON(w, rep)
		}
		return report.WriteText(w, rep, report.TextOptions{Color: wantColor(f.color, f.output, stdout)})
	}
	if f.output != "" {
		err = writeAtomic(f.output, func(file *os.File) error { return render(file) })
	} else {
		err = render(stdout)
	}
	if err != nil {
		return trouble(stderr, err)
	}
	return exitCode(rep, f.strict)
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

// wantColor decides whether a text report gets colour: never into a file,
// never when NO_COLOR is set (https://no-color.org), and with "auto" only
// on a terminal.
func wantColor(mode, output string, stdout io.Writer) bool {
	switch {
	case mode == "never" || output != "":
		return false
	case mode == "always":
		return true
	case os.Getenv("NO_COLOR") != "":
		return false
	}
	f, ok := stdout.(*os.File)
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
