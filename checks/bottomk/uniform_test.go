package bottomk

import (
	"slices"
	"testing"
)

// Upper 0.001 critical values of the chi-square distribution, from the
// table of the NIST/SEMATECH e-Handbook of Statistical Methods, section
// 1.3.6.7.4, "Critical values of the chi-square distribution".
const (
	chi2df39at001 = 72.055
	chi2df49at001 = 85.351
)

// pearson is Pearson's X² of counts against equal expected counts.
func pearson(counts []int) float64 {
	total := 0
	for _, c := range counts {
		total += c
	}
	e := float64(total) / float64(len(counts))
	x2 := 0.0
	for _, c := range counts {
		d := float64(c) - e
		x2 += d * d / e
	}
	return x2
}

// TestUniformInclusion: over many seeds, each of n rows is kept equally
// often. Every trial keeps k distinct rows, which makes the counts less
// variable than multinomial ones by the factor (n-k)/(n-1) (sampling
// without replacement); Pearson's X² is rescaled by its inverse and
// compared with the chi-square(n-1) critical value at 0.001. The rows come
// in interleaved batches to two samples merged afterwards, and also to one.
func TestUniformInclusion(t *testing.T) {
	const trials, n, k = 20000, 40, 8
	whole, merged := make([]int, n), make([]int, n)
	for seed := range uint64(trials) {
		one, _ := New(k, 1, seed)
		a, _ := New(k, 1, seed)
		b, _ := New(k, 1, seed)
		for first := int64(1); first <= n; first += 3 {
			vals := []float64{}
			for r := first; r < min(first+3, n+1); r++ {
				vals = append(vals, float64(r))
			}
			one.OfferRun(first, vals)
			if first%2 == 0 {
				a.OfferRun(first, vals)
			} else {
				b.OfferRun(first, vals)
			}
		}
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		for _, r := range one.Rows() {
			whole[r-1]++
		}
		for _, r := range a.Rows() {
			merged[r-1]++
		}
	}
	for name, counts := range map[string][]int{"one sample": whole, "merged": merged} {
		x2 := pearson(counts) * float64(n-1) / float64(n-k)
		if x2 > chi2df39at001 {
			t.Errorf("%s: inclusion counts not uniform: X² = %.1f on 39 df, above %.3f: %v", name, x2, chi2df39at001, counts)
		}
	}
}

// TestUniformLongStream: over a stream far longer than the sample (the
// threshold drops many times), the kept rows fall evenly in 50 stretches
// of the stream: Pearson's X² of their counts stays below the
// chi-square(49) critical value at 0.001. Rows are independent across
// trials only approximately within one (they are a sample without
// replacement), which makes X² smaller, not larger.
func TestUniformLongStream(t *testing.T) {
	const trials, n, k, bins = 300, 100_000, 200, 50
	vals := make([]float64, n)
	counts := make([]int, bins)
	for seed := range uint64(trials) {
		s, _ := New(k, 1, seed)
		s.OfferRun(0, vals)
		for _, r := range s.Rows() {
			counts[r/(n/bins)]++
		}
	}
	if x2 := pearson(counts); x2 > chi2df49at001 {
		t.Errorf("kept rows not uniform over the stream: X² = %.1f on 49 df, above %.3f: %v", x2, chi2df49at001, counts)
	}
}

// TestPairsKeptTogether: two given rows are both kept with probability
// k(k-1)/(n(n-1)), whether they came to the same lane or to two lanes
// merged later (1/15 for k = 3 of n = 10; the binomial standard error at
// 40000 trials is 0.00125, the tolerance four times that).
func TestPairsKeptTogether(t *testing.T) {
	const trials, k = 40000, 3
	together, sameLane := 0, 0
	for seed := range uint64(trials) {
		a, _ := New(k, 1, seed)
		b, _ := New(k, 1, seed)
		a.OfferRun(0, make([]float64, 5))
		b.OfferRun(5, make([]float64, 5))
		if err := a.Merge(b); err != nil {
			t.Fatal(err)
		}
		rows := a.Rows()
		if slices.Contains(rows, 0) && slices.Contains(rows, 5) {
			together++
		}
		if slices.Contains(rows, 0) && slices.Contains(rows, 1) {
			sameLane++
		}
	}
	want := float64(k*(k-1)) / (10 * 9)
	for name, c := range map[string]int{"across lanes": together, "within a lane": sameLane} {
		if got := float64(c) / trials; got < want-0.005 || got > want+0.005 {
			t.Errorf("pair %s kept together in %.4f of trials, want %.4f", name, got, want)
		}
	}
	if Key(1, 5) == Key(2, 5) {
		t.Error("two seeds gave row 5 the same key")
	}
}
