package rowexpr

import (
	"math"
	"reflect"
	"regexp"
	"slices"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/compiler"
	"github.com/expr-lang/expr/conf"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/optimizer"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
)

// opcode names what a plan node computes.
type opcode uint8

const (
	opColumn   opcode = iota // a column's values
	opConst                  // one value for every row
	opToFloat                // an int vector as float64
	opToInt                  // int(x) of a float vector, Go's conversion
	opNeg                    // unary minus
	opNot                    // three-valued not
	opAnd                    // three-valued and
	opOr                     // three-valued or
	opArith                  // + - * / % ** of two numbers
	opConcat                 // + of two strings
	opCompare                // == != < <= > >=
	opStrTest                // contains, startsWith, endsWith, hasPrefix, hasSuffix
	opMatches                // matches with a literal RE2 pattern
	opIn                     // in a literal array
	opInRange                // in lo..hi with integer bounds
	opCond                   // c ? x : y
	opCoalesce               // x ?? y
	opIsNull                 // x == nil
	opNotNull                // x != nil
	opMath                   // a float function: ceil, floor, round, sqrt, log, exp
	opAbs                    // abs of an int or a float
	opLen                    // length of a string in characters
	opCase                   // lower, upper
	opTrim                   // trim, trimPrefix, trimSuffix
	opMinMax                 // min, max of numbers of one kind
	opVM                     // a subexpression run on expr's virtual machine
)

type strTest uint8

const (
	testContains strTest = iota
	testPrefix
	testSuffix
)

type trimOp uint8

const (
	trimSpace  trimOp = iota // trim(s)
	trimCutset               // trim(s, cutset)
	trimPrefix
	trimSuffix
)

// plan is one node of a vectorized evaluation: what it computes, its
// kind, and its operands. Plans are immutable; an Evaluator turns them into
// closures with their own buffers.
type plan struct {
	op    opcode
	kind  kind
	args  []*plan
	col   int    // opColumn: index in Program.cols
	val   scalar // opConst
	cmp   cmpOp
	arith arithOp
	test  strTest
	trim  trimOp
	upper bool // opCase: upper rather than lower
	max   bool // opMinMax: max rather than min
	fn    func(float64) float64
	re    *regexp.Regexp
	set   *set
	lo    int64 // opInRange
	hi    int64
	empty bool // opInRange: the range has no element
	vm    *vmPlan
}

// scalar is a constant of any kind.
type scalar struct {
	b bool
	i int64
	f float64
	s string
	t instant
}

// vmPlan is a subexpression the vectorizer does not cover, compiled for
// expr's virtual machine.
type vmPlan struct {
	prog *vm.Program
	cols []int // the columns it reads, indices in Program.cols
	// nullAware: it tests for nil itself (nil, ??), so rows with nulls are
	// handed to it with nil values; otherwise such rows are unknown without
	// running it.
	nullAware bool
	impure    bool // asks the time (now())
	text      string
}

// set holds the elements of a literal array for `in`, compared the way
// expr's runtime.Equal compares them.
type set struct {
	ints    map[int64]struct{}
	floats  map[float64]struct{} // the float elements
	numbers map[float64]struct{} // every numeric element as a float64
	strs    map[string]struct{}
	bools   [2]bool // has false, has true
	times   map[instant]struct{}
}

var timeType = reflect.TypeFor[time.Time]()

type planner struct {
	src       file.Source
	cfg       *conf.Config // for compiling subexpressions
	types     map[string]arrow.DataType
	env       map[string]any
	index     map[string]int // column name -> index in cols
	cols      []column
	fallbacks []string
	kinds     map[string]kind
}

// plan builds the plan of the whole expression: vectorized where it can,
// the whole expression on the virtual machine where the root itself is
// not covered.
func (pl *planner) plan(root ast.Node) (*plan, error) {
	pl.kinds = make(map[string]kind, len(pl.env))
	for name, v := range pl.env {
		pl.kinds[name] = kindOfType(reflect.TypeOf(v))
	}
	pl.reads(root) // registers the columns in order of appearance
	p := pl.build(root)
	if p == nil || p.kind != kindBool {
		// The whole expression on the machine, compiled as expr.Compile
		// does with AsBool: ending in a cast that turns nil into false.
		cfg := *pl.cfg
		cfg.Expect = reflect.Bool
		pl.cfg = &cfg
		p = pl.fallback(root, kindBool)
		if p == nil {
			return nil, &Error{Msg: "expression could not be compiled for evaluation"}
		}
	}
	pl.fallbacks = nil
	pl.collectFallbacks(p)
	return p, nil
}

