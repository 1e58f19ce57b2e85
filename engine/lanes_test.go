package engine_test

import (
	"bytes"
	"path/filepath"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestWorkersAgree runs every conformance case in 7-row batches on one
// worker and on three, and on three with the second pass reading the
// first pass's copy of the data (a spill, forced on whatever the format)
// and reading the data again (forced off): the lanes see the same batches
// either way, so the results must be identical to the last digit and the
// last sampled row.
func TestWorkersAgree(t *testing.T) {
	eachConformanceCase(t, func(t *testing.T, pol *rules.Policy, _ string) {
		run := func(opts engine.Options) []byte {
			t.Helper()
			opts.Source = source.Options{BatchRows: 7}
			return resultsOf(t, pol, nil, opts)
		}
		one := run(engine.Options{Workers: 1})
		for _, tc := range []struct {
			name string
			opts engine.Options
		}{
			{"three", engine.Options{Workers: 3}},
			{"three, spill", engine.ForceSpill(engine.Options{Workers: 3}, true)},
			{"three, no spill", engine.ForceSpill(engine.Options{Workers: 3}, false)},
			{"one, spill", engine.ForceSpill(engine.Options{Workers: 1}, true)},
		} {
			if got := run(tc.opts); !bytes.Equal(one, got) {
				t.Errorf("results differ between one worker and %s:\n%s", tc.name, firstDifference(one, got, "one", tc.name))
			}
		}
	})
}

// eachConformanceCase runs test as a subtest, named after the case's
// directory, on every conformance case's policy and the path of its
// policy file (which relative data paths are relative to).
func eachConformanceCase(t *testing.T, test func(t *testing.T, pol *rules.Policy, path string)) {
	t.Helper()
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
			test(t, pol, path)
		})
	}
}

// firstDifference shows the lines around the first line where a and b,
// named aName and bName, differ.
func firstDifference(a, b []byte, aName, bName string) string {
	al, bl := bytes.Split(a, []byte("\n")), bytes.Split(b, []byte("\n"))
	for i := range min(len(al), len(bl)) {
		if !bytes.Equal(al[i], bl[i]) {
			lo := max(0, i-3)
			return aName + ":\n" + string(bytes.Join(al[lo:i+1], []byte("\n"))) + "\n" + bName + ":\n" + string(bytes.Join(bl[lo:i+1], []byte("\n")))
		}
	}
	return "one is a prefix of the other"
}
