package rowexpr

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/vm"
)

// exprGen writes random well-typed expressions over testTypes' columns,
// mixing the vectorized subset with constructs that fall back to expr's
// machine.
type exprGen struct{ r *rand.Rand }

func (g *exprGen) pick(s ...string) string { return s[g.r.IntN(len(s))] }

func (g *exprGen) gen(k kind, depth int) string {
	if depth <= 0 || g.r.IntN(5) == 0 {
		return g.leaf(k)
	}
	d := depth - 1
	sub := func(k kind) string { return g.gen(k, d) }
	num := func() string { return sub([]kind{kindInt, kindFloat}[g.r.IntN(2)]) }
	switch k {
	case kindBool:
		switch g.r.IntN(16) {
		case 0:
			return fmt.Sprintf("(%s %s %s)", sub(kindBool), g.pick("&&", "||", "and", "or"), sub(kindBool))
		case 1:
			return fmt.Sprintf("(%s%s)", g.pick("!", "not "), sub(kindBool))
		case 2, 3:
			return fmt.Sprintf("(%s %s %s)", num(), g.pick("==", "!=", "<", "<=", ">", ">="), num())
		case 4:
			return fmt.Sprintf("(%s %s %s)", sub(kindString), g.pick("==", "!=", "<", "<=", ">", ">="), sub(kindString))
		case 5:
			return fmt.Sprintf("(%s %s %s)", sub(kindTime), g.pick("==", "!=", "<", "<=", ">", ">="), sub(kindTime))
		case 6:
			return fmt.Sprintf("(%s %s %s)", sub(kindBool), g.pick("==", "!="), sub(kindBool))
		case 7:
			switch g.r.IntN(4) {
			case 0:
				return fmt.Sprintf("(%s in [1, 2, 7, -7])", sub(kindInt))
			case 1:
				return fmt.Sprintf("(%s %s [0.5, 1, 2])", num(), g.pick("in", "not in"))
			case 2:
				return fmt.Sprintf(`(%s in ["a", "", "é", "B"])`, sub(kindString))
			}
			return fmt.Sprintf("(%s in %d..%d)", sub(kindInt), g.r.IntN(9)-4, g.r.IntN(9)-2)
		case 8:
			return fmt.Sprintf("(%s %s nil)", g.pick("a", "x", "s", "p", "ts", "d", "(a ?? b)", "(s ?? u)"), g.pick("==", "!="))
		case 9:
			return fmt.Sprintf("(%s %s %s)", sub(kindString), g.pick("contains", "startsWith", "endsWith"), sub(kindString))
		case 10:
			return fmt.Sprintf("%s(%s, %s)", g.pick("hasPrefix", "hasSuffix"), sub(kindString), sub(kindString))
		case 11:
			return fmt.Sprintf("(%s matches %q)", sub(kindString), g.pick("^a", "a$", "[0-9]", "é", "(?i)b", "^$"))
		case 12:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindBool), sub(kindBool))
		case 13:
			return fmt.Sprintf("(%s ?? %s)", g.pick("p", "q", "(p ?? q)"), sub(kindBool))
		case 14:
			return fmt.Sprintf("(%s > 0 || %s)", sub(kindInt), sub(kindBool))
		}
		// outside the subset
		return g.pick(
			fmt.Sprintf("(%s matches %s)", sub(kindString), sub(kindString)),
			fmt.Sprintf("any([%s, %s], # > 1)", sub(kindInt), sub(kindInt)),
			fmt.Sprintf(`("a" in split(%s, ","))`, sub(kindString)),
			fmt.Sprintf("(let v = %s; v > 2 || v < -2)", sub(kindInt)),
		)
	case kindInt:
		switch g.r.IntN(12) {
		case 0, 1:
			return fmt.Sprintf("(%s %s %s)", sub(kindInt), g.pick("+", "-", "*", "%"), sub(kindInt))
		case 2:
			return fmt.Sprintf("(-%s)", sub(kindInt))
		case 3:
			return fmt.Sprintf("abs(%s)", sub(kindInt))
		case 4:
			return fmt.Sprintf("len(%s)", sub(kindString))
		case 5:
			return fmt.Sprintf("int(%s)", sub(kindFloat))
		case 6:
			return fmt.Sprintf("%s(%s, %s)", g.pick("min", "max"), sub(kindInt), sub(kindInt))
		case 7:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindInt), sub(kindInt))
		case 8:
			return fmt.Sprintf("(%s ?? %s)", g.pick("a", "b", "(b ?? c)"), sub(kindInt))
		case 9:
			return fmt.Sprintf("%s.Year()", g.pick("ts", "d"))
		case 10:
			return fmt.Sprintf(`indexOf(%s, "a")`, sub(kindString))
		}
		return fmt.Sprintf("count([%s, %s, 3], # > 1)", sub(kindInt), sub(kindInt))
	case kindFloat:
		switch g.r.IntN(12) {
		case 0, 1:
			return fmt.Sprintf("(%s %s %s)", sub(kindFloat), g.pick("+", "-", "*"), num())
		case 2:
			return fmt.Sprintf("(%s %s %s)", num(), g.pick("/", "**"), num())
		case 3:
			return fmt.Sprintf("(-%s)", sub(kindFloat))
		case 4, 5:
			return fmt.Sprintf("%s(%s)", g.pick("ceil", "floor", "round", "sqrt", "log", "exp", "abs"), sub(kindFloat))
		case 6:
			return fmt.Sprintf("%s(%s)", g.pick("float", "sqrt", "ceil"), sub(kindInt))
		case 7:
			return fmt.Sprintf("%s(%s, %s)", g.pick("min", "max"), sub(kindFloat), sub(kindFloat))
		case 8:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindFloat), sub(kindFloat))
		case 9:
			return fmt.Sprintf("(%s ?? %s)", g.pick("x", "y", "(x ?? y)"), sub(kindFloat))
		case 10:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindInt), sub(kindFloat)) // any: machine
		}
		return fmt.Sprintf("mean([%s, %s])", num(), num())
	case kindString:
		switch g.r.IntN(9) {
		case 0:
			return fmt.Sprintf("%s(%s)", g.pick("lower", "upper", "trim"), sub(kindString))
		case 1:
			return fmt.Sprintf(`%s(%s, %s)`, g.pick("trim", "trimPrefix", "trimSuffix"), sub(kindString), g.pick(`"a"`, `" "`, `"é"`, "s"))
		case 2:
			return fmt.Sprintf("(%s + %s)", sub(kindString), sub(kindString))
		case 3:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindString), sub(kindString))
		case 4:
			return fmt.Sprintf("(%s ?? %s)", g.pick("s", "u", "(s ?? u)"), sub(kindString))
		case 5:
			return fmt.Sprintf("string(%s)", sub(kindInt))
		case 6:
			return fmt.Sprintf(`replace(%s, "a", "b")`, sub(kindString))
		case 7:
			return fmt.Sprintf("%s(%s)", g.pick("lower", "upper"), sub(kindString))
		}
		return fmt.Sprintf("repeat(%s, 2)", sub(kindString))
	case kindTime:
		switch g.r.IntN(3) {
		case 0:
			return fmt.Sprintf("(%s ? %s : %s)", sub(kindBool), sub(kindTime), sub(kindTime))
		case 1:
			return fmt.Sprintf("(%s ?? %s)", g.pick("ts", "d"), sub(kindTime))
		}
		return fmt.Sprintf(`%s.Add(duration("%s"))`, g.pick("ts", "d"), g.pick("1h", "-1ns", "24h"))
	}
	panic("no such kind")
}

