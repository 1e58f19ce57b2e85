package rowexpr

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"sort"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/builtin"
	"github.com/expr-lang/expr/conf"
	"github.com/expr-lang/expr/file"

	"github.com/assay-project/assay/rules"
)

// Error is an expression that does not compile. Line and Col locate the
// problem inside the expression text, both 1-based, Col counting
// characters (Unicode code points), and Offset is the same place as a
// 0-based count of characters from the start of the text (what
// rules.RowSpec.PosAt takes). Line and Col are 0 when the problem concerns
// the whole expression (for example, it does not give a boolean).
type Error struct {
	Line, Col int
	Offset    int
	Msg       string
}

func (e *Error) Error() string {
	if e.Line == 0 {
		return e.Msg
	}
	return fmt.Sprintf("%d:%d: %s", e.Line, e.Col, e.Msg)
}

// Path says how a Program evaluates.
type Path int

// Evaluation paths, from fastest to slowest.
const (
	// Vectorized: every node runs over whole column vectors, without
	// allocating per row.
	Vectorized Path = iota
	// Mixed: some subexpressions (Program.Fallbacks) run on expr's virtual
	// machine row by row; the rest is vectorized.
	Mixed
	// Interpreted: the whole expression runs on expr's virtual machine, row
	// by row, allocating.
	Interpreted
)

func (p Path) String() string {
	switch p {
	case Vectorized:
		return "vectorized"
	case Mixed:
		return "mixed"
	case Interpreted:
		return "interpreted"
	}
	return fmt.Sprintf("Path(%d)", int(p))
}

// Program is an expression compiled against column types. It is immutable
// and safe for concurrent use; each goroutine evaluates it with its own
// Evaluator.
type Program struct {
	cols      []column // the columns the expression reads, in order of appearance
	root      *plan
	path      Path
	fallbacks []string
	env       map[string]any // every readable column, with a zero value of its Go type
	gap       bool           // root is a comparison whose operands measure a distance
	lifts     []lift         // computed per dictionary entry with codes (EvalCodes)
	raw       []bool         // per column: read outside the lifts
}

// column is a column the expression reads.
type column struct {
	name string
	kind kind
	typ  arrow.DataType
}

// Columns lists the columns the expression reads, in order of first
// appearance.
func (p *Program) Columns() []string {
	names := make([]string, len(p.cols))
	for i, c := range p.cols {
		names[i] = c.name
	}
	return names
}

// Path says whether the expression runs vectorized, in part on expr's
// virtual machine, or wholly on it.
func (p *Program) Path() Path { return p.path }

// Fallbacks lists the subexpressions that run on expr's virtual machine,
// as expr prints them; nil when the Program is Vectorized.
func (p *Program) Fallbacks() []string { return slices.Clone(p.fallbacks) }

// Measured reports whether the expression is a single comparison between
// numbers or instants (<, <=, >, >=, ==), whose false rows Evaluator.Eval
// scores by how far the comparison is from holding.
func (p *Program) Measured() bool { return p.gap }

// Compile parses and type-checks src with expr against the given columns
// (Arrow types int64, float64, utf8, bool, timestamp of any unit, date32,
// and the narrower or other layouts kindOf lists),
// requiring a boolean result, and prepares its evaluation. Type errors are
// expr's own, located inside src; an unknown name gets a "did you mean"
// hint from the column names.
func Compile(src string, columns map[string]arrow.DataType) (prog *Program, err error) {
	env := make(map[string]any, len(columns))
	unreadable := make(map[string]arrow.DataType)
	for name, dt := range columns {
		if k := kindOf(dt); k != kindNone {
			env[name] = zeroOf(k)
		} else {
			unreadable[name] = dt
		}
	}
	// expr's parser and checker are not ours: turn a panic in them into an
	// error rather than stop the run.
	defer func() {
		if r := recover(); r != nil {
			prog, err = nil, &Error{Msg: fmt.Sprintf("expression could not be compiled: %v", r)}
		}
	}()
	// The optimized compile reports what the optimizer finds too (a
	// constant division by zero); the plain one keeps the checked tree as
	// written, which is what the vectorizer walks.
	if _, err := expr.Compile(src, options(env, true)...); err != nil {
		return nil, compileError(err, env, unreadable)
	}
	plain, err := expr.Compile(src, options(env, false)...)
	if err != nil {
		return nil, compileError(err, env, unreadable)
	}
	if fe := untypedLogic(plain.Node()); fe != nil {
		return nil, compileError(fe.Bind(plain.Source()), env, unreadable)
	}
	cfg := conf.CreateNew()
	for _, o := range options(env, false) {
		o(cfg)
	}
	cfg.Expect, cfg.ExpectAny = reflect.Invalid, false
	cfg.Check()
	pl := &planner{src: plain.Source(), cfg: cfg, types: columns, env: env, index: map[string]int{}}
	root, err := pl.plan(plain.Node())
	if err != nil {
		return nil, err
	}
	p := &Program{cols: pl.cols, root: root, fallbacks: pl.fallbacks, env: env}
	switch {
	case root.op == opVM:
		p.path = Interpreted
	case len(pl.fallbacks) > 0:
		p.path = Mixed
	}
	p.gap = root.op == opCompare && root.cmp != opNe &&
		(root.args[0].kind.numeric() || root.args[0].kind == kindTime)
	p.lifts, p.raw = findLifts(root, p.cols, p.gap)
	return p, nil
}

