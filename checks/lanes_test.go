package checks

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

// TestLaneMakersAgree: the rules whose lanes share a sampling bound
// (LaneMaker), run as the engine runs them (batch k to lane k mod 4, each
// lane on its own goroutine, merged in lane order), give the same result
// as one accumulator over every batch, and as lanes made one by one, on
// more rows than their samples keep, with missing values so that runs are
// cut (run with -race).
func TestLaneMakersAgree(t *testing.T) {
	mem := checkedMem(t)
	rng := rand.New(rand.NewPCG(21, 22))
	const batches, per = 40, 500
	var bs []*source.Batch
	for k := range batches {
		cols := make([][]float64, 3)
		for i := range per {
			x := rng.NormFloat64()
			y, z := x+rng.NormFloat64()/2, x-rng.NormFloat64()
			if (k*per+i)%13 == 4 {
				y = math.NaN()
			}
			cols[0], cols[1], cols[2] = append(cols[0], x), append(cols[1], y), append(cols[2], z)
		}
		bs = append(bs, colsBatch(t, mem, int64(k*per), cols))
	}
	release(t, bs...)
	env := envOf(bs[0], 20)
	dist := distSpec("normal")
	dist.Sample = 700
	joint := jointSpec(true)
	joint.Sample = 900
	for _, tc := range []struct {
		name string
		rule *rules.Rule
	}{
		{"distribution", newRule(dist, distanceTol, "x1")},
		{"distribution, missing values", newRule(dist, distanceTol, "x2")},
		{"joint robust", newRule(joint, atMost(0.05), "x1", "x2", "x3")},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := compile(t, tc.rule, env)
			m, ok := c.(LaneMaker)
			if !ok {
				t.Fatalf("%T is not a LaneMaker", c)
			}
			want, err := json.Marshal(run(t, c, bs...))
			if err != nil {
				t.Fatal(err)
			}
			for range 3 {
				accs := m.NewAccumulators(4)
				var wg sync.WaitGroup
				errs := make([]error, len(accs))
				for l, a := range accs {
					wg.Go(func() {
						for k := l; k < len(bs) && errs[l] == nil; k += len(accs) {
							errs[l] = a.Observe(bs[k])
						}
					})
				}
				wg.Wait()
				for l, a := range accs {
					if errs[l] != nil {
						t.Fatal(errs[l])
					}
					if l > 0 {
						if err := accs[0].Merge(a); err != nil {
							t.Fatal(err)
						}
					}
				}
				a := accs[0]
				if r, ok := a.(Rescanner); ok {
					if next := r.SecondPass(); next != nil {
						a = next
						observe(t, a, bs...)
					}
				}
				got, err := json.Marshal(a.Finish())
				if err != nil {
					t.Fatal(err)
				}
				if string(got) != string(want) {
					t.Fatalf("lanes sharing a bound\n%s\nwant\n%s", got, want)
				}
			}
			if got, _ := json.Marshal(runInterleaved(t, c, 4, bs...)); string(got) != string(want) {
				t.Fatalf("lanes made one by one\n%s\nwant\n%s", got, want)
			}
		})
	}
}
