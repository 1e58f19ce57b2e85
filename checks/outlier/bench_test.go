package outlier

import (
	"slices"
	"testing"
)

// Benchmarks at 1e6 values (univariate) and 1e6 rows × 3 columns (joint),
// normal data with 0.1% planted outliers.

const benchN = 1_000_000

func benchValues() []float64 {
	rng := newRand(900)
	x := normals(rng, benchN)
	for i := 0; i < benchN; i += 1000 {
		x[i] += 12
	}
	return x
}

func benchColumns() [][]float64 {
	cols := gaussianColumns(newRand(901), benchN, 3)
	for i := 0; i < benchN; i += 1000 {
		cols[1][i] -= 15
	}
	return cols
}

// BenchmarkUnivariate1e6 sorts a copy, fits the rule (Tukey fences;
// median and MAD) and scans every value.
func BenchmarkUnivariate1e6(b *testing.B) {
	x := benchValues()
	for _, c := range []struct {
		name string
		fit  func(sorted []float64) (Rule, error)
	}{
		{"tukey", func(s []float64) (Rule, error) { return TukeyFences(s, DefaultTukeyK) }},
		{"robust-z", func(s []float64) (Rule, error) { return NewRobustZ(s, DefaultRobustZCutoff) }},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				s := slices.Clone(x)
				slices.Sort(s)
				r, err := c.fit(s)
				if err != nil {
					b.Fatal(err)
				}
				if len(Scan(x, r)) < benchN/1000 {
					b.Fatal("planted values missed")
				}
			}
		})
	}
}

// BenchmarkFitSorted1e6: the part after sorting, fences and MAD from sorted
// values (validation included) and one scan each.
func BenchmarkFitSorted1e6(b *testing.B) {
	x := benchValues()
	s := slices.Clone(x)
	slices.Sort(s)
	b.ReportAllocs()
	for b.Loop() {
		f, _ := TukeyFences(s, DefaultTukeyK)
		r, _ := NewRobustZ(s, DefaultRobustZCutoff)
		Scan(x, f)
		Scan(x, r)
	}
}

// BenchmarkClassical1e6x3: co-moments over batches of 65536 rows, merged,
// then the second pass flagging rows beyond χ²₃(0.999).
func BenchmarkClassical1e6x3(b *testing.B) {
	cols := benchColumns()
	cut := Cutoff(3, DefaultJointQuantile)
	b.ReportAllocs()
	for b.Loop() {
		m := NewCoMoments(3)
		for lo := 0; lo < benchN; lo += 65536 {
			hi := min(benchN, lo+65536)
			if err := m.AddColumns([][]float64{cols[0][lo:hi], cols[1][lo:hi], cols[2][lo:hi]}); err != nil {
				b.Fatal(err)
			}
		}
		s, err := m.Scatter()
		if err != nil {
			b.Fatal(err)
		}
		if f, _ := s.Flag(cols, cut); len(f) < benchN/1000 {
			b.Fatal("planted rows missed")
		}
	}
}

// BenchmarkDist2Row1e6x3: the per-row cost of the second pass.
func BenchmarkDist2Row1e6x3(b *testing.B) {
	cols := benchColumns()
	s, err := Classical(cols)
	if err != nil {
		b.Fatal(err)
	}
	row := make([]float64, 3)
	b.ReportAllocs()
	for b.Loop() {
		for i := range benchN {
			row[0], row[1], row[2] = cols[0][i], cols[1][i], cols[2][i]
			s.Dist2(row)
		}
	}
}

// BenchmarkFastMCD1e6x3: the robust estimate with the default options, then
// the second pass flagging rows.
func BenchmarkFastMCD1e6x3(b *testing.B) {
	cols := benchColumns()
	cut := Cutoff(3, DefaultJointQuantile)
	b.ReportAllocs()
	for b.Loop() {
		m, err := FastMCD(cols, MCDOptions{}, newRand(902))
		if err != nil {
			b.Fatal(err)
		}
		if f, _ := m.Final.Flag(cols, cut); len(f) < benchN/1000 {
			b.Fatal("planted rows missed")
		}
	}
}
