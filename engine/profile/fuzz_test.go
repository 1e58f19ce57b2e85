package profile

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/rules"
)

// FuzzDraft drafts a policy from any CSV text: drafting never panics, and
// a draft it returns is a valid policy that passes on the data it was
// drafted from.
func FuzzDraft(f *testing.F) {
	for _, seed := range []string{
		"a,b\n1,x\n2,y\n",
		"n,v\n1,0.5\n2,\n3,1e308\n4,-1e308\n",
		"t,d\n2026-01-01T00:00:00Z,2026-01-01\n2026-01-02 10:00:00+02:00,2026-01-02\n",
		"s\n\"a\nb\"\n\"#x\"\n\"yes\"\n01\n",
		"x,y\n1,2\n2,4\n3,6\n4,8\n5,10\n6,12\n",
		"b\ntrue\nFALSE\nNA\n",
		"a\n1\n1.5\nx\n",
	} {
		f.Add(seed)
	}
	f.Fuzz(func(t *testing.T, text string) {
		dir := t.TempDir()
		path := filepath.Join(dir, "d.csv")
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		draft, err := Draft(context.Background(), []string{path}, Options{Data: []string{"d.csv"}, Sample: 200})
		if err != nil {
			return // unreadable data is reported, not drafted
		}
		pol, err := rules.Parse(filepath.Join(dir, "policy.yaml"), draft)
		if err != nil {
			t.Fatalf("the draft is not a valid policy: %v\n%s", err, draft)
		}
		rep, err := engine.Run(context.Background(), pol, []string{path}, engine.Options{Workers: 1})
		if err != nil {
			t.Fatalf("the draft does not run on its data: %v\n%s", err, draft)
		}
		if bad := notPassing(rep); len(bad) > 0 {
			t.Fatalf("the draft does not pass on its data: %v\n%s\ndata: %q", bad, draft, text)
		}
	})
}
