package relate

import (
	"testing"
)

// Benchmarks at 10⁶ pairs (y = 1 + 2x + N(0,1) with 10% gross outliers
// among the largest x, as in TestRobustResistOutliers):
//
//	go test -run '^$' -bench . -benchmem -benchtime 3x ./checks/relate
//
// ns/pair is the wall time per pair of one whole call, cpu-ns/pair the
// process's CPU time per pair (on a loaded machine the honest figure;
// garbage collection included).
const benchN = 1_000_000

func benchData(b *testing.B) (x, y []float64) {
	b.Helper()
	x, y, _ = contaminated(1, benchN, 0.1)
	return x, y
}

// loop runs f b.N times and reports the time per pair.
func loop(b *testing.B, f func()) {
	b.Helper()
	start := cpuTime()
	for b.Loop() {
		f()
	}
	cpu := cpuTime() - start
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchN, "ns/pair")
	if cpu > 0 {
		b.ReportMetric(float64(cpu.Nanoseconds())/float64(b.N)/benchN, "cpu-ns/pair")
	}
}

// BenchmarkMoments: the first pass of a linear rule, pair by pair
// (Welford) and in batches of 64Ki pairs (two-pass per batch, merged).
func BenchmarkMoments(b *testing.B) {
	x, y := benchData(b)
	b.Run("welford", func(b *testing.B) {
		loop(b, func() {
			var m Moments
			for i := range x {
				m.Add(x[i], y[i])
			}
			if _, err := m.Line(); err != nil {
				b.Fatal(err)
			}
		})
	})
	b.Run("batches", func(b *testing.B) {
		loop(b, func() {
			var m Moments
			for lo := 0; lo < len(x); lo += 1 << 16 {
				hi := min(lo+1<<16, len(x))
				m.AddAll(x[lo:hi], y[lo:hi])
			}
			if _, err := m.Line(); err != nil {
				b.Fatal(err)
			}
		})
	})
}

// BenchmarkDiagnose: the second pass, every row diagnosed and judged
// against the Bonferroni and Cook cutoffs.
func BenchmarkDiagnose(b *testing.B) {
	x, y := benchData(b)
	var m Moments
	m.AddAll(x, y)
	l, err := m.Line()
	if err != nil {
		b.Fatal(err)
	}
	cut := Cutoffs{Studentized: BonferroniCutoff(0.05, l.N), Cooks: CooksCutoff(l.N)}
	flagged := 0
	loop(b, func() {
		flagged = 0
		for i := range x {
			if st, ck := cut.Flags(l.Diagnose(x[i], y[i])); st || ck {
				flagged++
			}
		}
	})
	b.ReportMetric(float64(flagged), "flagged")
}

func BenchmarkTheilSenSampled(b *testing.B) {
	x, y := benchData(b)
	loop(b, func() {
		if _, err := TheilSen(x, y, TheilSenOptions{Seed: 1}); err != nil {
			b.Fatal(err)
		}
	})
}

func BenchmarkHuber(b *testing.B) {
	x, y := benchData(b)
	var it int
	loop(b, func() {
		h, err := Huber(x, y, HuberOptions{})
		if err != nil || !h.Converged {
			b.Fatal(h, err)
		}
		it = h.Iterations
	})
	b.ReportMetric(float64(it), "iterations")
}

func BenchmarkSpearman(b *testing.B) {
	x, y := benchData(b)
	loop(b, func() {
		if _, err := SpearmanTest(x, y); err != nil {
			b.Fatal(err)
		}
	})
}

func BenchmarkKendall(b *testing.B) {
	x, y := benchData(b)
	loop(b, func() {
		if _, err := KendallTest(x, y); err != nil {
			b.Fatal(err)
		}
	})
}
