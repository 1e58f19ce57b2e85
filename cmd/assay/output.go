package main

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/assay-project/assay/engine/report"
)

// pending is an output file being written under a temporary name in the
// folder of its path. Nothing appears at path until commit renames it
// there, so readers see either the old file or the whole new one, and a run
// that ends in trouble leaves no partial output behind.
type pending struct {
	path string
	tmp  *os.File
}

// create starts the output file path.
func create(path string) (*pending, error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("writing %s: %w", path, err)
	}
	return &pending{path: path, tmp: tmp}, nil
}

// finish syncs and closes the temporary file, ready for commit.
func (p *pending) finish() error {
	err := p.tmp.Sync()
	if cerr := p.tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Chmod(p.tmp.Name(), 0o644)
	}
	if err != nil {
		return fmt.Errorf("writing %s: %w", p.path, err)
	}
	return nil
}

// discard removes the temporary file.
func (p *pending) discard() {
	p.tmp.Close()
	os.Remove(p.tmp.Name())
}

// outputs is the set of files a run writes, committed together.
type outputs []*pending

// write creates the output file path, fills it through write and
// finishes it.
func (o *outputs) write(path string, write func(f *os.File) error) error {
	p, err := create(path)
	if err != nil {
		return err
	}
	*o = append(*o, p)
	if err := write(p.tmp); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return p.finish()
}

// overwrites refuses outputs that are input files of the run (sources, as
// the report names them): renaming over one would destroy data that was
// just judged.
func (o outputs) overwrites(sources []report.Source) error {
	for _, p := range o {
		out, err := os.Stat(p.path)
		if err != nil {
			continue // not there yet
		}
		for _, s := range sources {
			if in, err := os.Stat(s.Path); err == nil && os.SameFile(in, out) {
				return fmt.Errorf("writing %s: it is an input of this run; write the output elsewhere", p.path)
			}
		}
	}
	return nil
}

// commit renames every finished file into place, in order. Should a
// rename fail (it does not, short of a full or failing disk), the files not
// yet renamed are discarded and the error says which were written.
func (o outputs) commit() error {
	for i, p := range o {
		if err := os.Rename(p.tmp.Name(), p.path); err != nil {
			o[i:].discard()
			if i == 0 {
				return fmt.Errorf("writing %s: %w", p.path, err)
			}
			return fmt.Errorf("writing %s: %w (the %d files before it were written)", p.path, err, i)
		}
	}
	return nil
}

// discard removes every temporary file.
func (o outputs) discard() {
	for _, p := range o {
		p.discard()
	}
}
