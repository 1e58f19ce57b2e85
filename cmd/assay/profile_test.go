package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestProfile drafts a policy into another folder than the data's, and
// checks the data with it unchanged: `data:` must find the file from the
// policy's folder.
func TestProfile(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("plot,kind,yield_t\n")
	kinds := []string{"wheat", "barley", "oats"}
	for i := range 300 {
		fmt.Fprintf(&b, "P%03d,%s,%.2f\n", i, kinds[i%3], 4+float64((i*37)%100)/50)
	}
	data := filepath.Join(dir, "data", "plots.csv")
	if err := os.MkdirAll(filepath.Dir(data), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "policies", "plots.yaml")
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		t.Fatal(err)
	}
	if o := assay(t, "", "profile", data, "-o", out); o.code != exitPass || o.stdout != "" {
		t.Fatalf("profile: exit %d, stdout %q, stderr %s", o.code, o.stdout, o.stderr)
	}
	text, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"policy: plots\n", "data: [\"../data/plots.csv\"]\n", "enum: [barley, oats, wheat]\n", "unique: true\n"} {
		if !strings.Contains(string(text), want) {
			t.Errorf("draft lacks %q:\n%s", want, text)
		}
	}
	if o := assay(t, "", "check", out); o.code != exitPass {
		t.Errorf("check with the draft: exit %d\n%s%s", o.code, o.stdout, o.stderr)
	}
	// Standard output when no -o, the same rules.
	o := assay(t, "", "profile", data, "--name", "plots")
	if o.code != exitPass || !strings.Contains(o.stdout, "policy: plots\n") || strings.Contains(o.stdout, "data:") {
		t.Errorf("profile to stdout: exit %d, stderr %s\n%s", o.code, o.stderr, o.stdout)
	}
}

func TestProfileTrouble(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "d.csv")
	if err := os.WriteFile(data, []byte("a\n1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		want string // in standard error
	}{
		{"no data", []string{"profile"}, "usage: assay profile"},
		{"missing file", []string{"profile", filepath.Join(dir, "none.csv")}, "none.csv"},
		{"output is the input", []string{"profile", data, "-o", data}, "it is an input of this run"},
		{"sample too small", []string{"profile", data, "--sample", "5"}, "--sample must be at least 100"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			o := assay(t, "", c.args...)
			if o.code != exitTrouble || !strings.Contains(o.stderr, c.want) {
				t.Errorf("exit %d, stderr %q; want exit %d and %q", o.code, o.stderr, exitTrouble, c.want)
			}
		})
	}
	if got, err := os.ReadFile(data); err != nil || string(got) != "a\n1\n" {
		t.Errorf("the data file was changed: %q, %v", got, err)
	}
}
