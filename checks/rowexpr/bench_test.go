package rowexpr

import (
	"math/rand/v2"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// vectorizedCases cover every vectorized operation; none may allocate
// once its Evaluator's buffers exist.
var vectorizedCases = []string{
	`a <= b && c > 0`,
	`(a + b) * c - -a % 7 != 3 || x / y > 0.5 and x ** 2 <= y`,
	`not (p ?? q) || (a ?? b ?? 0) > 1 || (a == nil) != (s != nil)`,
	`abs(a) > 5 && round(x) == floor(y) || ceil(x) >= sqrt(abs(y)) || log(abs(x)) < exp(y)`,
	`max(a, b, c) - min(a, b) > int(x) || float(a) < x`,
	`lower(s) startsWith "b" && len(s) <= 8`,
	`upper(s + u) endsWith "A" || trim(s) contains "x" || trimPrefix(s, "a") == trimSuffix(u, "b")`,
	`s matches "^[a-z]+$" || hasPrefix(s, "B") || hasSuffix(u, "e")`,
	`a in [1, 2, 3, 2.5] || x in [0.5, 1] || s in ["apple", "é"] || p in [true] || a in -5..5`,
	`p ? x > 0 : (q ? a > b : s < u)`,
	`ts >= d && ts < date("2030-01-01") || d == date("2024-02-29")`,
}

func TestVectorizedDoesNotAllocate(t *testing.T) {
	if raceEnabled {
		t.Skip("allocation counts are not meaningful under the race detector")
	}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	rows := randomRows(rand.New(rand.NewPCG(3, 4)), 5000)
	rec := record(t, mem, rows)
	defer rec.Release()
	out := make([]Truth, len(rows))
	gap := make([]float64, len(rows))
	for _, src := range vectorizedCases {
		p, err := Compile(src, testTypes)
		if err != nil {
			t.Fatalf("Compile(%q): %v", src, err)
		}
		if p.Path() != Vectorized {
			t.Errorf("%s: path %v (%q)", src, p.Path(), p.Fallbacks())
			continue
		}
		e := p.NewEvaluator()
		eval := func() {
			if err := e.Eval(rec, out, gap); err != nil {
				t.Fatal(err)
			}
		}
		eval() // the string arenas grow to size once
		if allocs := testing.AllocsPerRun(10, eval); allocs != 0 {
			t.Errorf("%s: %v allocations per batch of %d rows", src, allocs, len(rows))
		}
	}
}

// TestFallbackAllocates documents the cost of the machine: it boxes each
// value it reads.
func TestFallbackAllocates(t *testing.T) {
	rec := newRecord(t, randomRows(rand.New(rand.NewPCG(5, 6)), 1000))
	p, err := Compile(`ts.Year() > 2000 && a > 0`, testTypes)
	if err != nil {
		t.Fatal(err)
	}
	e := p.NewEvaluator()
	out := make([]Truth, rec.NumRows())
	allocs := testing.AllocsPerRun(3, func() { _ = e.Eval(rec, out, nil) })
	if allocs < 100 {
		t.Errorf("the machine allocated %v times for %d rows; expected about one a row", allocs, rec.NumRows())
	}
}

// benchRecord is a batch of n random rows without nulls in a, b, c, s and
// with about 10% nulls elsewhere.
func benchRecord(b *testing.B, n int) arrow.RecordBatch {
	b.Helper()
	r := rand.New(rand.NewPCG(7, 8))
	rows := randomRows(r, n)
	words := []string{"apple", "Banana", "cherry", "bilberry", "Bean", "éclair", "b", ""}
	for _, row := range rows {
		row["a"], row["b"], row["c"] = r.Int64N(1000), r.Int64N(1000), r.Int64N(100)-10
		row["s"] = words[r.IntN(len(words))]
	}
	return record(b, memory.NewGoAllocator(), rows)
}

func BenchmarkEval(b *testing.B) {
	const n = 1 << 20
	rec := benchRecord(b, n)
	defer rec.Release()
	out := make([]Truth, n)
	for _, src := range []string{
		`a <= b && c > 0`,
		`lower(s) startsWith "b" && len(s) <= 8`,
		`s matches "^[A-Za-z]+rry$"`,
		`ts.Year() >= 2000 && a <= b`, // mixed: a fallback per row
	} {
		p, err := Compile(src, testTypes)
		if err != nil {
			b.Fatal(err)
		}
		e := p.NewEvaluator()
		b.Run(src, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := e.Eval(rec, out, nil); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/n, "ns/row")
		})
	}
}