func (pl *planner) collectFallbacks(p *plan) {
	if p.op == opVM {
		pl.fallbacks = append(pl.fallbacks, p.vm.text)
		return
	}
	for _, a := range p.args {
		pl.collectFallbacks(a)
	}
}

// build plans node n: a constant if it reads no column, else vectorized,
// else on the virtual machine if its type is one the vectors hold; nil
// when none applies (its parent then runs on the virtual machine).
func (pl *planner) build(n ast.Node) *plan {
	if p := pl.fold(n); p != nil {
		return p
	}
	if p := pl.vector(n); p != nil {
		return p
	}
	return pl.fallback(n, kindOfNode(n))
}

// kindOfNode is the kind of n's values as the checker typed them, or
// kindNone where that type may not hold (see honest).
func kindOfNode(n ast.Node) kind {
	if !honest(n) {
		return kindNone
	}
	return kindOfType(n.Type())
}

// honest reports whether every value n yields has the type the checker
// gave it. expr types c ? x : y by x when y's type is an interface x's
// satisfies, min and max by their first argument while they return the
// winner, and keeps an int type on x + 1 after retyping its literal to a
// float (a function argument wanting a float); arithmetic passes such a
// wrong type on.
func honest(n ast.Node) bool {
	k := kindOfType(n.Type())
	same := func(args ...ast.Node) bool {
		for _, a := range args {
			if !honest(a) || kindOfType(a.Type()) != k {
				return false
			}
		}
		return true
	}
	switch n := n.(type) {
	case *ast.ConditionalNode:
		return same(n.Exp1, n.Exp2)
	case *ast.BuiltinNode:
		switch n.Name {
		case "min", "max", "abs":
			return same(n.Arguments...)
		}
	case *ast.UnaryNode:
		if n.Operator == "-" || n.Operator == "+" {
			return same(n.Node)
		}
	case *ast.BinaryNode:
		switch n.Operator {
		case "??":
			return same(n.Left, n.Right)
		case "+", "-", "*":
			l, r := kindOfType(n.Left.Type()), kindOfType(n.Right.Type())
			if !honest(n.Left) || !honest(n.Right) {
				return false
			}
			if !l.numeric() || !r.numeric() {
				return true // time and duration arithmetic, string +
			}
			if l == r {
				return k == l
			}
			return k == kindFloat
		}
	}
	return true
}

// scan collects what a subtree reads.
type scan struct {
	pl        *planner
	cols      []int
	seen      map[int]bool
	impure    bool // calls now()
	nullAware bool // mentions nil or ??
}

func (s *scan) add(name string) {
	i, ok := s.pl.index[name]
	if !ok {
		i = len(s.pl.cols)
		s.pl.index[name] = i
		s.pl.cols = append(s.pl.cols, column{name: name, kind: s.pl.kinds[name], typ: s.pl.types[name]})
	}
	if !s.seen[i] {
		s.seen[i] = true
		s.cols = append(s.cols, i)
	}
}

func (s *scan) Visit(node *ast.Node) {
	switch n := (*node).(type) {
	case *ast.IdentifierNode:
		if n.Value == "$env" {
			for _, name := range sortedKeys(s.pl.env) {
				s.add(name)
			}
		} else if _, ok := s.pl.env[n.Value]; ok {
			// A let variable of a column's name is counted as the column:
			// a harmless over-approximation.
			s.add(n.Value)
		}
	case *ast.BuiltinNode:
		if n.Name == "now" {
			s.impure = true
		}
	case *ast.NilNode:
		s.nullAware = true
	case *ast.BinaryNode:
		if n.Operator == "??" {
			s.nullAware = true
		}
	}
}

// reads scans the subtree n.
func (pl *planner) reads(n ast.Node) *scan {
	s := &scan{pl: pl, seen: map[int]bool{}}
	ast.Walk(&n, s)
	return s
}

