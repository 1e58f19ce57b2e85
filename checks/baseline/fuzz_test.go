package baseline

import (
	"os"
	"testing"
)

// FuzzParse: a baseline file of any content is read or refused with an
// error naming it; never a panic.
func FuzzParse(f *testing.F) {
	if b, err := os.ReadFile("../../testdata/conformance/drift-planted/reference.baseline.json"); err == nil {
		f.Add(b)
	}
	f.Add([]byte(`{"format":"assay-baseline","version":1,"columns":[{"name":"x","type":"number","rows":1,"nulls":2}]}`))
	f.Add([]byte(`{"format":"assay-baseline","version":2}`))
	f.Add([]byte(`[]`))
	f.Fuzz(func(t *testing.T, b []byte) {
		file, err := Parse("fuzz.json", b)
		if err != nil {
			if len(err.Error()) < len("baseline fuzz.json") || err.Error()[:len("baseline fuzz.json")] != "baseline fuzz.json" {
				t.Errorf("error does not name the file: %v", err)
			}
			return
		}
		for _, c := range file.Columns {
			if c.Numbers != nil {
				c.Numbers.Sketch.Weighted().Quantile(0.5)
			}
		}
	})
}
