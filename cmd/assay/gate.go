package main

import (
	"fmt"
	"strings"

	"github.com/assay-project/assay/engine/gate"
)

// gateFiles are the accepted and rejected outputs of a gated run, written
// while the engine's last pass reads the data and committed with the
// reports.
type gateFiles struct {
	w     *gate.Writer
	files outputs
	paths [2]string // accepted, rejected; "" when not asked for
}

// startGate creates the outputs --accepted and --rejected name; nil when
// neither is set. Their formats were checked with the flags.
func startGate(accepted, rejected string) (*gateFiles, error) {
	if accepted == "" && rejected == "" {
		return nil, nil
	}
	g := &gateFiles{paths: [2]string{accepted, rejected}}
	var outs [2]*gate.Output
	for i, path := range g.paths {
		if path == "" {
			continue
		}
		format, err := gate.FormatOf(path)
		if err != nil {
			g.discard()
			return nil, err
		}
		p, err := create(path)
		if err != nil {
			g.discard()
			return nil, err
		}
		g.files = append(g.files, p)
		outs[i] = &gate.Output{W: p.tmp, Format: format}
	}
	g.w = gate.New(outs[0], outs[1], nil)
	return g, nil
}

// finish completes both files, ready for commit.
func (g *gateFiles) finish() error {
	if err := g.w.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", strings.Join(g.named(), " and "), err)
	}
	for _, p := range g.files {
		if err := p.finish(); err != nil {
			return err
		}
	}
	return nil
}

// discard removes the temporary files; g may be nil.
func (g *gateFiles) discard() {
	if g != nil {
		g.files.discard()
	}
}

func (g *gateFiles) named() []string {
	var names []string
	for _, p := range g.paths {
		if p != "" {
			names = append(names, p)
		}
	}
	return names
}

// summary says where the rows went: "7 rows accepted into a.csv, 3
// rejected into r.csv".
func (g *gateFiles) summary() string {
	acc := thousands(g.w.Accepted) + " rows accepted"
	if g.paths[0] != "" {
		acc += " into " + g.paths[0]
	}
	rej := thousands(g.w.Rejected) + " rejected"
	if g.paths[1] != "" {
		rej += " into " + g.paths[1]
	}
	return acc + ", " + rej
}