// compile compiles subtree n for the virtual machine as expr.Compile
// does, optimizer included: expr's optimizer changes some results (it
// turns `x in ["", "a"]` into a map lookup, where a nil x finds "").
// Optimizing rewrites nodes of n's subtree in place, which is safe: a
// subtree is compiled only when it will not be vectorized.
func (pl *planner) compile(n ast.Node) (*vm.Program, error) {
	if err := optimizer.Optimize(&n, pl.cfg); err != nil {
		return nil, err
	}
	return compiler.Compile(&parser.Tree{Node: n, Source: pl.src}, pl.cfg)
}

// run evaluates a subtree that reads no column on the virtual machine.
func (pl *planner) run(n ast.Node) (any, bool) {
	prog, err := pl.compile(n)
	if err != nil {
		return nil, false
	}
	v, err := vm.Run(prog, pl.env)
	return v, err == nil
}

// fold replaces a subtree that reads no column and does not ask for the
// time by its value, computed once by expr.
func (pl *planner) fold(n ast.Node) *plan {
	switch n.(type) {
	case *ast.IntegerNode, *ast.FloatNode, *ast.StringNode, *ast.BoolNode, *ast.NilNode,
		*ast.IdentifierNode, *ast.ArrayNode:
		return nil
	}
	if s := pl.reads(n); len(s.cols) > 0 || s.impure {
		return nil
	}
	v, ok := pl.run(n)
	if !ok {
		return nil
	}
	return constantOf(v)
}

// constantOf is the constant plan of a value, or nil for a value no
// vector holds (nil, arrays, maps, durations).
func constantOf(v any) *plan {
	switch x := v.(type) {
	case bool:
		return &plan{op: opConst, kind: kindBool, val: scalar{b: x}}
	case string:
		return &plan{op: opConst, kind: kindString, val: scalar{s: x}}
	case time.Time:
		return &plan{op: opConst, kind: kindTime, val: scalar{t: instantOf(x)}}
	}
	if i, ok := toInt(v); ok {
		return &plan{op: opConst, kind: kindInt, val: scalar{i: i}}
	}
	if f, ok := toFloat(v); ok {
		return &plan{op: opConst, kind: kindFloat, val: scalar{f: f}}
	}
	return nil
}

// fallback plans n on the virtual machine, yielding kind k; nil if k is
// kindNone or n does not compile on its own.
func (pl *planner) fallback(n ast.Node, k kind) *plan {
	if k == kindNone {
		return nil
	}
	prog, err := pl.compile(n)
	if err != nil {
		return nil
	}
	s := pl.reads(n)
	return &plan{op: opVM, kind: k, vm: &vmPlan{prog: prog, cols: s.cols, nullAware: s.nullAware, impure: s.impure, text: n.String()}}
}

// kindOfType is the vector kind holding values of Go type t, or kindNone.
func kindOfType(t reflect.Type) kind {
	if t == nil {
		return kindNone
	}
	if t == timeType {
		return kindTime
	}
	switch t.Kind() {
	case reflect.Bool:
		return kindBool
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint8, reflect.Uint16, reflect.Uint32:
		return kindInt
	case reflect.Float32, reflect.Float64:
		return kindFloat
	case reflect.String:
		return kindString
	}
	return kindNone
}

func toInt(v any) (int64, bool) {
	switch x := v.(type) {
	case int:
		return int64(x), true
	case int8:
		return int64(x), true
	case int16:
		return int64(x), true
	case int32:
		return int64(x), true
	case int64:
		return x, true
	case uint8:
		return int64(x), true
	case uint16:
		return int64(x), true
	case uint32:
		return int64(x), true
	}
	return 0, false
}

func toFloat(v any) (float64, bool) {
	switch x := v.(type) {
	case float64:
		return x, true
	case float32:
		return float64(x), true
	}
	if i, ok := toInt(v); ok {
		return float64(i), true
	}
	return 0, false
}

func isFloatType(t reflect.Type) bool {
	return t != nil && (t.Kind() == reflect.Float64 || t.Kind() == reflect.Float32)
}