// untypedLogic finds the first operand of &&, ||, ! or a condition ? :, or
// the whole expression, that is not known to be a boolean. expr's checker
// lets through a value whose type it cannot tell (x ?? y of two types,
// $env["name"]), and its machine then yields that value itself
// (a > 0 || (a ?? 0) gives 0): no verdict on a row, which would leave every
// row uncounted. Such an expression is refused as it is written.
func untypedLogic(root ast.Node) *file.Error {
	v := &logicOperands{}
	v.check(root, "the expression")
	ast.Walk(&root, v)
	return v.found
}

// logicOperands is the ast.Visitor of untypedLogic.
type logicOperands struct {
	found *file.Error
}

func (v *logicOperands) Visit(node *ast.Node) {
	switch n := (*node).(type) {
	case *ast.BinaryNode:
		switch n.Operator {
		case "&&", "and", "||", "or":
			v.check(n.Left, "the left side of "+n.Operator)
			v.check(n.Right, "the right side of "+n.Operator)
		}
	case *ast.UnaryNode:
		if n.Operator == "!" || n.Operator == "not" {
			v.check(n.Node, "the operand of "+n.Operator)
		}
	case *ast.ConditionalNode:
		v.check(n.Cond, "the condition of ? :")
	}
}

// check records n when its type is not bool; the first one in the text wins.
func (v *logicOperands) check(n ast.Node, what string) {
	if t := n.Type(); t != nil && t.Kind() == reflect.Bool {
		return
	}
	loc := n.Location()
	if v.found != nil && v.found.From <= loc.From {
		return
	}
	v.found = &file.Error{Location: loc,
		Message: what + " is not known to be a boolean (compare it, e.g. x > 0, or give ?? two values of one type)"}
}

// options are the expr options every compile of an expression uses.
func options(env map[string]any, optimize bool) []expr.Option {
	opts := []expr.Option{expr.Env(env), expr.AsBool(), expr.Optimize(optimize)}
	for _, f := range mathFuncs {
		opts = append(opts, expr.Function(f.name, f.call, new(func(float64) float64)))
	}
	return opts
}

// mathFunc is a function of one number that expressions may call, in
// addition to expr's builtins.
type mathFunc struct {
	name string
	fn   func(float64) float64
}

// call runs fn for expr's virtual machine, which passes integers as they are.
func (f mathFunc) call(args ...any) (any, error) {
	x, ok := toFloat(args[0])
	if !ok {
		return nil, fmt.Errorf("%s: argument is %T, not a number", f.name, args[0])
	}
	return f.fn(x), nil
}

var mathFuncs = []mathFunc{
	{"sqrt", math.Sqrt}, // NaN below 0
	{"log", math.Log},   // natural logarithm; -Inf at 0, NaN below
	{"exp", math.Exp},
}

func mathFuncNamed(name string) (mathFunc, bool) {
	for _, f := range mathFuncs {
		if f.name == name {
			return f, true
		}
	}
	return mathFunc{}, false
}

// kindOf is how an expression reads a column of Arrow type dt: narrower
// integers as int64 (uint64 is left out: its upper half does not fit),
// float32 as float64, every string layout as string, timestamps and dates
// as instants.
func kindOf(dt arrow.DataType) kind {
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64, arrow.UINT8, arrow.UINT16, arrow.UINT32:
		return kindInt
	case arrow.FLOAT32, arrow.FLOAT64:
		return kindFloat
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW:
		return kindString
	case arrow.BOOL:
		return kindBool
	case arrow.TIMESTAMP, arrow.DATE32, arrow.DATE64:
		return kindTime
	}
	return kindNone
}

// zeroOf is a value of the Go type expr sees for a column of kind k.
func zeroOf(k kind) any {
	switch k {
	case kindBool:
		return false
	case kindInt:
		return int64(0)
	case kindFloat:
		return 0.0
	case kindString:
		return ""
	}
	return time.Time{}
}

// compileError turns an expr error into an Error, 1-based, with a hint for
// an unknown name.
func compileError(err error, env map[string]any, unreadable map[string]arrow.DataType) error {
	var fe *file.Error
	if !errors.As(err, &fe) {
		return &Error{Msg: userWords(err.Error())}
	}
	e := &Error{Msg: userWords(fe.Message)}
	if fe.Line > 0 {
		e.Line, e.Col, e.Offset = fe.Line, fe.Column+1, fe.From
	}
	if name, ok := strings.CutPrefix(fe.Message, "unknown name "); ok {
		if dt, ok := unreadable[name]; ok {
			e.Msg = fmt.Sprintf("column %s has type %s, which expressions cannot read", name, dt)
		} else if s := rules.Suggest(name, candidates(env)); s != "" {
			e.Msg += fmt.Sprintf(" (did you mean %s?)", s)
		}
	}
	return e
}

// goTypeWords maps the Go type names in expr-lang's messages to the type
// names a policy uses, so that a message speaks the user's language.
var goTypeWords = strings.NewReplacer(
	"expected bool, but got float64", "the expression must be true or false, but gives a number",
	"expected bool, but got int64", "the expression must be true or false, but gives an integer",
	"expected bool, but got int", "the expression must be true or false, but gives an integer",
	"expected bool, but got string", "the expression must be true or false, but gives a string",
	"float64", "number", "int64", "integer", "time.Time", "timestamp",
)

// userWords rewrites an expr-lang message in the policy's type names.
func userWords(msg string) string { return goTypeWords.Replace(msg) }

// candidates are the names an unknown name may be a misspelling of: the
// columns and the functions.
func candidates(env map[string]any) []string {
	var names []string
	for name := range env {
		names = append(names, name)
	}
	for _, f := range mathFuncs {
		names = append(names, f.name)
	}
	for _, f := range builtin.Builtins {
		names = append(names, f.Name)
	}
	sort.Strings(names)
	return names
}
