package rules

import (
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzParse feeds Parse mutations of every fixture. Properties: Parse never
// panics; it returns either a policy or an ErrorList, never both; every
// problem has a code, a message and a line (Line > 0: YAML syntax errors
// without a column have Col 0, and nothing is ever reported without a
// line); a policy's rules have distinct ids, positions, specs matching
// their kinds, and Explain can print them.
func FuzzParse(f *testing.F) {
	for _, dir := range []string{"testdata/good", "testdata/bad"} {
		files, err := filepath.Glob(filepath.Join(dir, "*.yaml"))
		if err != nil || len(files) == 0 {
			f.Fatalf("no seeds in %s: %v", dir, err)
		}
		for _, file := range files {
			f.Add(mustRead(f, file))
		}
	}
	f.Fuzz(func(t *testing.T, src []byte) {
		p, err := Parse("fuzz.yaml", src)
		if err != nil {
			var list ErrorList
			switch {
			case !errors.As(err, &list) || len(list) == 0:
				t.Fatalf("error is not a non-empty ErrorList: %#v", err)
			case p != nil:
				t.Fatal("a policy along with problems")
			}
			for _, e := range list {
				if e.Code == "" || e.Message == "" || e.Pos.Line <= 0 || e.Pos.Col < 0 || e.Pos.File != "fuzz.yaml" {
					t.Errorf("problem without code, message or position: %#v", e)
				}
			}
			_ = list.Detail()
			return
		}
		ids := map[string]bool{}
		for _, r := range p.Rules {
			if ids[r.ID] || r.Pos.Line <= 0 || r.Spec == nil || r.Spec.Kind() != r.Kind || r.Measure.Name == "" {
				t.Errorf("bad rule %+v", r)
			}
			ids[r.ID] = true
		}
		var b strings.Builder
		if err := Explain(&b, p); err != nil {
			t.Error(err)
		}
	})
}
