package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/assay-project/assay/checks/baseline"
)

func TestBaselineCommand(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "batch.csv")
	var b strings.Builder
	b.WriteString("site,moisture\n")
	for i := range 500 {
		site := []string{"north", "south", "east"}[i%3]
		if i%50 == 0 {
			b.WriteString(site + ",\n")
			continue
		}
		fmt.Fprintf(&b, "%s,%d.%d\n", site, 10+i%7, i%10)
	}
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	out1, out2 := filepath.Join(dir, "a.json"), filepath.Join(dir, "b.json")
	for _, out := range []string{out1, out2} {
		if o := assay(t, "", "baseline", data, "-o", out); o.code != exitPass {
			t.Fatalf("exit %d: %s", o.code, o.stderr)
		}
	}
	a, _ := os.ReadFile(out1)
	c, _ := os.ReadFile(out2)
	if string(a) != string(c) {
		t.Error("two baselines of the same data differ")
	}
	f, err := baseline.Read(out1)
	if err != nil {
		t.Fatal(err)
	}
	if f.Rows != 500 || len(f.Columns) != 2 || len(f.Sources) != 1 || len(f.Sources[0].SHA256) != 64 ||
		!strings.HasPrefix(f.Tool, "assay ") {
		t.Fatalf("baseline = rows %d, %d columns, sources %+v, tool %q", f.Rows, len(f.Columns), f.Sources, f.Tool)
	}
	site, moist := f.Column("site"), f.Column("moisture")
	if site == nil || site.Categories == nil || len(site.Categories.Top) != 3 || !site.Categories.Exact {
		t.Errorf("site summary = %+v", site)
	}
	if moist == nil || moist.Numbers == nil || moist.Nulls != 10 || moist.Numbers.Count != 490 {
		t.Errorf("moisture summary = %+v", moist)
	}
}

func TestBaselineCommandTrouble(t *testing.T) {
	dir := t.TempDir()
	data := filepath.Join(dir, "batch.csv")
	if err := os.WriteFile(data, []byte("x\n1\n2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no output", []string{"baseline", data}, "usage: assay baseline"},
		{"no data", []string{"baseline", "-o", filepath.Join(dir, "b.json")}, "usage: assay baseline"},
		{"stdin", []string{"baseline", "-", "-o", filepath.Join(dir, "b.json")}, "cannot read standard input"},
		{"over its input", []string{"baseline", data, "-o", data}, "it is an input of this run"},
	}
	for _, tt := range tests {
		o := assay(t, "x\n1\n", tt.args...)
		if o.code != exitTrouble || !strings.Contains(o.stderr, tt.want) {
			t.Errorf("%s: exit %d, stderr %q; want 2 and %q", tt.name, o.code, o.stderr, tt.want)
		}
	}
	if got, _ := os.ReadFile(data); string(got) != "x\n1\n2\n" {
		t.Errorf("input overwritten: %q", got)
	}
}

// With --policy the data is read as the policy says (its data, its
// types) and only its columns are summarised.
func TestBaselineCommandPolicy(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "batch.csv"), []byte("id,code,note\n1,7,a\n2,8,b\n3,9,c\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	pol := filepath.Join(dir, "policy.yaml")
	src := "policy: p\ndata: [batch.csv]\ncolumns:\n  code:\n    type: string\n  id:\n    type: integer\n"
	if err := os.WriteFile(pol, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "b.json")
	if o := assay(t, "", "baseline", "--policy", pol, "-o", out); o.code != exitPass {
		t.Fatalf("exit %d: %s", o.code, o.stderr)
	}
	f, err := baseline.Read(out)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Columns) != 2 || f.Columns[0].Name != "code" || f.Columns[0].Type != "string" ||
		f.Columns[1].Name != "id" || f.Columns[1].Type != "number" {
		t.Errorf("columns = %+v, want code as string then id as number", f.Columns)
	}
}
