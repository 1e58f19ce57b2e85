package rowexpr

import (
	"errors"
	"maps"
	"slices"
	"sync"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
)

const untypedHint = " (compare it, e.g. x > 0, or give ?? two values of one type)"

func TestCompileErrors(t *testing.T) {
	types := maps.Clone(testTypes)
	types["tags"] = arrow.ListOf(arrow.BinaryTypes.String)
	types["weight_kg"] = floatT
	tests := []struct {
		src               string
		line, col, offset int
		msg               string
	}{
		{`a + s > 1`, 1, 3, 2, "invalid operation: + (mismatched types integer and string)"},
		{"a > 1 &&\n  weight_kgs > 2", 2, 3, 11, "unknown name weight_kgs (did you mean weight_kg?)"},
		{"s == \"é\" &&\n\tzz > 1", 2, 2, 13, "unknown name zz"},
		{`lowr(s) == "x"`, 1, 1, 0, "unknown name lowr (did you mean lower?)"},
		{`len(tags) > 0`, 1, 5, 4, "column tags has type list<item: utf8, nullable>, which expressions cannot read"},
		{`s matches "[a"`, 1, 3, 2, "error parsing regexp: missing closing ]: `[a`"},
		{`a % 0 == 1 || 1 % 0 == 1`, 1, 17, 16, "integer divide by zero"},
		{`a > (b`, 1, 6, 5, "unexpected token EOF"}, // expr points at the last token
		{`p && "yes"`, 1, 3, 2, "invalid operation: && (mismatched types bool and string)"},
		{`a`, 0, 0, 0, "the expression must be true or false, but gives an integer"},
		{`a + 1`, 0, 0, 0, "the expression must be true or false, but gives an integer"},
		// expr accepts these, and its machine gives a value that is no verdict.
		{`a > 0 || (a ?? 0)`, 1, 13, 12, "the right side of || is not known to be a boolean" + untypedHint},
		{`(a ?? p) && true`, 1, 4, 3, "the left side of && is not known to be a boolean" + untypedHint},
		{`!(a ?? 0) || true`, 1, 5, 4, "the operand of ! is not known to be a boolean" + untypedHint},
		{`(a ?? 1) ? true : false`, 1, 4, 3, "the condition of ? : is not known to be a boolean" + untypedHint},
		{`a ?? p`, 1, 3, 2, "the expression is not known to be a boolean" + untypedHint},
	}
	for _, tt := range tests {
		_, err := Compile(tt.src, types)
		var e *Error
		if !errors.As(err, &e) {
			t.Errorf("Compile(%q): got %v, want an *Error", tt.src, err)
			continue
		}
		if e.Line != tt.line || e.Col != tt.col || e.Offset != tt.offset || e.Msg != tt.msg {
			t.Errorf("Compile(%q):\n got %d:%d (+%d) %s\nwant %d:%d (+%d) %s",
				tt.src, e.Line, e.Col, e.Offset, e.Msg, tt.line, tt.col, tt.offset, tt.msg)
		}
	}
}

func TestProgram(t *testing.T) {
	tests := []struct {
		src       string
		path      Path
		fallbacks []string
		columns   []string
	}{
		{`a <= b && c > 0`, Vectorized, nil, []string{"a", "b", "c"}},
		{`s matches "^x" || lower(u) in ["a", "b"]`, Vectorized, nil, []string{"s", "u"}},
		{`ts > date("2024-01-01") && d != nil`, Vectorized, nil, []string{"ts", "d"}},
		{`ts.Year() > 2000 && a > 0`, Mixed, []string{"ts.Year()"}, []string{"ts", "a"}},
		{`s matches u || a > 0`, Mixed, []string{"s matches u"}, []string{"s", "u", "a"}},
		{`(p ? a : x) > 0 && b > 0`, Mixed, []string{"(p ? a : x) > 0"}, []string{"p", "a", "x", "b"}},
		{`max(a, x) > 0`, Interpreted, []string{"max(a, x) > 0"}, []string{"a", "x"}},
		{`let z = a; z > 1`, Interpreted, []string{"let z = a; z > 1"}, []string{"a"}},
		{`$env.b > 1`, Mixed, []string{"$env.b"}, testOrderSorted()},
	}
	for _, tt := range tests {
		p, err := Compile(tt.src, testTypes)
		if err != nil {
			t.Errorf("Compile(%q): %v", tt.src, err)
			continue
		}
		if p.Path() != tt.path || !slices.Equal(p.Fallbacks(), tt.fallbacks) || !slices.Equal(p.Columns(), tt.columns) {
			t.Errorf("Compile(%q):\n got path %v, fallbacks %q, columns %q\nwant path %v, fallbacks %q, columns %q",
				tt.src, p.Path(), p.Fallbacks(), p.Columns(), tt.path, tt.fallbacks, tt.columns)
		}
	}
}

func testOrderSorted() []string {
	names := slices.Clone(testOrder)
	slices.Sort(names)
	return names
}

// TestEvalErrors checks that a batch not matching the compiled columns is
// an error, not a panic.
func TestEvalErrors(t *testing.T) {
	rec := newRecord(t, fixture)
	types := maps.Clone(testTypes)
	types["zz"] = int64T
	types["a"] = floatT
	tests := []struct{ src, want string }{
		{`zz > 1`, `column "zz" is not in the data`},
		{`a > 1`, `column "a" is int64 in the data, the expression was compiled for float64`},
	}
	for _, tt := range tests {
		p, err := Compile(tt.src, types)
		if err != nil {
			t.Fatal(err)
		}
		err = p.NewEvaluator().Eval(rec, make([]Truth, rec.NumRows()), nil)
		if err == nil || err.Error() != tt.want {
			t.Errorf("%s: got error %v, want %s", tt.src, err, tt.want)
		}
	}
	p, _ := Compile(`b > 1`, testTypes)
	if err := p.NewEvaluator().Eval(rec, make([]Truth, 2), nil); err == nil {
		t.Errorf("a short result buffer: no error")
	}
}

// TestConcurrentEvaluators: one Program, an Evaluator per goroutine, on
// both paths (run with -race).
func TestConcurrentEvaluators(t *testing.T) {
	rec := newRecord(t, fixture)
	for _, src := range []string{`lower(s) == "banana" || a in [1, 10]`, `ts.Year() == 2024 || s matches "^a"`} {
		p, err := Compile(src, testTypes)
		if err != nil {
			t.Fatal(err)
		}
		want := make([]Truth, rec.NumRows())
		if err := p.NewEvaluator().Eval(rec, want, nil); err != nil {
			t.Fatal(err)
		}
		var wg sync.WaitGroup
		for range 4 {
			wg.Go(func() {
				e := p.NewEvaluator()
				got := make([]Truth, rec.NumRows())
				for range 50 {
					if err := e.Eval(rec, got, nil); err != nil || !slices.Equal(got, want) {
						t.Errorf("%s: %v %v, want %v", src, got, err, want)
						return
					}
				}
			})
		}
		wg.Wait()
	}
}
