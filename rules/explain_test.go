package rules

import (
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

// TestExplain compares the explain table of policies with their goldens
// (-update rewrites them).
func TestExplain(t *testing.T) {
	for _, name := range []string{"full", "times", "long-forms", "distributions", "extremes", "pairs"} {
		t.Run(name, func(t *testing.T) {
			p, err := Load(filepath.Join("testdata/good", name+".yaml"))
			if err != nil {
				t.Fatal(err)
			}
			var b strings.Builder
			if err := Explain(&b, p); err != nil {
				t.Fatal(err)
			}
			golden(t, filepath.Join("testdata/explain", name+".txt"), b.String())
		})
	}
}

func TestExplainCells(t *testing.T) {
	src := `policy: cells
columns:
  w:
    unit: kg
    nulls: {warn: 0.015, fail: "12.5%"}
    summary:
      mean: {warn: [1.5, null], fail: [null, 1e20]}
      count: {minimum: 1000000}
  s:
    enum: {values: [a, "b c"], tolerance: 0.1%}
`
	p, err := Parse("cells.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := Explain(&b, p); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	want := [][]string{
		{"policy", "cells:", "4", "rules"},
		{"id", "check", "columns", "measure", "direction", "warn", "fail", "spec"},
		{"columns.w.nulls", "nulls", "w", "null", "share", "at", "most", "1.5%", "12.5%", "-"},
		{"columns.w.summary.mean", "summary", "w", "mean", "within", "[1.5,", "+inf]", "[-inf,", "1e+20]", "-"},
		{"columns.w.summary.count", "summary", "w", "count", "within", "-", "[1000000,", "+inf]", "-"},
		{"columns.s.enum", "enum", "s", "outside", "enum", "share", "at", "most", "-", "0.1%", "in", `["a",`, `"b`, `c"]`},
	}
	if len(lines) != len(want) {
		t.Fatalf("got %d lines, want %d:\n%s", len(lines), len(want), b.String())
	}
	for i, w := range want {
		if got := strings.Fields(lines[i]); strings.Join(got, "|") != strings.Join(w, "|") {
			t.Errorf("line %d:\ngot  %q\nwant %q", i, got, w)
		}
	}
}

type failingWriter struct{}

func (failingWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

func TestExplainWriteError(t *testing.T) {
	p, err := Load("testdata/good/minimal.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if err := Explain(failingWriter{}, p); err == nil || !strings.Contains(err.Error(), "disk full") {
		t.Errorf("got %v, want the write error", err)
	}
}
