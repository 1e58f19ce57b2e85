package baseline

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"slices"

	"github.com/assay-project/assay/engine/source"
)

// Build reads the columns of set (all when columns is nil) and returns
// their baseline. tool names the program and its version. Every input is
// read once more to hash its bytes.
func Build(ctx context.Context, set *source.Set, columns []string, tool string) (*File, error) {
	schema := set.Schema()
	if columns == nil {
		for _, f := range schema.Fields() {
			columns = append(columns, f.Name)
		}
	}
	accs := make([]*Accumulator, len(columns))
	for i, name := range columns {
		idx := schema.FieldIndices(name)
		if len(idx) == 0 {
			return nil, fmt.Errorf("no column %q in the data", name)
		}
		a, err := NewAccumulator(name, schema.Field(idx[0]).Type)
		if err != nil {
			return nil, err
		}
		accs[i] = a
	}
	var rows int64
	err := set.Scan(ctx, columns, func(b *source.Batch) error {
		defer b.Release()
		rows += b.Record.NumRows()
		for i, a := range accs {
			a.Observe(b.Record.Column(i))
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	f := &File{Format: Format, Version: Version, Tool: tool, Rows: rows}
	for _, in := range set.Files() {
		s, err := hashFile(in.Path)
		if err != nil {
			return nil, err
		}
		f.Sources = append(f.Sources, s)
	}
	for _, a := range accs {
		f.Columns = append(f.Columns, a.Column())
	}
	return f, nil
}

// hashFile returns the size and SHA-256 of the file at path.
func hashFile(path string) (Source, error) {
	r, err := os.Open(path)
	if err != nil {
		return Source{}, fmt.Errorf("hash input: %w", err)
	}
	defer r.Close()
	h := sha256.New()
	n, err := io.Copy(h, r)
	if err != nil {
		return Source{}, fmt.Errorf("hash input %s: %w", path, err)
	}
	return Source{Path: path, Bytes: n, SHA256: hex.EncodeToString(h.Sum(nil))}, nil
}

// Marshal writes f as indented JSON: the same file gives the same bytes
// (fields in a fixed order, categories sorted, floats in their shortest
// exact form).
func (f *File) Marshal() ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetIndent("", " ")
	if err := enc.Encode(f); err != nil {
		return nil, fmt.Errorf("encode baseline: %w", err)
	}
	return buf.Bytes(), nil
}

// Read reads and checks the baseline file at path.
func Read(path string) (*File, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("read baseline: %w", err)
	}
	return Parse(path, b)
}

// Parse decodes a baseline file's bytes; name is shown in errors.
func Parse(name string, b []byte) (*File, error) {
	var f File
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&f); err != nil {
		return nil, fmt.Errorf("baseline %s: %w", name, err)
	}
	switch {
	case f.Format != Format:
		return nil, fmt.Errorf("baseline %s: not a baseline file (format %q, want %q); make one with assay baseline", name, f.Format, Format)
	case f.Version != Version:
		return nil, fmt.Errorf("baseline %s: version %d, this assay reads version %d; remake it with assay baseline", name, f.Version, Version)
	}
	for _, c := range f.Columns {
		if err := c.check(); err != nil {
			return nil, fmt.Errorf("baseline %s: column %s: %w", name, c.Name, err)
		}
	}
	return &f, nil
}

// check reports a column summary that cannot be used.
func (c Column) check() error {
	switch {
	case c.Rows < 0 || c.Nulls < 0 || c.Nulls > c.Rows:
		return fmt.Errorf("rows %d and nulls %d do not fit", c.Rows, c.Nulls)
	case c.Numbers != nil:
		n := c.Numbers
		if n.Sketch == nil || n.Sketch.K < 8 || len(n.Sketch.Levels) == 0 {
			return fmt.Errorf("numbers without a valid sketch")
		}
		if !slices.IsSortedFunc(n.Bins, func(a, b Bin) int {
			switch {
			case a.Upper < b.Upper:
				return -1
			case a.Upper > b.Upper:
				return 1
			}
			return 0
		}) {
			return fmt.Errorf("histogram edges are not ascending")
		}
	case c.Categories == nil:
		return fmt.Errorf("neither numbers nor categories")
	}
	return nil
}

// Column returns the summary of the column named name, or nil.
func (f *File) Column(name string) *Column {
	for i := range f.Columns {
		if f.Columns[i].Name == name {
			return &f.Columns[i]
		}
	}
	return nil
}