// vector plans n as a vectorized node, or returns nil.
func (pl *planner) vector(n ast.Node) *plan {
	switch n := n.(type) {
	case *ast.IdentifierNode:
		if i, ok := pl.index[n.Value]; ok {
			return &plan{op: opColumn, kind: pl.cols[i].kind, col: i}
		}
	case *ast.IntegerNode:
		// The checker turns integer literals passed where a float is
		// expected into floats by retyping them.
		if isFloatType(n.Type()) {
			return constantOf(float64(n.Value))
		}
		return constantOf(int64(n.Value))
	case *ast.FloatNode:
		return constantOf(n.Value)
	case *ast.StringNode:
		return constantOf(n.Value)
	case *ast.BoolNode:
		return constantOf(n.Value)
	case *ast.UnaryNode:
		return pl.unary(n)
	case *ast.BinaryNode:
		return pl.binary(n)
	case *ast.ConditionalNode:
		c, x, y := pl.build(n.Cond), pl.build(n.Exp1), pl.build(n.Exp2)
		if c == nil || x == nil || y == nil || c.kind != kindBool || x.kind != y.kind {
			return nil
		}
		return &plan{op: opCond, kind: x.kind, args: []*plan{c, x, y}}
	case *ast.BuiltinNode:
		return pl.builtin(n)
	case *ast.CallNode:
		id, ok := n.Callee.(*ast.IdentifierNode)
		if !ok || len(n.Arguments) != 1 {
			return nil
		}
		if _, column := pl.env[id.Value]; column {
			return nil
		}
		f, ok := mathFuncNamed(id.Value)
		if !ok {
			return nil
		}
		x := pl.build(n.Arguments[0])
		if x == nil || !x.kind.numeric() {
			return nil
		}
		return &plan{op: opMath, kind: kindFloat, fn: f.fn, args: []*plan{asFloat(x)}}
	}
	return nil
}

// asFloat converts a numeric plan to float64, as expr does when it mixes
// an integer with a float.
func asFloat(p *plan) *plan {
	switch {
	case p.kind == kindFloat:
		return p
	case p.op == opConst:
		return constantOf(float64(p.val.i))
	}
	return &plan{op: opToFloat, kind: kindFloat, args: []*plan{p}}
}

// unify brings two operands to one kind, promoting an int to float
// against a float; false if their kinds differ otherwise.
func unify(x, y *plan) (*plan, *plan, bool) {
	switch {
	case x.kind == y.kind:
		return x, y, true
	case x.kind.numeric() && y.kind.numeric():
		return asFloat(x), asFloat(y), true
	}
	return x, y, false
}

func (pl *planner) unary(n *ast.UnaryNode) *plan {
	x := pl.build(n.Node)
	if x == nil {
		return nil
	}
	switch n.Operator {
	case "!", "not":
		if x.kind == kindBool {
			return &plan{op: opNot, kind: kindBool, args: []*plan{x}}
		}
	case "-":
		if x.kind.numeric() {
			return &plan{op: opNeg, kind: x.kind, args: []*plan{x}}
		}
	case "+":
		if x.kind.numeric() {
			return x
		}
	}
	return nil
}

func (pl *planner) binary(n *ast.BinaryNode) *plan {
	switch n.Operator {
	case "==", "!=":
		if p, ok := pl.nilTest(n); ok {
			return p
		}
	case "in":
		return pl.in(n)
	case "??":
		return pl.coalesce(n)
	case "matches":
		s, ok := n.Right.(*ast.StringNode)
		if !ok {
			return nil
		}
		x := pl.build(n.Left)
		re, err := regexp.Compile(s.Value)
		if x == nil || x.kind != kindString || err != nil {
			return nil
		}
		return &plan{op: opMatches, kind: kindBool, re: re, args: []*plan{x}}
	}
	x, y := pl.build(n.Left), pl.build(n.Right)
	if x == nil || y == nil {
		return nil
	}
	switch op := n.Operator; op {
	case "&&", "and", "||", "or":
		if x.kind != kindBool || y.kind != kindBool {
			return nil
		}
		if op == "&&" || op == "and" {
			return &plan{op: opAnd, kind: kindBool, args: []*plan{x, y}}
		}
		return &plan{op: opOr, kind: kindBool, args: []*plan{x, y}}
	case "==", "!=", "<", "<=", ">", ">=":
		x, y, ok := unify(x, y)
		if !ok || (x.kind == kindBool && op != "==" && op != "!=") {
			return nil
		}
		return &plan{op: opCompare, kind: kindBool, cmp: cmpOps[op], args: []*plan{x, y}}
	case "+", "-", "*":
		if op == "+" && x.kind == kindString && y.kind == kindString {
			return &plan{op: opConcat, kind: kindString, args: []*plan{x, y}}
		}
		x, y, ok := unify(x, y)
		if !ok || !x.kind.numeric() {
			return nil
		}
		return &plan{op: opArith, kind: x.kind, arith: arithOps[op], args: []*plan{x, y}}
	case "/", "**", "^":
		if !x.kind.numeric() || !y.kind.numeric() {
			return nil
		}
		return &plan{op: opArith, kind: kindFloat, arith: arithOps[op], args: []*plan{asFloat(x), asFloat(y)}}
	case "%":
		if x.kind != kindInt || y.kind != kindInt {
			return nil
		}
		return &plan{op: opArith, kind: kindInt, arith: opMod, args: []*plan{x, y}}
	case "contains", "startsWith", "endsWith":
		if x.kind != kindString || y.kind != kindString {
			return nil
		}
		t := map[string]strTest{"contains": testContains, "startsWith": testPrefix, "endsWith": testSuffix}[op]
		return &plan{op: opStrTest, kind: kindBool, test: t, args: []*plan{x, y}}
	}
	return nil
}

