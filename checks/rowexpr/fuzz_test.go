package rowexpr

import (
	"errors"
	"math/rand/v2"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// FuzzCompile: Compile never panics and its errors are *Error located
// inside the text; an expression that compiles evaluates on a small random
// batch without panicking and agrees with expr's own evaluation (see
// agree).
func FuzzCompile(f *testing.F) {
	for _, src := range vectorizedCases {
		f.Add(src)
	}
	for _, src := range []string{
		`ts.Year() == 2024 || a > 0`,
		`let z = a ?? 0; z >= 0`,
		`all([a, b], # > 0)`,
		`(p ? a : x) > 0 && b > 0`,
		`$env["s"] == "x"`,
		`a > (b`,
		`lowr(s) == "x"`,
		"a > 1 &&\n  bb > 2",
		`s matches "[a"`,
		`a % 0 == 1 || 1 % 0 == 1`,
		`int(x) in 9223372036854775807..-9223372036854775807`,
	} {
		f.Add(src)
	}
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	rows := randomRows(rand.New(rand.NewPCG(11, 12)), 24)
	rec := record(f, mem, rows)
	f.Cleanup(func() {
		rec.Release()
		mem.AssertSize(f, 0)
	})
	f.Fuzz(func(t *testing.T, src string) {
		p, err := Compile(src, testTypes)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("Compile(%q): %T %v, want an *Error", src, err, err)
			}
			if e.Line < 0 || e.Col < 0 || e.Offset < 0 || e.Offset > utf8.RuneCountInString(src) {
				t.Fatalf("Compile(%q): error %v located outside the text (+%d)", src, e, e.Offset)
			}
			return
		}
		out := make([]Truth, len(rows))
		gap := make([]float64, len(rows))
		if err := p.NewEvaluator().Eval(rec, out, gap); err != nil {
			t.Fatalf("Eval(%q): %v", src, err)
		}
		if strings.Contains(src, "now") {
			return // the clock moves between our evaluation and expr's
		}
		agree(t, src, p, rows, out)
	})
}
