package engine_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestSamplesIgnoreBatches: the rules that draw a seeded sample of rows
// (distribution, robust joint, linear with a robust fit, monotonic, and
// the plot points of ordered and linear pairs), each on more rows than it
// keeps, report the same bytes whatever the batch size (7, 1000, 65,536
// rows) and on one worker or three: a row is kept by a key computed from
// the seed and its row number alone.
func TestSamplesIgnoreBatches(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(5, 6))
	var b strings.Builder
	b.WriteString("x,y,z\n")
	num := func(v float64, missing bool) string {
		if missing {
			return ""
		}
		return strconv.FormatFloat(v, 'g', 6, 64)
	}
	for i := range 6000 {
		x := rng.NormFloat64()*3 + 20
		y := math.Exp(0.1*x + rng.NormFloat64()/4)
		z := x + rng.NormFloat64()
		fmt.Fprintf(&b, "%s,%s,%s\n", num(x, i%97 == 5), num(y, i%61 == 7), num(z, false))
	}
	data := filepath.Join(dir, "data.csv")
	if err := os.WriteFile(data, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	pol, err := rules.Parse(filepath.Join(dir, "policy.yaml"), []byte(`policy: sampled
columns:
  x:
    type: number
    distribution: {family: normal, sample: 700}
  y:
    type: number
    distribution: {family: [lognormal, gamma], test: anderson-darling, sample: 1500, seed: 3}
  z: {type: number}
joint:
  - name: xyz
    columns: [x, y, z]
    robust: true
    sample: 400
    tolerance: {warn: 1%, fail: 5%}
pairs:
  - name: xy linear
    columns: [x, z]
    relation: linear
    fit: theil-sen
    sample: 300
    slope: {minimum: 0.5}
  - name: xz rank
    columns: [x, y]
    relation: monotonic
    sample: 800
    correlation: {minimum: 0.5}
  - name: zy ordered
    columns: [y, z]
    relation: ordered
`))
	if err != nil {
		t.Fatal(err)
	}
	run := func(batch, workers int) []byte {
		t.Helper()
		rep, err := engine.Run(context.Background(), pol, []string{data}, engine.Options{
			Workers: workers,
			Source:  source.Options{BatchRows: batch},
		})
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range rep.Results {
			// The linear rule's r² comes from moments streamed batch by
			// batch, whose last bits depend on where batches end; no
			// sample enters it.
			delete(r.Estimates, "r2")
		}
		out, err := json.MarshalIndent(rep.Results, "", " ")
		if err != nil {
			t.Fatal(err)
		}
		return out
	}
	want := run(65536, 1)
	for _, s := range []string{`"sampled": true`, `"sample_size": 400`, `"sample_size": 700`} {
		if !bytes.Contains(want, []byte(s)) {
			t.Fatalf("the report does not say %s: the test no longer samples", s)
		}
	}
	for _, batch := range []int{7, 1000, 65536} {
		for _, workers := range []int{1, 3} {
			if got := run(batch, workers); !bytes.Equal(got, want) {
				t.Errorf("batches of %d rows on %d workers differ from batches of 65,536 on one:\n%s", batch, workers, firstLineApart(want, got))
			}
		}
	}
}

// firstLineApart shows the first line where a and b differ, as a then b.
func firstLineApart(a, b []byte) string {
	al, bl := bytes.Split(a, []byte("\n")), bytes.Split(b, []byte("\n"))
	for i := range min(len(al), len(bl)) {
		if !bytes.Equal(al[i], bl[i]) {
			out := ""
			for j := i; j < min(len(al), len(bl)); j++ {
				if !bytes.Equal(al[j], bl[j]) {
					out += fmt.Sprintf("line %d:\n%s\n%s\n", j+1, al[j], bl[j])
				}
			}
			return out
		}
	}
	return "one is a prefix of the other"
}