func (g *exprGen) leaf(k kind) string {
	switch k {
	case kindBool:
		return g.pick("p", "q", "true", "false")
	case kindInt:
		return g.pick("a", "b", "c", "a", "b", "0", "1", "2", "3", "7", "100", "9223372036854775807")
	case kindFloat:
		return g.pick("x", "y", "x", "y", "0.0", "0.5", "1.5", "2.25", "1e300", "1e-300")
	case kindString:
		return g.pick("s", "u", "s", "u", `""`, `"a"`, `"B"`, `"é"`, `"a,b"`, `" x "`, `"ß"`)
	case kindTime:
		return g.pick("ts", "d", "ts", "d", `date("2024-01-01")`, `date("1969-12-31T23:59:59.5Z")`)
	}
	panic("no such kind")
}

// randomRows makes n rows of testTypes' columns, each value null with
// probability 0.15, drawn to hit edge cases: extreme and zero integers,
// NaN, ±Inf and -0, non-ASCII and invalid UTF-8, times before 1970.
func randomRows(r *rand.Rand, n int) []map[string]any {
	ints := []int64{0, 1, -1, 2, 3, 5, 7, -7, 100, math.MaxInt64, math.MinInt64}
	floats := []float64{0, math.Copysign(0, -1), 0.5, -1.5, 2, 2.5, math.NaN(), math.Inf(1), math.Inf(-1), 1e300}
	strs := []string{"", "a", "A", "b", "B", "apple", "Banana", "é", "É", "ß", "a,b", " x ", "\xffa", "ǅ", "İ", "aé", "1"}
	rows := make([]map[string]any, n)
	for i := range rows {
		row := map[string]any{}
		for _, name := range testOrder {
			if r.Float64() < 0.15 {
				continue
			}
			var v any
			switch testTypes[name] {
			case int64T:
				v = ints[r.IntN(len(ints))]
				if r.IntN(3) == 0 {
					v = r.Int64N(2001) - 1000
				}
			case floatT:
				v = floats[r.IntN(len(floats))]
				if r.IntN(3) == 0 {
					v = math.Round(r.NormFloat64()*1000) / 100
				}
			case stringT:
				v = strs[r.IntN(len(strs))]
			case boolT:
				v = r.IntN(2) == 0
			case tsType:
				v = time.UnixMicro(r.Int64N(2e15) - 3e14).UTC() // 1960 to 2033
				if r.IntN(4) == 0 {
					v = v.(time.Time).Truncate(24 * time.Hour)
				}
			case dateT:
				v = time.Unix((r.Int64N(26000)-3700)*86400, 0).UTC()
			}
			row[name] = v
		}
		rows[i] = row
	}
	return rows
}