// nullable reports whether n is a null test's proper operand: a column, or
// a ?? chain of them, whose nil in expr is exactly a null here. For other
// operands expr and SQL disagree on what `== nil` means, so they are left
// to expr.
func (pl *planner) nullable(n ast.Node) bool {
	switch n := n.(type) {
	case *ast.IdentifierNode:
		_, ok := pl.index[n.Value]
		return ok
	case *ast.BinaryNode:
		return n.Operator == "??" && pl.nullable(n.Left)
	}
	return false
}

// nilTest plans x == nil and x != nil (either way round); false when n is
// not a nil test.
func (pl *planner) nilTest(n *ast.BinaryNode) (*plan, bool) {
	x := n.Left
	if _, ok := n.Left.(*ast.NilNode); ok {
		x = n.Right
	} else if _, ok := n.Right.(*ast.NilNode); !ok {
		return nil, false
	}
	if !pl.nullable(x) {
		return nil, true
	}
	p := pl.build(x)
	if p == nil {
		return nil, true
	}
	if n.Operator == "==" {
		return &plan{op: opIsNull, kind: kindBool, args: []*plan{p}}, true
	}
	return &plan{op: opNotNull, kind: kindBool, args: []*plan{p}}, true
}

// coalesce plans x ?? y where x is nullable and both have one kind (no
// promotion: expr would yield either an int or a float).
func (pl *planner) coalesce(n *ast.BinaryNode) *plan {
	if !pl.nullable(n.Left) {
		return nil
	}
	x, y := pl.build(n.Left), pl.build(n.Right)
	if x == nil || y == nil || x.kind != y.kind {
		return nil
	}
	return &plan{op: opCoalesce, kind: x.kind, args: []*plan{x, y}}
}

// in plans x in [literal, ...] and x in lo..hi.
func (pl *planner) in(n *ast.BinaryNode) *plan {
	x := pl.build(n.Left)
	if x == nil {
		return nil
	}
	if r, ok := n.Right.(*ast.BinaryNode); ok && r.Operator == ".." {
		lo, okLo := pl.constInt(r.Left)
		hi, okHi := pl.constInt(r.Right)
		if x.kind != kindInt || !okLo || !okHi {
			return nil
		}
		// expr builds the array lo..hi of hi-lo+1 elements, an empty one
		// when that count (in wrapping int arithmetic) is not positive.
		return &plan{op: opInRange, kind: kindBool, lo: lo, hi: hi, empty: hi-lo+1 <= 0, args: []*plan{x}}
	}
	arr, ok := n.Right.(*ast.ArrayNode)
	if !ok {
		return nil
	}
	if s := pl.reads(arr); len(s.cols) > 0 || s.impure {
		return nil
	}
	v, ok := pl.run(arr)
	elems, isList := v.([]any)
	if !ok || !isList {
		return nil
	}
	set := newSet(elems)
	return &plan{op: opIn, kind: kindBool, set: set, args: []*plan{x}}
}

func (pl *planner) constInt(n ast.Node) (int64, bool) {
	if s := pl.reads(n); len(s.cols) > 0 || s.impure {
		return 0, false
	}
	v, ok := pl.run(n)
	if !ok {
		return 0, false
	}
	return toInt(v)
}

