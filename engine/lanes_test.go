package engine_test

import (
	"bytes"
	"context"
	"encoding/json"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestWorkersAgree runs every conformance case in 7-row batches on one
// worker and on three: the lanes see the same batches either way, so the
// results must be identical to the last digit and the last sampled row.
func TestWorkersAgree(t *testing.T) {
	paths, err := filepath.Glob("../testdata/conformance/*/policy.yaml")
	if err != nil || len(paths) == 0 {
		t.Fatalf("no conformance cases found (%v)", err)
	}
	for _, path := range paths {
		t.Run(filepath.Base(filepath.Dir(path)), func(t *testing.T) {
			pol, err := rules.Load(path)
			if err != nil {
				t.Fatal(err)
			}
			run := func(workers int) []byte {
				t.Helper()
				rep, err := engine.Run(context.Background(), pol, nil, engine.Options{
					Workers: workers,
					Source:  source.Options{BatchRows: 7},
				})
				if err != nil {
					t.Fatal(err)
				}
				out, err := json.MarshalIndent(rep.Results, "", " ")
				if err != nil {
					t.Fatal(err)
				}
				return out
			}
			one, three := run(1), run(3)
			if !bytes.Equal(one, three) {
				t.Errorf("results differ between one worker and three:\n%s", firstDifference(one, three))
			}
		})
	}
}

// firstDifference shows the lines around the first line where a and b
// differ.
func firstDifference(a, b []byte) string {
	al, bl := bytes.Split(a, []byte("\n")), bytes.Split(b, []byte("\n"))
	for i := range min(len(al), len(bl)) {
		if !bytes.Equal(al[i], bl[i]) {
			lo := max(0, i-3)
			return "one:\n" + string(bytes.Join(al[lo:i+1], []byte("\n"))) + "\nthree:\n" + string(bytes.Join(bl[lo:i+1], []byte("\n")))
		}
	}
	return "one is a prefix of the other"
}
