package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// runBaseline writes the baseline of trusted data: assay baseline DATA...
// -o FILE [--policy POLICY].
func runBaseline(ctx context.Context, args []string, stderr io.Writer) int {
	fs := flag.NewFlagSet("baseline", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var output, policy string
	fs.StringVar(&output, "o", "", "write the baseline (JSON) to this file, atomically (required)")
	fs.StringVar(&policy, "policy", "", "read the data as this policy says and summarise only its columns")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: assay baseline DATA... -o FILE [--policy POLICY]\n\nflags:")
		fs.PrintDefaults()
	}
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return exitTrouble
	}
	if output == "" || (len(pos) == 0 && policy == "") {
		fs.Usage()
		return exitTrouble
	}
	var pol *rules.Policy
	if policy != "" {
		if pol, err = rules.Load(policy); err != nil {
			return trouble(stderr, err)
		}
	}
	f, err := engine.Baseline(ctx, pol, pos, source.Options{})
	if err != nil {
		return trouble(stderr, err)
	}
	b, err := f.Marshal()
	if err != nil {
		return trouble(stderr, err)
	}
	var out outputs
	if err := out.write(output, func(file *os.File) error {
		_, err := file.Write(b)
		return err
	}); err != nil {
		out.discard()
		return trouble(stderr, err)
	}
	var sources []report.Source
	for _, s := range f.Sources {
		sources = append(sources, report.Source{Path: s.Path})
	}
	if err := out.overwrites(sources); err != nil {
		out.discard()
		return trouble(stderr, err)
	}
	if err := out.commit(); err != nil {
		return trouble(stderr, err)
	}
	return exitPass
}