func newSet(elems []any) *set {
	s := &set{
		ints: map[int64]struct{}{}, floats: map[float64]struct{}{}, numbers: map[float64]struct{}{},
		strs: map[string]struct{}{}, times: map[instant]struct{}{},
	}
	for _, e := range elems {
		switch x := e.(type) {
		case bool:
			if x {
				s.bools[1] = true
			} else {
				s.bools[0] = true
			}
		case string:
			s.strs[x] = struct{}{}
		case time.Time:
			s.times[instantOf(x)] = struct{}{}
		case float64, float32:
			f, _ := toFloat(x)
			s.floats[f] = struct{}{}
			s.numbers[f] = struct{}{}
		default:
			if i, ok := toInt(x); ok {
				s.ints[i] = struct{}{}
				s.numbers[float64(i)] = struct{}{}
			}
		}
	}
	return s
}

// vectorBuiltins are the builtins the vectorizer covers.
var vectorBuiltins = map[string]bool{
	"len": true, "abs": true, "ceil": true, "floor": true, "round": true, "float": true, "int": true,
	"lower": true, "upper": true, "trim": true, "trimPrefix": true, "trimSuffix": true,
	"hasPrefix": true, "hasSuffix": true, "min": true, "max": true,
}

func (pl *planner) builtin(n *ast.BuiltinNode) *plan {
	if !vectorBuiltins[n.Name] {
		return nil
	}
	args := make([]*plan, len(n.Arguments))
	for i, a := range n.Arguments {
		if args[i] = pl.build(a); args[i] == nil {
			return nil
		}
	}
	one := func(k kind) *plan {
		if len(args) == 1 && args[0].kind == k {
			return args[0]
		}
		return nil
	}
	number := func() *plan {
		if len(args) == 1 && args[0].kind.numeric() {
			return args[0]
		}
		return nil
	}
	strs := func() bool {
		for _, a := range args {
			if a.kind != kindString {
				return false
			}
		}
		return true
	}
	switch n.Name {
	case "len":
		if x := one(kindString); x != nil {
			return &plan{op: opLen, kind: kindInt, args: args}
		}
	case "abs":
		if x := number(); x != nil {
			return &plan{op: opAbs, kind: x.kind, args: args}
		}
	case "ceil", "floor", "round":
		if x := number(); x != nil {
			fn := map[string]func(float64) float64{"ceil": math.Ceil, "floor": math.Floor, "round": math.Round}[n.Name]
			return &plan{op: opMath, kind: kindFloat, fn: fn, args: []*plan{asFloat(x)}}
		}
	case "float":
		if x := number(); x != nil {
			return asFloat(x)
		}
	case "int":
		if x := number(); x != nil && x.kind == kindInt {
			return x
		}
		if x := number(); x != nil {
			return &plan{op: opToInt, kind: kindInt, args: args}
		}
	case "lower", "upper":
		if x := one(kindString); x != nil {
			return &plan{op: opCase, kind: kindString, upper: n.Name == "upper", args: args}
		}
	case "trim", "trimPrefix", "trimSuffix":
		if len(args) < 1 || len(args) > 2 || !strs() {
			return nil
		}
		t := map[string]trimOp{"trim": trimSpace, "trimPrefix": trimPrefix, "trimSuffix": trimSuffix}[n.Name]
		if n.Name == "trim" && len(args) == 2 {
			t = trimCutset
		}
		if n.Name != "trim" && len(args) == 1 {
			args = append(args, constantOf(" "))
		}
		return &plan{op: opTrim, kind: kindString, trim: t, args: args}
	case "hasPrefix", "hasSuffix":
		if len(args) != 2 || !strs() {
			return nil
		}
		t := testPrefix
		if n.Name == "hasSuffix" {
			t = testSuffix
		}
		return &plan{op: opStrTest, kind: kindBool, test: t, args: args}
	case "min", "max":
		if len(args) == 0 || !args[0].kind.numeric() {
			return nil
		}
		for _, a := range args {
			if a.kind != args[0].kind {
				return nil
			}
		}
		return &plan{op: opMinMax, kind: args[0].kind, max: n.Name == "max", args: args}
	}
	return nil
}

func sortedKeys(m map[string]any) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}
