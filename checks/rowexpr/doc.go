// Package rowexpr compiles a row expression (expr-lang syntax,
// github.com/expr-lang/expr) once against the types of the columns it may
// read, and evaluates it over Arrow record batches a whole column vector at
// a time.
//
// # Compiling
//
// Compile parses and type-checks the expression with expr itself, the
// columns declared as variables of Go types: int8 to int64 and uint8 to
// uint32 as int64, float32 and float64 as float64 (a float32 is read as the
// float64 of the same value), utf8, large utf8 and utf8 view as string,
// bool as bool, timestamps of any unit, date32 and date64 as time.Time;
// and requires a boolean result. Errors are expr's, carried in
// an *Error with the 1-based line and column inside the expression; an
// unknown name gets a "did you mean" hint from the column and function
// names (rules.Suggest). Besides expr's builtins the
// functions sqrt, log (natural) and exp are available.
//
// # Evaluating
//
// The checked syntax tree is turned into a plan of typed vector operations
// over chunks of 1024 rows (float64, int64, bool, string and instant
// vectors, each with a validity mask); an Evaluator owns the buffers, so
// evaluation allocates nothing per row. The vectorized subset:
//
//   - literals and column references; subexpressions that read no column
//     are computed once by expr (date("2024-01-01") becomes a constant)
//   - + - * / % ** and unary minus; an int meeting a float is promoted to
//     float64, as in expr; / and ** always give float64
//   - == != < <= > >= on numbers, strings (byte order), booleans (== and !=)
//     and instants
//   - and/or/not (&&, ||, !) with three-valued logic, c ? x : y and
//     if/else, x ?? y and x == nil, x != nil where x is a column (or a ??
//     chain of columns)
//   - x in [literals...], x in lo..hi (integers), matches with a literal
//     RE2 pattern (compiled once), contains, startsWith, endsWith
//   - abs, ceil, floor, round, float, int (of numbers), min and max (all
//     ints or all floats), len, lower, upper, trim, trimPrefix, trimSuffix,
//     hasPrefix, hasSuffix, sqrt, log, exp
//
// Any other node (member access such as ts.Year(), now(), let, closures,
// arrays outside `in`, string(x), a ternary mixing an int and a float, a
// pattern that is not a literal, ...) runs on expr's virtual machine, one
// reused vm.VM and one reused env map per Evaluator, row by row. That is
// correct but allocates; Program.Path tells which way a program runs and
// Program.Fallbacks lists the subexpressions involved. The smallest
// enclosing subexpression whose type a vector can hold runs on the machine;
// the rest stays vectorized.
//
// A batch read from a dictionary-encoded column may come with the column's
// dictionary codes (Evaluator.EvalCodes). Then the largest subexpressions
// that read that string column alone and give no string (`site != "lab"`,
// `len(code)`, `name matches "^[A-Z]"`, one run on the machine too, unless
// it asks the time) are computed once per dictionary entry, on first use,
// and each row takes its entry's value; a null row takes the value computed
// for a null, so the result is the same as row by row. A measured root
// comparison is never computed so, as its operands give the gaps: of
// `len(code) < 7` only `len(code)` is.
//
// # Semantics
//
// A row offends when the expression is false. It is unknown when the
// expression read a null and the logic could not decide; an unknown row is
// not counted, as with an SQL CHECK constraint. Precisely:
//
//   - A null propagates: arithmetic, comparisons, functions and `in` of a
//     null are unknown (x == 1 is unknown, not false, when x is null).
//   - and/or/not follow Kleene's three-valued logic, as SQL does: false and
//     unknown is false, true or unknown is true, not unknown is unknown. The
//     result does not depend on the order of the operands.
//   - c ? x : y is unknown when c is; otherwise it is the chosen side (the
//     other side's nulls do not matter).
//   - x == nil, x != nil and x ?? y test for null explicitly (never
//     unknown) when x is a column. For other operands the test is left to
//     expr, whose values are never nil there: (a == 1) ?? true is the
//     value of a == 1.
//   - A subexpression run on the machine is unknown on rows where a column
//     it reads is null, unless it mentions nil or ?? itself; then the row's
//     nulls are passed as nil and expr decides. A machine error (a nil in
//     arithmetic, an integer modulo by zero) makes the row unknown.
//   - Division: / is always a float division, as in expr, so x/0 is ±Inf
//     and 0/0 is NaN for integers and floats alike. NaN is a value, not a
//     null: every comparison with NaN is false except !=, as in Go. The
//     integer modulo x % 0 has no value and makes the row unknown.
//   - Integer + - * and unary minus wrap around on overflow (two's
//     complement int64), exactly as expr's own evaluation does on 64-bit
//     platforms; abs of the smallest int64 stays negative. Overflow is not
//     detected.
//   - Timestamps (any unit, time zone ignored) and dates compare as
//     instants, exactly, whatever their units; a date is midnight UTC of
//     its day. Time arithmetic runs on the machine.
//   - Strings compare byte by byte; len counts characters (code points);
//     lower and upper map code points as Go's unicode package does.
//
// On every row where the vectorized result is known and expr's own
// evaluation of the expression (nulls as nil) succeeds, the two agree; on
// rows without nulls, expr succeeding implies a known, equal result. The
// differential tests and the fuzz target check both.
package rowexpr