// reference is expr's own evaluation of src, with nulls as nil.
type reference struct {
	prog    *vm.Program
	machine vm.VM
}

func newReference(src string) (*reference, error) {
	env := make(map[string]any, len(testTypes))
	for name, dt := range testTypes {
		env[name] = zeroOf(kindOf(dt))
	}
	prog, err := expr.Compile(src, options(env, true)...)
	if err != nil {
		return nil, err
	}
	return &reference{prog: prog}, nil
}

// eval returns expr's result on row, and whether it gave a boolean.
func (r *reference) eval(row map[string]any) (bool, bool) {
	v, err := r.machine.Run(r.prog, rowEnv(row))
	b, ok := v.(bool)
	return b, err == nil && ok
}

// agree checks the contract between the vectorized result and expr's on
// every row: where both are defined they are equal, and on a row without
// nulls in the columns read, expr defined implies ours known.
func agree(t testing.TB, src string, p *Program, rows []map[string]any, got []Truth) (compared int) {
	t.Helper()
	ref, err := newReference(src)
	if err != nil {
		t.Fatalf("%s: compiles for us but not for expr: %v", src, err)
	}
	for i, row := range rows {
		want, defined := ref.eval(row)
		if !defined {
			continue
		}
		nullFree := true
		for _, c := range p.Columns() {
			nullFree = nullFree && row[c] != nil
		}
		switch {
		case got[i] == Unknown && nullFree:
			t.Errorf("%s: row %d %v: unknown, expr says %v (path %v)", src, i, describe(row, p), want, p.Path())
		case got[i] != Unknown && (got[i] == True) != want:
			t.Errorf("%s: row %d %v: %v, expr says %v (path %v)", src, i, describe(row, p), got[i], want, p.Path())
		case got[i] != Unknown:
			compared++
		}
	}
	return compared
}

func describe(row map[string]any, p *Program) string {
	var b strings.Builder
	for _, c := range p.Columns() {
		fmt.Fprintf(&b, "%s=%#v ", c, row[c])
	}
	return strings.TrimSpace(b.String())
}

// TestDifferential compares the vectorized evaluation with expr's own on
// random expressions and random rows with nulls.
func TestDifferential(t *testing.T) {
	n := 1500
	if testing.Short() {
		n = 300
	}
	r := rand.New(rand.NewPCG(1, 2))
	rows := randomRows(r, 64)
	rec := newRecord(t, rows)
	g := &exprGen{r: r}
	paths := map[Path]int{}
	compared := 0
	out := make([]Truth, len(rows))
	for range n {
		src := g.gen(kindBool, 1+r.IntN(4))
		p, err := Compile(src, testTypes)
		if err != nil {
			// A constant modulo by zero is a compile error, expr's own.
			if !strings.HasSuffix(err.Error(), "integer divide by zero") {
				t.Errorf("Compile(%q): %v", src, err)
			}
			continue
		}
		paths[p.Path()]++
		if err := p.NewEvaluator().Eval(rec, out, nil); err != nil {
			t.Fatalf("%s: %v", src, err)
		}
		compared += agree(t, src, p, rows, out)
	}
	t.Logf("%d expressions (%v), %d rows compared", n, paths, compared)
	if paths[Vectorized] < n/3 || paths[Mixed] == 0 || paths[Interpreted] == 0 || compared < n*len(rows)/10 {
		t.Errorf("the generator does not cover the paths: %v, %d rows compared", paths, compared)
	}
}
