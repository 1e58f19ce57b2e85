package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/assay-project/assay/engine/profile"
	"github.com/assay-project/assay/engine/source"
)

// runProfile drafts a policy from trusted data: on standard output, or
// atomically into the file -o names, whose `data:` then lists the inputs
// relative to that file's folder.
func runProfile(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("profile", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("o", "", "write the drafted policy to this file instead of standard output")
	name := fs.String("name", "", "the policy's name (default: the output file's name, or \"drafted\")")
	sample := fs.Int("sample", profile.DefaultSample, "values per numeric column kept for family fits and rank correlations")
	seed := fs.Uint64("seed", 1, "seed of the samples")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: assay profile DATA... [-o POLICY] [flags]\n\nflags:")
		fs.PrintDefaults()
	}
	paths, err := parseInterleaved(fs, args)
	if err != nil {
		return exitTrouble
	}
	if len(paths) == 0 {
		fs.Usage()
		return exitTrouble
	}
	if *sample < 100 {
		return trouble(stderr, fmt.Errorf("--sample must be at least 100, got %d", *sample))
	}
	opts := profile.Options{Source: source.Options{Stdin: stdin}, Sample: *sample, Seed: *seed, Name: *name}
	if *out != "" {
		if err := notAnInput(*out, paths); err != nil {
			return trouble(stderr, err)
		}
		if opts.Name == "" {
			opts.Name = strings.TrimSuffix(filepath.Base(*out), filepath.Ext(*out))
		}
		if opts.Data, err = relativeTo(filepath.Dir(*out), paths); err != nil {
			return trouble(stderr, err)
		}
	}
	text, err := profile.Draft(ctx, paths, opts)
	if err != nil {
		return trouble(stderr, err)
	}
	if *out == "" {
		if _, err := stdout.Write(text); err != nil {
			return trouble(stderr, err)
		}
		return exitPass
	}
	var o outputs
	err = o.write(*out, func(f *os.File) error {
		_, err := f.Write(text)
		return err
	})
	if err == nil {
		err = o.commit()
	}
	if err != nil {
		o.discard()
		return trouble(stderr, err)
	}
	return exitPass
}

// relativeTo writes the data paths relative to dir, the folder of the
// drafted policy, with forward slashes; standard input cannot be named.
func relativeTo(dir string, paths []string) ([]string, error) {
	var out []string
	for _, p := range paths {
		if p == "-" {
			return nil, nil
		}
		abs, err := filepath.Abs(p)
		if err != nil {
			return nil, fmt.Errorf("data path %s: %w", p, err)
		}
		base, err := filepath.Abs(dir)
		if err != nil {
			return nil, fmt.Errorf("output folder %s: %w", dir, err)
		}
		rel, err := filepath.Rel(base, abs)
		if err != nil {
			rel = abs
		}
		out = append(out, filepath.ToSlash(rel))
	}
	return out, nil
}

// notAnInput refuses an output file that is one of the data files named.
func notAnInput(out string, paths []string) error {
	o, err := os.Stat(out)
	if err != nil {
		return nil // not there yet
	}
	for _, p := range paths {
		if in, err := os.Stat(p); err == nil && os.SameFile(in, o) {
			return fmt.Errorf("writing %s: it is an input of this run; write the policy elsewhere", out)
		}
	}
	return nil
}
