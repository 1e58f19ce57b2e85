package rules

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata")

// want is one expected problem: its code and position, and a part of its
// one-line message.
type want struct {
	code      Code
	line, col int
	text      string
}

// badFixtures lists every file under testdata/bad with every problem it
// must produce, in order. schema marks files whose problems are all of the
// policy's shape, which the JSON Schema must reject too.
var badFixtures = []struct {
	file   string
	schema bool
	want   []want
}{
	{"anchor.yaml", false, []want{{CodeSyntax, 4, 12, `unknown anchor "loose" (define it with &loose before use)`}}},
	{"closed-empty.yaml", false, []want{{CodeBadValue, 3, 3, "table.closed: the table is closed but the policy declares no columns"}}},
	{"closed.yaml", false, []want{
		{CodeUndeclared, 7, 30, `rows.heavy-hives-have-ids: column "hive_ld" is not declared, and the table is closed (did you mean "hive_id"?)`},
		{CodeUndeclared, 10, 18, `table.key: column "hour" is not declared, and the table is closed (declare it under columns)`},
		{CodeUndeclared, 11, 14, `table.required: column "weigth_kg" is not declared, and the table is closed (did you mean "weight_kg"?)`},
	}},
	{"csv-quote.yaml", false, []want{{CodeBadValue, 3, 14, "csv.delimiter: the delimiter is also the quote character"}}},
	{"csv.yaml", false, []want{
		{CodeBadValue, 2, 20, `data: "bad-[.csv" is not a valid glob`},
		{CodeBadValue, 2, 33, "data: empty path"},
		{CodeBadValue, 4, 14, `csv.delimiter: want one character, got ";;"`},
		{CodeBadValue, 5, 10, "csv.quote: the quote character is also the delimiter"},
		{CodeWrongKind, 6, 11, `csv.header: expected true or false, got the text "yes"`},
		{CodeWrongKind, 7, 10, `csv.nulls: expected a list, got the text "NA"`},
	}},
	{"distribution.yaml", false, []want{
		{CodeNotApplicable, 5, 5, `columns.grade.distribution: lognormal applies to number and integer columns, not string columns`},
		{CodeUnknownFamily, 8, 27, `columns.a.distribution.family: unknown family "gama"`},
		{CodeDuplicate, 8, 33, `columns.a.distribution.family: family lognormal listed twice`},
		{CodeBadValue, 9, 16, `columns.a.distribution.measure: unknown measure "pvalue"`},
		{CodeMissing, 12, 28, `columns.b.distribution: binomial needs its parameter n (number of trials; must be given, it is not estimated)`},
		{CodeUnknownKey, 12, 38, `columns.b.distribution: unknown key "trials"`},
		{CodeMissing, 14, 28, `columns.c.distribution: categorical needs its expected shares`},
		{CodeUnknownKey, 16, 59, `columns.d.distribution.parameters: normal has no parameter "sdd"`},
		{CodeBadValue, 16, 80, `columns.d.distribution.resolution: resolution 0 is not above 0`},
		{CodeBadValue, 18, 48, `columns.e.distribution.parameters: give all of mean, sd or none of them; mean cannot be given while the others are estimated`},
		{CodeNotApplicable, 18, 96, `columns.e.distribution.resolution: anderson-darling has no form for values recorded at a resolution`},
		{CodeNotApplicable, 20, 43, `columns.f.distribution.test: ks does not apply to poisson, whose values are k = 0, 1, 2, ...`},
		{CodeTolerance, 20, 83, `columns.f.distribution.tolerance: warn 0.01 is below fail 0.05`},
		{CodeBadValue, 22, 40, `columns.g.distribution.family: poisson cannot be ranked against lognormal: lognormal takes x > 0, poisson takes k = 0, 1, 2, ...`},
		{CodeBadValue, 24, 55, `columns.h.distribution.parameters.shape: shape must be above 0, got -1`},
		{CodeBadValue, 24, 78, `columns.h.distribution.sample: a sample of 10 values is too small to judge a family`},
		{CodeNotApplicable, 24, 90, `columns.h.distribution.shares: shares belong to the categorical family, not gamma`},
		{CodeNotApplicable, 26, 45, `columns.i.distribution.test: shapiro-wilk tests normality; it does not apply to lognormal`},
		{CodeNotApplicable, 28, 72, `columns.j.distribution.test: shapiro-wilk estimates the mean and sd itself; it cannot test given parameters`},
		{CodeBadValue, 28, 92, `columns.j.distribution.seed: -1 is not a whole number of 0 or more`},
		{CodeBadValue, 30, 58, `columns.k.distribution.parameters: parameters apply to one family, and the rule ranks 2`},
		{CodeNotApplicable, 32, 50, `columns.l.distribution.resolution: resolution applies to continuous families tested by ks or chi-square`},
		{CodeNotApplicable, 32, 68, `columns.l.distribution.parameters: benford2 has no parameters`},
		{CodeBadValue, 34, 49, `columns.m.distribution.shares: the shares are all 0`},
		{CodeBadValue, 34, 72, `columns.m.distribution.test: unknown test "kolmogorov"`},
		{CodeBadValue, 36, 42, `columns.n.distribution.family: categorical cannot be ranked against other families`},
		{CodeBadValue, 38, 49, `columns.o.distribution.parameters: min must be below max`},
		{CodeBadValue, 38, 79, `columns.o.distribution.resolution: unknown resolution "fine"`},
		{CodeTolerance, 40, 65, `columns.p.distribution.tolerance.fail: share 1.5 is outside [0, 1]`},
		{CodeUnknownFamily, 42, 19, `columns.q.distribution.family: unknown family "0.5"`},
		{CodeBadValue, 44, 28, `columns.r.distribution.family: the list of candidate families is empty`},
		{CodeMissing, 46, 19, `columns.s.distribution: missing key "family"`},
		{CodeUnknownKey, 46, 30, `columns.s.distribution: unknown key "fit"`},
		{CodeBadValue, 48, 57, `columns.t.distribution.test: unknown test "kolmogorov"`},
		{CodeBadValue, 50, 44, `columns.u.distribution.sample: 100.5 is not a whole number of values`},
	}},
	{"extremes.yaml", false, []want{
		{CodeNotApplicable, 5, 5, `columns.zone.extremes: extremes applies to number and integer columns, not string columns`},
		{CodeBadValue, 7, 15, `columns.a.extremes: unknown extremes rule "tukee" (did you mean "tukey"?)`},
		{CodeBadValue, 9, 22, `columns.b.extremes.rule: unknown extremes rule "mad" (the median and MAD rule is robust-z)`},
		{CodeNotApplicable, 11, 37, `columns.c.extremes.alpha: alpha applies to esd, grubbs and tail, not zscore (zscore takes a cutoff k)`},
		{CodeNotApplicable, 11, 57, `columns.c.extremes.max_outliers: max_outliers applies to esd, not zscore (drop it, or choose a method it applies to)`},
		{CodeNotApplicable, 13, 30, `columns.d.extremes.k: k applies to tukey, zscore and robust-z, not esd (esd is a test: its level is alpha)`},
		{CodeBadValue, 13, 47, `columns.d.extremes.max_outliers: max_outliers must be at least 1 (the most outliers the test looks for, e.g. 10)`},
		{CodeBadValue, 15, 37, `columns.e.extremes.alpha: alpha must lie strictly between 0 and 1, got 1.5 (the level of the test, e.g. 0.05)`},
		{CodeUnknownKey, 15, 42, `columns.e.extremes: unknown key "cutoff" (the cutoff of zscore and robust-z is "k")`},
		{CodeBadValue, 17, 35, `columns.f.extremes.k: k must be above 0, got 0 (the modified z-score beyond which a value is extreme, e.g. 3.5)`},
		{CodeTolerance, 17, 56, `columns.f.extremes: warn 5% is above fail 1% (warn is the smaller threshold)`},
		{CodeMissing, 19, 15, `columns.g.extremes: tail needs the column's distribution, and columns.g declares none (declare distribution: <family> under the column, or choose another rule)`},
		{CodeNotApplicable, 22, 22, `columns.h.extremes: tail needs a family of values, not categorical (tail applies to continuous and count families)`},
		{CodeWrongKind, 24, 15, `columns.i.extremes: expected a method such as tukey, or a mapping with rule and its settings, got a list`},
		{CodeUnknownKey, 26, 16, `columns.j.extremes: unknown key "method" (the method goes under "rule")`},
		{CodeBadValue, 28, 14, `joint: a joint rule needs two or more columns, got 1 (judge one column alone with extremes under the column)`},
		{CodeMissing, 29, 5, `joint: joint rule has no columns (add columns: [a, b, ...], two or more numeric columns)`},
		{CodeBadValue, 31, 13, `joint.a+b.method: unknown joint method "pca" (one of mahalanobis)`},
		{CodeBadValue, 32, 15, `joint.a+b.quantile: quantile must lie strictly between 0 and 1, got 1 (the chi-square quantile whose value cuts squared distances, e.g. 0.999)`},
		{CodeDuplicate, 33, 14, `joint.a+b: joint rule joint.a+b written twice (first at line 30) (give the rules different names)`},
		{CodeNotApplicable, 34, 16, `joint.zone+a: column "zone" is declared string; joint rules apply to number and integer columns`},
		{CodeNotApplicable, 34, 49, `joint.zone+a.sample: sample applies to the robust estimate; the classical one uses every row (drop sample, or write robust: true)`},
		{CodeBadValue, 35, 12, `joint: joint rule name "!!" has no letter or digit`},
		{CodeWrongKind, 36, 46, `joint.climate.robust: expected true or false, got the text "maybe"`},
		{CodeBadValue, 36, 59, `joint.climate.seed: -2 is not a whole number of 0 or more`},
		{CodeBadValue, 36, 71, `joint.climate.sample: a sample of 10 rows is too small for a robust covariance (sample at least 100 rows)`},
	}},
	{"duplicates.yaml", false, []want{
		{CodeDuplicate, 5, 5, `columns.weight_kg: key "type" written twice (first at line 4)`},
		{CodeDuplicate, 6, 18, "columns.weight_kg.enum: enum value 2.0 listed twice"},
		{CodeDuplicate, 7, 3, `columns: column "weight_kg" written twice (first at line 3)`},
		{CodeDuplicate, 10, 18, "columns.code.enum: enum value A listed twice"},
		{CodeDuplicate, 14, 11, `rows.positive-weight: row rule "positive weight" has the same id as "Positive weight" (line 12)`},
		{CodeDuplicate, 16, 11, `rows.positive-weight: row rule "positive-weight!" has the same id as "Positive weight" (line 12)`},
		{CodeDuplicate, 19, 15, `table.key: column "code" listed twice`},
		{CodeBadValue, 20, 13, "table.required: the list is empty"},
	}},
	{"empty.yaml", false, []want{{CodeEmpty, 1, 1, "the policy file is empty"}}},
	{"enum.yaml", false, []want{
		{CodeMixedEnum, 4, 15, "columns.mixed.enum: the enum mixes number and text values (quote numbers to compare them as text)"},
		{CodeWrongKind, 7, 12, `columns.count.enum: integer columns need number values, got the text "one"`},
		{CodeWrongKind, 10, 18, `columns.flag.enum: boolean columns need boolean values, got the text "no"`},
		{CodeWrongKind, 12, 15, "columns.with_null.enum: expected a text or a number, got nothing (bound missing values with nulls)"},
		{CodeBadValue, 14, 11, "columns.none.enum: the enum is empty"},
		{CodeWrongKind, 16, 21, "columns.nested.enum: expected a text or a number, got a list"},
		{CodeMissing, 18, 11, `columns.missing.enum: missing key "values"`},
	}},
	{"expr.yaml", false, []want{
		{CodeBadExpr, 4, 15, `rows.plain: invalid expression: unexpected token Operator(">")`},
		{CodeBadExpr, 6, 24, "rows.single-quoted: invalid expression: unexpected token EOF"},
		{CodeBadExpr, 8, 23, `rows.double-quoted: invalid expression: unexpected token Bracket(")")`},
		{CodeBadExpr, 12, 15, "rows.literal-block: invalid expression: unexpected token EOF"},
		{CodeBadExpr, 16, 9, `rows.folded-block: invalid expression: unexpected token Operator("!")`},
		{CodeBadExpr, 18, 11, "rows.empty: the expression is empty"},
		{CodeMissing, 19, 5, "rows: row rule has no expr"},
		{CodeMissing, 20, 5, "rows: row rule has no name"},
	}},
	{"missing-name.yaml", true, []want{{CodeMissing, 1, 1, `missing key "policy"`}}},
	{"multi-doc.yaml", false, []want{{CodeSyntax, 4, 1, "the file holds more than one YAML document"}}},
	{"no-rules.yaml", false, []want{{CodeEmpty, 1, 1, "the policy has no rules"}}},
	{"not-mapping.yaml", true, []want{{CodeWrongKind, 1, 1, "expected a mapping, got a list"}}},
	{"pairs.yaml", false, []want{
		{CodeBadValue, 8, 38, `pairs.temp+kwh.relation: unknown relation "linar" (did you mean "linear"?)`},
		{CodeMissing, 9, 5, "pairs.a: a linear pair states nothing to check"},
		{CodeBadValue, 10, 24, "pairs.b.columns: a pair names two columns, got 3"},
		{CodeMissing, 11, 5, "pairs.c: a monotonic pair states nothing to check"},
		{CodeNotApplicable, 11, 58, "pairs.c: slope does not apply to monotonic pairs"},
		{CodeBadValue, 11, 87, `pairs.c.method: unknown method "pearson"`},
		{CodeBadValue, 12, 68, "pairs.d.correlation: correlation bound 1.5 is outside [-1, 1]"},
		{CodeNotApplicable, 12, 89, "pairs.d.fit: the fit draws the line of slope, intercept and residuals, and the rule bounds none of them"},
		{CodeNotApplicable, 13, 24, `pairs.e: column "site" is declared string; linear pairs apply to number and integer columns`},
		{CodeNotApplicable, 14, 24, `pairs.f: column "temp" is declared number and "day" date; an ordered pair compares two numbers or two times`},
		{CodeWrongKind, 14, 64, `pairs.f.strict: expected true or false, got the text "yes"`},
		{CodeBadValue, 15, 95, "pairs.g.residuals.cutoff: cutoff 0 is not above 0"},
		{CodeNotApplicable, 16, 82, "pairs.h.residuals.rule: cooks residuals are measured from the least-squares line, and the rule fits theil-sen"},
		{CodeBadValue, 16, 97, "pairs.h.sample: a sample of 10 pairs is too small"},
		{CodeDuplicate, 17, 12, "pairs.h: pair rule pairs.h written twice"},
		{CodeTolerance, 17, 70, "pairs.h.determines: share 2 is outside [0, 1]"},
		{CodeBadValue, 18, 24, "pairs.i.columns: a pair names two columns, got 1"},
		{CodeMissing, 19, 5, `pairs.j: missing key "relation"`},
		{CodeUnknownKey, 19, 37, `pairs: unknown key "cutoff"`},
		{CodeNotApplicable, 20, 73, "pairs.k.sample: sample applies to robust fits; least squares uses every row"},
		{CodeEmptyRange, 20, 107, "pairs.k.slope: minimum 2 is above maximum 1"},
		{CodeBadValue, 21, 12, `pairs: pair rule name "--" has no letter or digit`},
		{CodeBadValue, 22, 73, `pairs.l.residuals.rule: unknown residual rule "cook" (did you mean "cooks"?)`},
		{CodeBadValue, 22, 84, "pairs.l.r2: r2 bound 2 is outside [0, 1]"},
		{CodeNotApplicable, 23, 24, `pairs.m: column "day" is declared date; association pairs apply to string, integer and boolean columns`},
		{CodeMissing, 24, 5, `pairs.n: missing key "columns"`},
		{CodeUnknownKey, 25, 1, `unknown key "pairs2" (did you mean "pairs"?)`},
	}},
	{"pattern.yaml", false, []want{
		{CodeBadPattern, 4, 14, "columns.a.pattern: invalid pattern: missing closing ): `(ab`"},
		{CodeBadPattern, 6, 14, "columns.b.pattern: invalid pattern: invalid or unsupported Perl syntax: `(?=`"},
		{CodeBadPattern, 8, 22, "columns.c.pattern: invalid pattern: invalid character class range: `z-a`"},
	}},
	{"ranges.yaml", false, []want{
		{CodeEmptyRange, 5, 5, "columns.a: minimum 10 and maximum 5 leave no value allowed"},
		{CodeEmptyRange, 9, 5, "columns.b: minLength 5 and maxLength 3 leave no value allowed"},
		{CodeEmptyRange, 12, 5, "columns.c: exclusiveMinimum 5 and maximum 5 leave no value allowed"},
		{CodeEmptyRange, 15, 36, "columns.d.summary.mean: minimum 10 is above maximum 1"},
		{CodeEmptyRange, 16, 19, "columns.d.summary.std.fail: lo 5 is above hi 1"},
		{CodeTolerance, 17, 22, "columns.d.summary.median.warn: both sides are open"},
		{CodeTolerance, 18, 19, "columns.d.summary.max: the warn interval reaches outside the fail interval"},
		{CodeWrongKind, 19, 19, "columns.d.summary.min.fail: expected [lo, hi], got a list of 1"},
		{CodeWrongKind, 19, 30, "columns.d.summary.min.warn: expected [lo, hi], got a list of 3"},
		{CodeTolerance, 20, 11, "columns.d.summary.p5: no bounds"},
		{CodeTolerance, 21, 31, "columns.d.summary.p10: fail repeats minimum and maximum"},
		{CodeEmptyRange, 23, 16, "table.rows: the warn and fail intervals do not meet, so no value passes"},
	}},
	{"segments.yaml", false, []want{
		{CodeBadValue, 6, 10, `columns.temp.by: column "temp" is the rule's own; it cannot group itself`},
		{CodeBadExpr, 7, 18, "columns.temp.where: invalid expression: unexpected token EOF"},
		{CodeBadValue, 10, 34, "columns.kwh.by.limit: a limit of 0 groups leaves nothing to judge"},
		{CodeBadExpr, 11, 12, "columns.kwh.where: the expression is empty"},
		{CodeMissing, 14, 9, `columns.flow.by: missing key "columns"`},
		{CodeUnknownKey, 14, 10, `columns.flow.by: unknown key "colums" (did you mean "columns"?)`},
		{CodeBadExpr, 15, 12, "columns.flow.where: the expression reads no column, so it keeps every row or none"},
		{CodeWrongKind, 18, 9, `columns.level.by: expected a list, got the text "site"`},
		{CodeNotApplicable, 21, 12, "columns.plain: by and where apply to the column's rules, and it has none but type"},
		{CodeBadValue, 23, 52, `pairs.temp+kwh.by: column "kwh" is the rule's own; it cannot group itself`},
		{CodeBadExpr, 23, 73, `pairs.temp+kwh.where: invalid expression: unexpected token Operator("=")`},
	}},
	{"syntax-flow.yaml", false, []want{{CodeSyntax, 5, 0, "invalid YAML: did not find expected ',' or ']'"}}},
	{"syntax-tab.yaml", false, []want{{CodeSyntax, 5, 0, "invalid YAML: found a tab character that violates indentation"}}},
	{"syntax.yaml", false, []want{{CodeSyntax, 5, 0, "syntax.yaml:5: invalid YAML: did not find expected key"}}},
	{"times.yaml", false, []want{
		{CodeBadValue, 5, 14, `columns.at.minimum: "2024-13-01T00:00:00Z" is not a timestamp`},
		{CodeWrongKind, 6, 14, "columns.at.maximum: expected a timestamp such as 2024-01-31T08:00:00Z, got the number 1700000000"},
		{CodeBadValue, 9, 14, `columns.day.minimum: "2024-01-01T10:00:00Z" is not a date`},
		{CodeBadValue, 10, 14, `columns.day.maximum: "31/12/2024" is not a date`},
		{CodeWrongKind, 12, 14, "columns.untyped.minimum: expected a number, got the text \"2024-01-01\" (declare type: timestamp or date to bound times)"},
		{CodeWrongKind, 14, 14, "columns.quoted.maximum: expected a number, got the text \"2024-01-01T00:00:00Z\" (declare type: timestamp or date to bound times)"},
	}},
	{"tolerances.yaml", false, []want{
		{CodeTolerance, 4, 12, "columns.a.nulls: share 150% is outside [0, 1]"},
		{CodeTolerance, 6, 19, "columns.b.nulls: warn 5% is above fail 1%"},
		{CodeTolerance, 8, 12, `columns.c.nulls: the text "abc" is not a share`},
		{CodeTolerance, 10, 12, "columns.d.nulls: share -0.1 is outside [0, 1]"},
		{CodeTolerance, 12, 12, "columns.e.nulls: the tolerance sets neither warn nor fail"},
		{CodeTolerance, 14, 12, `columns.f.nulls: the text "1.5 %" is not a share`},
		{CodeUnknownKey, 16, 23, `columns.g.nulls: unknown key "fial" (did you mean "fail"?)`},
		{CodeTolerance, 18, 12, `columns.h.nulls: the text "0.5" is not a share`},
		{CodeTolerance, 20, 16, "columns.i.tolerance: share 2 is outside [0, 1]"},
	}},
	{"types.yaml", false, []want{
		{CodeUnknownType, 4, 11, `columns.a.type: unknown type "nubmer" (did you mean "number"?)`},
		{CodeNotApplicable, 7, 5, "columns.b.minimum: minimum does not apply to string columns"},
		{CodeUnknownStat, 9, 7, `columns.b.summary: unknown statistic "meen" (did you mean "mean"?)`},
		{CodeNotApplicable, 10, 7, "columns.b.summary.mean: mean needs ordered values, not string columns"},
		{CodeNotApplicable, 14, 5, "columns.c.pattern: pattern does not apply to integer columns"},
		{CodeNotApplicable, 15, 5, "columns.c.maxLength: maxLength does not apply to integer columns"},
		{CodeUnknownStat, 17, 7, `columns.c.summary: unknown statistic "P95" (did you mean "p95"?)`},
		{CodeUnknownStat, 18, 7, `columns.c.summary: unknown statistic "p101" (quantiles run from p0 to p100)`},
		{CodeDuplicate, 20, 7, "columns.c.summary: p95.0 is the same quantile as p95"},
		{CodeNotApplicable, 24, 7, "columns.d.summary.median: median needs ordered values, not boolean columns"},
	}},
	{"unknown-keys.yaml", true, []want{
		{CodeUnknownKey, 2, 1, `unknown-keys.yaml:2:1: unknown key "colums" (did you mean "columns"?)`},
		{CodeUnknownKey, 7, 5, `unknown-keys.yaml:7:5: columns.weight_kg: unknown key "maximun" (did you mean "maximum"?)`},
		{CodeUnknownKey, 8, 5, `columns.weight_kg: unknown key "mean" (summary statistics go under "summary")`},
		{CodeUnknownKey, 9, 5, `columns.weight_kg: unknown key "distrbution" (did you mean "distribution"?)`},
		{CodeUnknownKey, 11, 3, `csv: unknown key "delimeter" (did you mean "delimiter"?)`},
		{CodeUnknownKey, 13, 3, `table: unknown key "closd" (did you mean "closed"?)`},
		{CodeUnknownKey, 16, 5, `rows: unknown key "expresion" (did you mean "expr"?)`},
		{CodeUnknownKey, 18, 1, `unknown key "key" (key goes under "table")`},
	}},
	{"wrong-kinds.yaml", true, []want{
		{CodeWrongKind, 5, 14, `columns.weight_kg.minimum: expected a number, got the text "ten"`},
		{CodeWrongKind, 6, 14, "columns.weight_kg.maximum: expected a number, got a list"},
		{CodeWrongKind, 7, 12, "columns.weight_kg.nulls: expected a share or a mapping of warn and fail, got a list"},
		{CodeWrongKind, 8, 13, `columns.weight_kg.unique: expected true, false or a mapping with tolerance, got the text "yes"`},
		{CodeWrongKind, 11, 16, "columns.name.maxLength: expected a whole number, got the number 1.5"},
		{CodeBadValue, 12, 16, "columns.name.minLength: -1 is not a whole number of 0 or more"},
		{CodeWrongKind, 13, 10, "columns.notes: expected a mapping, got a list"},
		{CodeWrongKind, 15, 3, "rows: expected a list of row rules, got a mapping (bounds on the row count go under table.rows)"},
		{CodeWrongKind, 17, 11, `table.closed: expected true or false, got the text "true"`},
		{CodeWrongKind, 18, 9, "table.rows: expected a mapping, got a list"},
		{CodeWrongKind, 19, 13, `table.required: expected a list, got the text "weight_kg"`},
	}},
}

// problems parses a file that must fail and returns its problems.
func problems(t *testing.T, path string) ErrorList {
	t.Helper()
	p, err := Load(path)
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("Load(%s) = %v, %v; want an ErrorList", path, p, err)
	}
	if p != nil {
		t.Errorf("Load(%s) returned a policy along with its problems", path)
	}
	return list
}

func TestBadFixtures(t *testing.T) {
	files, err := filepath.Glob("testdata/bad/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no bad fixtures: %v", err)
	}
	listed := map[string]bool{}
	for _, c := range badFixtures {
		listed[c.file] = true
	}
	for _, f := range files {
		if !listed[filepath.Base(f)] {
			t.Errorf("%s has no row in badFixtures", f)
		}
	}
	for _, c := range badFixtures {
		t.Run(c.file, func(t *testing.T) {
			got := problems(t, filepath.Join("testdata/bad", c.file))
			for i := 0; i < max(len(got), len(c.want)); i++ {
				switch {
				case i >= len(got):
					t.Errorf("missing problem %d: want %s %d:%d %q", i, c.want[i].code, c.want[i].line, c.want[i].col, c.want[i].text)
				case i >= len(c.want):
					t.Errorf("extra problem %d: got %s %s", i, got[i].Code, got[i])
				default:
					g, w := got[i], c.want[i]
					if g.Code != w.code || g.Pos.Line != w.line || g.Pos.Col != w.col || !strings.Contains(g.Error(), w.text) {
						t.Errorf("problem %d:\ngot  %s %d:%d %s\nwant %s %d:%d ...%s...", i, g.Code, g.Pos.Line, g.Pos.Col, g, w.code, w.line, w.col, w.text)
					}
				}
			}
		})
	}
}

// TestGoodFixtures resolves every policy under testdata/good and compares
// a dump of the resolved policy with its golden file (-update rewrites).
func TestGoodFixtures(t *testing.T) {
	files, err := filepath.Glob("testdata/good/*.yaml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no good fixtures: %v", err)
	}
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			p, err := Load(f)
			if err != nil {
				t.Fatalf("Load: %v", err)
			}
			checkInvariants(t, p)
			golden(t, strings.TrimSuffix(f, ".yaml")+".rules", dump(p))
		})
	}
}

// checkInvariants asserts what holds for every resolved policy.
func checkInvariants(t *testing.T, p *Policy) {
	t.Helper()
	ids := map[string]bool{}
	for _, r := range p.Rules {
		switch {
		case ids[r.ID]:
			t.Errorf("rule id %s twice", r.ID)
		case r.Spec == nil || r.Spec.Kind() != r.Kind:
			t.Errorf("rule %s: spec %#v does not match kind %s", r.ID, r.Spec, r.Kind)
		case r.Pos.Line == 0 || r.Pos.File != p.File:
			t.Errorf("rule %s has no position: %v", r.ID, r.Pos)
		case r.Tolerance.Fail == nil && r.Tolerance.Warn == nil:
			t.Errorf("rule %s has no threshold", r.ID)
		case r.Measure.Name == "":
			t.Errorf("rule %s has no measure", r.ID)
		}
		ids[r.ID] = true
	}
}

// dump writes a resolved policy as text, one rule a line.
func dump(p *Policy) string {
	var b strings.Builder
	fmt.Fprintf(&b, "policy %q about %q file %s hash %s\n", p.Name, p.About, p.File, p.Hash)
	fmt.Fprintf(&b, "input %+q delimiter %q quote %q noquote %v noheader %v nulls %q set %v\n", p.Input.Paths,
		p.Input.Delimiter, p.Input.Quote, p.Input.NoQuote, p.Input.NoHeader, p.Input.Nulls, p.Input.NullsSet)
	for _, c := range p.Columns {
		fmt.Fprintf(&b, "column %q %s unit %q description %q at %s\n", c.Name, c.Type, c.Unit, c.Description, c.Pos)
	}
	for _, r := range p.Rules {
		fmt.Fprintf(&b, "rule %s kind %s columns %q at %s\n", r.ID, r.Kind, r.Columns, r.Pos)
		fmt.Fprintf(&b, "  spec %s\n", dumpSpec(r.Spec))
		fmt.Fprintf(&b, "  measure %q unit %d\n", r.Measure.Name, r.Measure.Unit)
		fmt.Fprintf(&b, "  tolerance %s warn %s fail %s at %s\n", r.Tolerance.Direction,
			dumpLimit(r.Tolerance.Warn), dumpLimit(r.Tolerance.Fail), r.Tolerance.Pos)
		if s := r.Segment; s != nil {
			where := "none"
			if s.Where != nil {
				where = fmt.Sprintf("%q at %s reads %q", s.Where.Expr, s.Where.ExprPos, s.WhereColumns)
			}
			fmt.Fprintf(&b, "  segment by %q limit %d where %s\n", s.By, s.Limit, where)
		}
	}
	return b.String()
}

func dumpSpec(s Spec) string {
	switch s := s.(type) {
	case PatternSpec:
		return fmt.Sprintf("pattern %q compiled %v", s.Pattern, s.Regexp != nil && s.Regexp.String() == s.Pattern)
	case RowSpec:
		return fmt.Sprintf("row %q expr %q at %s", s.Name, s.Expr, s.ExprPos)
	case BoundSpec:
		return fmt.Sprintf("%s %v exclusive %v text %q", s.Bound, s.Value, s.Exclusive, s.Text)
	}
	return fmt.Sprintf("%T %+v", s, s)
}

func dumpLimit(l *Limit) string {
	if l == nil {
		return "none"
	}
	return fmt.Sprintf("[%v, %v]", l.Lo, l.Hi)
}

// golden compares got with the file at path, or rewrites it under -update.
func golden(t *testing.T, path, got string) {
	t.Helper()
	if *update {
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./rules -update to write it)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs (go test ./rules -update rewrites it):\ngot:\n%s\nwant:\n%s", path, got, want)
	}
}

// rule parses an inline policy that must resolve and returns the rule id.
func rule(t *testing.T, src, id string) *Rule {
	t.Helper()
	p, err := Parse("inline.yaml", []byte(src))
	if err != nil {
		t.Fatalf("Parse:\n%s\n%v", src, err)
	}
	for _, r := range p.Rules {
		if r.ID == id {
			return r
		}
	}
	t.Fatalf("no rule %s in:\n%s", id, src)
	return nil
}

func TestDefaultTolerances(t *testing.T) {
	inf := math.Inf(1)
	cases := []struct {
		name, src, id string
		dir           Direction
		warn, fail    *Limit
		tolLine       int // 0: defaulted
	}{
		{"value rule defaults to fail 0", "policy: p\ncolumns:\n  a: {maximum: 1}\n", "columns.a.maximum",
			HigherIsWorse, nil, AtMost(0), 0},
		{"column tolerance reaches value rules", "policy: p\ncolumns:\n  a:\n    tolerance: {warn: 1%, fail: 2%}\n    maximum: 1\n",
			"columns.a.maximum", HigherIsWorse, AtMost(0.01), AtMost(0.02), 4},
		{"column tolerance reaches the type rule", "policy: p\ncolumns:\n  a:\n    type: number\n    tolerance: 3%\n",
			"columns.a.type", HigherIsWorse, nil, AtMost(0.03), 5},
		{"column tolerance reaches unique", "policy: p\ncolumns:\n  a:\n    unique: true\n    tolerance: 3%\n",
			"columns.a.unique", HigherIsWorse, nil, AtMost(0.03), 5},
		{"nulls keep their own value", "policy: p\ncolumns:\n  a:\n    tolerance: 3%\n    nulls: 0.5\n",
			"columns.a.nulls", HigherIsWorse, nil, AtMost(0.5), 5},
		{"long form beats the column", "policy: p\ncolumns:\n  a:\n    tolerance: 3%\n    minimum: {value: 0, tolerance: {warn: 0}}\n",
			"columns.a.minimum", HigherIsWorse, AtMost(0), nil, 5},
		{"summary shorthand is the fail interval", "policy: p\ncolumns:\n  a:\n    summary:\n      mean: {minimum: 2}\n",
			"columns.a.summary.mean", OutsideIsWorse, nil, AtLeast(2), 5},
		{"summary intervals", "policy: p\ncolumns:\n  a:\n    summary:\n      std: {warn: [1, 2], fail: [null, 3]}\n",
			"columns.a.summary.std", OutsideIsWorse, &Limit{1, 2}, AtMost(3), 5},
		{"row count", "policy: p\ntable:\n  rows: {minimum: 10, maximum: 20}\n", "table.rows",
			OutsideIsWorse, nil, &Limit{10, 20}, 3},
		{"closed fails above 0", "policy: p\ncolumns:\n  a:\ntable:\n  closed: true\n", "table.closed",
			HigherIsWorse, nil, AtMost(0), 0},
		{"required fails above 0", "policy: p\ntable:\n  required: [a]\n", "table.required",
			HigherIsWorse, nil, AtMost(0), 0},
		{"key defaults to fail 0", "policy: p\ntable:\n  key: [a, b]\n", "table.key", HigherIsWorse, nil, AtMost(0), 0},
		{"key long form", "policy: p\ntable:\n  key: {columns: [a], tolerance: 1%}\n", "table.key", HigherIsWorse, nil, AtMost(0.01), 3},
		{"row defaults to fail 0", "policy: p\nrows:\n  - {name: r, expr: a > 0}\n", "rows.r", HigherIsWorse, nil, AtMost(0), 0},
		{"row tolerance, no column default", "policy: p\ncolumns:\n  a: {tolerance: 5%}\nrows:\n  - {name: r, expr: a > 0, tolerance: {warn: 0, fail: 100%}}\n",
			"rows.r", HigherIsWorse, AtMost(0), AtMost(1), 5},
		{"open interval sides", "policy: p\ncolumns:\n  a:\n    summary:\n      p95: {fail: [null, 9]}\n",
			"columns.a.summary.p95", OutsideIsWorse, nil, &Limit{-inf, 9}, 5},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := rule(t, c.src, c.id)
			tol := r.Tolerance
			if tol.Direction != c.dir || !sameLimit(tol.Warn, c.warn) || !sameLimit(tol.Fail, c.fail) || tol.Pos.Line != c.tolLine {
				t.Errorf("got %s warn %s fail %s at line %d\nwant %s warn %s fail %s at line %d", tol.Direction,
					dumpLimit(tol.Warn), dumpLimit(tol.Fail), tol.Pos.Line, c.dir, dumpLimit(c.warn), dumpLimit(c.fail), c.tolLine)
			}
		})
	}
}

func sameLimit(a, b *Limit) bool {
	if a == nil || b == nil {
		return a == b
	}
	return *a == *b
}

func TestIDsAndMeasures(t *testing.T) {
	src := `policy: ids
columns:
  w:
    type: number
    nulls: 0
    unique: true
    minimum: 0
    exclusiveMinimum: -1
    maximum: 9
    exclusiveMaximum: 10
    enum: [1, 2]
    summary: {p99.9: {maximum: 1}, count: {minimum: 1}, median: {maximum: 5}}
  s:
    pattern: a
    minLength: 1
    maxLength: 2
rows:
  - {name: "  Dew point, below air temp!! ", expr: w <= len(s)}
table: {rows: {minimum: 1}, key: [w], closed: true, required: [w]}
`
	p, err := Parse("ids.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	want := []struct {
		id      string
		kind    Kind
		measure string
		unit    Unit
	}{
		{"table.rows", KindRowCount, "rows", UnitCount},
		{"table.key", KindKey, "duplicate key share", UnitShare},
		{"table.closed", KindClosed, "undeclared columns", UnitCount},
		{"table.required", KindRequired, "absent columns", UnitCount},
		{"columns.w.type", KindType, "type error share", UnitShare},
		{"columns.w.nulls", KindNulls, "null share", UnitShare},
		{"columns.w.unique", KindUnique, "duplicate share", UnitShare},
		{"columns.w.minimum", KindMinimum, "below minimum share", UnitShare},
		{"columns.w.exclusiveMinimum", KindMinimum, "at or below minimum share", UnitShare},
		{"columns.w.maximum", KindMaximum, "above maximum share", UnitShare},
		{"columns.w.exclusiveMaximum", KindMaximum, "at or above maximum share", UnitShare},
		{"columns.w.enum", KindEnum, "outside enum share", UnitShare},
		{"columns.w.summary.p99.9", KindSummary, "p99.9", UnitValue},
		{"columns.w.summary.count", KindSummary, "count", UnitCount},
		{"columns.w.summary.median", KindSummary, "median", UnitValue},
		{"columns.s.pattern", KindPattern, "pattern mismatch share", UnitShare},
		{"columns.s.minLength", KindMinLength, "too short share", UnitShare},
		{"columns.s.maxLength", KindMaxLength, "too long share", UnitShare},
		{"rows.dew-point-below-air-temp", KindRow, "false row share", UnitShare},
	}
	if len(p.Rules) != len(want) {
		t.Fatalf("got %d rules, want %d", len(p.Rules), len(want))
	}
	for i, w := range want {
		r := p.Rules[i]
		if r.ID != w.id || r.Kind != w.kind || r.Measure.Name != w.measure || r.Measure.Unit != w.unit {
			t.Errorf("rule %d: got %s %s %q %d, want %s %s %q %d", i, r.ID, r.Kind, r.Measure.Name, r.Measure.Unit,
				w.id, w.kind, w.measure, w.unit)
		}
	}
	if q := p.Rules[12].Spec.(SummarySpec); q.Stat != StatQuantile || q.Q != 0.999 {
		t.Errorf("p99.9: got %+v, want quantile 0.999", q)
	}
	if m := p.Rules[14].Spec.(SummarySpec); m.Stat != StatMedian || m.Q != 0.5 {
		t.Errorf("median: got %+v, want median 0.5", m)
	}
	if c := p.Rules[2].Spec.(ClosedSpec); strings.Join(c.Allowed, ",") != "w,s" {
		t.Errorf("closed allows %q, want [w s]", c.Allowed)
	}
	if e := p.Rules[11].Spec.(EnumSpec); len(e.Numbers) != 2 || e.Numbers[1] != 2 || e.Values[1] != "2" {
		t.Errorf("enum: got %+v", e)
	}
}

func TestStages(t *testing.T) {
	var names []string
	for _, s := range stages {
		names = append(names, s.name)
	}
	if got := strings.Join(names, " "); got != "decode input names tolerances values pairs expressions segments defaults" {
		t.Fatalf("stages: %s", got)
	}
	// One problem for each stage that finds problems of its own.
	src := `policy: stages
data: ["[bad"]
columns:
  a:
    type: nubmer
    nulls: 200%
    pattern: "("
    colour: red
    where: "b >"
rows:
  - {name: r, expr: "a >"}
pairs:
  - {columns: [a, b], relation: linear, slope: {minimum: 2, maximum: 1}}
`
	want := map[string]string{
		"decode":      "unknown-key",
		"input":       "unknown-key bad-value",
		"names":       "unknown-key bad-value unknown-type",
		"tolerances":  "unknown-key bad-value unknown-type bad-tolerance",
		"values":      "unknown-key bad-value unknown-type bad-tolerance bad-pattern",
		"pairs":       "unknown-key bad-value unknown-type bad-tolerance bad-pattern empty-range",
		"expressions": "unknown-key bad-value unknown-type bad-tolerance bad-pattern empty-range bad-expr",
		"segments":    "unknown-key bad-value unknown-type bad-tolerance bad-pattern empty-range bad-expr bad-expr",
		"defaults":    "unknown-key bad-value unknown-type bad-tolerance bad-pattern empty-range bad-expr bad-expr",
	}
	for _, s := range stages {
		r := resolve("stages.yaml", []byte(src), s.name)
		var codes []string
		for _, e := range r.errs {
			codes = append(codes, string(e.Code))
		}
		if got := strings.Join(codes, " "); got != want[s.name] {
			t.Errorf("after %s: got %q, want %q", s.name, got, want[s.name])
		}
	}
	// A stage leaves what later stages need: after names the column type
	// is known and the row rule has its id, but no tolerance is resolved.
	r := resolve("stages.yaml", []byte("policy: p\ncolumns:\n  a: {type: date, nulls: 1%}\nrows:\n  - {name: R 1, expr: a}\n"), "names")
	if r.p.Columns[0].Type != TypeDate || r.rules[2].rule.ID != "rows.r-1" || r.rules[1].tolSet || len(r.p.Rules) != 0 {
		t.Errorf("after names: type %s, row id %q, nulls tolerance set %v, %d rules listed",
			r.p.Columns[0].Type, r.rules[2].rule.ID, r.rules[1].tolSet, len(r.p.Rules))
	}
}

func TestParsePercent(t *testing.T) {
	cases := []struct {
		in   string
		want float64
		ok   bool
	}{
		{"1.5%", 0.015, true},
		{"0%", 0, true},
		{"100%", 1, true},
		{"0.1%", 0.001, true},
		{".5%", 0.005, true},
		{"5.%", 0.05, true},
		{"+2%", 0.02, true},
		{"-1%", -0.01, true}, // the range is checked by the caller
		{"1e1%", 0.1, true},
		{"150%", 1.5, true},
		{"33.3333%", 0.333333, true},
		{"1.5", 0, false},
		{"%", 0, false},
		{"1.5 %", 0, false},
		{" 1%", 0, false},
		{"1%%", 0, false},
		{"0x10%", 0, false},
		{"1_0%", 0, false},
		{"inf%", 0, false},
		{"NaN%", 0, false},
		{"1/2%", 0, false},
		{"", 0, false},
	}
	for _, c := range cases {
		got, err := parsePercent(c.in)
		if (err == nil) != c.ok || got != c.want {
			t.Errorf("parsePercent(%q) = %v, %v; want %v, ok %v", c.in, got, err, c.want, c.ok)
		}
	}
}

func TestShares(t *testing.T) {
	cases := []struct {
		text string
		want float64
		code Code // "" when the share is valid
	}{
		{"0.015", 0.015, ""},
		{`"1.5%"`, 0.015, ""},
		{"1.5%", 0.015, ""},
		{"0", 0, ""},
		{"1", 1, ""},
		{"100%", 1, ""},
		{"1.0000001", 0, CodeTolerance},
		{"100.5%", 0, CodeTolerance},
		{"-0%", 0, ""},
		{"-1%", 0, CodeTolerance},
		{".inf", 0, CodeTolerance},
		{".nan", 0, CodeTolerance},
		{`"0.5"`, 0, CodeTolerance},
		{"true", 0, CodeWrongKind},
		{"[1%]", 0, CodeWrongKind},
		{"~", 0, CodeWrongKind},
	}
	for _, c := range cases {
		src := "policy: p\ncolumns:\n  a:\n    nulls: " + c.text + "\n"
		p, err := Parse("shares.yaml", []byte(src))
		var list ErrorList
		switch {
		case c.code == "" && err != nil:
			t.Errorf("nulls: %s: %v", c.text, err)
		case c.code == "" && p.Rules[0].Tolerance.Fail.Hi != c.want:
			t.Errorf("nulls: %s: got %v, want %v", c.text, p.Rules[0].Tolerance.Fail.Hi, c.want)
		case c.code != "" && (!errors.As(err, &list) || len(list) != 1 || list[0].Code != c.code || list[0].Pos.Line != 4 || list[0].Pos.Col != 12):
			t.Errorf("nulls: %s: got %v, want one %s at 4:12", c.text, err, c.code)
		}
	}
}

func TestSuggest(t *testing.T) {
	cases := []struct {
		name       string
		candidates []string
		want       string
	}{
		{"maximun", columnKeys, "maximum"},
		{"Maximum", columnKeys, "maximum"},
		{"minimun", columnKeys, "minimum"},
		{"exclusiveMaximun", columnKeys, "exclusiveMaximum"},
		{"tpye", columnKeys, "type"},   // a swap is one edit
		{"nul", columnKeys, ""},        // two edits in three letters is too far...
		{"nulss", columnKeys, "nulls"}, // ...one is close
		{"distrbution", columnKeys, "distribution"},
		{"outliers", columnKeys, ""}, // nothing near
		{"extreme", columnKeys, "extremes"},
		{"mean", columnKeys, ""}, // nothing near
		{"weight_kg", []string{"weight_kg", "Weight_kg"}, "weight_kg"},
		{"WEIGHT_KG", []string{"weight_lb", "weight_kg"}, "weight_kg"},
		{"weight_lg", []string{"weight_kg", "height_kg"}, "weight_kg"}, // ties go to the first
		{"a", []string{"b"}, ""},
		{"", []string{"a"}, ""},
		{"x", nil, ""},
		{"temperatur", []string{"température", "temperature"}, "temperature"},
		{"hive_ld", []string{"hive_id", "hour"}, "hive_id"},
	}
	for _, c := range cases {
		if got := Suggest(c.name, c.candidates); got != c.want {
			t.Errorf("Suggest(%q, %q) = %q, want %q", c.name, c.candidates, got, c.want)
		}
	}
}

func TestDistance(t *testing.T) {
	cases := []struct {
		a, b string
		want int
	}{
		{"", "", 0}, {"", "abc", 3}, {"abc", "", 3}, {"kitten", "sitting", 3}, {"ca", "ac", 1},
		{"ca", "abc", 3}, // optimal string alignment, not full Damerau-Levenshtein (which gives 2)
		{"été", "ete", 2}, {"flaw", "lawn", 2},
	}
	for _, c := range cases {
		if got := distance([]rune(c.a), []rune(c.b)); got != c.want {
			t.Errorf("distance(%q, %q) = %d, want %d", c.a, c.b, got, c.want)
		}
	}
}

func TestTimes(t *testing.T) {
	// Unix times checked with GNU date: date -u -d '2024-01-01T00:00:00Z' +%s
	// gives 1704067200.
	cases := []struct {
		text string
		typ  Type
		want float64
		ok   bool
	}{
		{"2024-01-01T00:00:00Z", TypeTimestamp, 1704067200, true},
		{"2024-01-01 01:00:00+01:00", TypeTimestamp, 1704067200, true},
		{"2024-01-01T00:00:00", TypeTimestamp, 1704067200, true},
		{"2024-01-01 00:00:00", TypeTimestamp, 1704067200, true},
		{"2024-01-01T00:00:00.25Z", TypeTimestamp, 1704067200.25, true},
		{"2023-12-31T19:00:00-05:00", TypeTimestamp, 1704067200, true},
		{"2024-01-01", TypeTimestamp, 1704067200, true},
		{"2024-01-02", TypeDate, 1704153600, true},
		{"1969-12-31", TypeDate, -86400, true},
		{"2024-01-01T00:00:00Z", TypeDate, 0, false},
		{"2024-02-30", TypeDate, 0, false},
		{"2024-1-1", TypeDate, 0, false},
		{"01/02/2024", TypeTimestamp, 0, false},
		{"2024-01-01T25:00:00Z", TypeTimestamp, 0, false},
	}
	for _, c := range cases {
		got, err := parseTime(c.text, c.typ)
		if (err == nil) != c.ok || got != c.want {
			t.Errorf("parseTime(%q, %s) = %v, %v; want %v, ok %v", c.text, c.typ, got, err, c.want, c.ok)
		}
		if c.ok && c.typ == TypeDate {
			if back := formatTime(got, c.typ); back != c.text {
				t.Errorf("formatTime(%v) = %q, want %q", got, back, c.text)
			}
		}
	}
}

func TestInput(t *testing.T) {
	cases := []struct {
		name, csv string
		want      Input
	}{
		{"double-quoted tab", `delimiter: "\t"`, Input{Delimiter: '\t'}},
		{"single-quoted tab", `delimiter: '\t'`, Input{Delimiter: '\t'}},
		{"no quoting", `quote: ""`, Input{NoQuote: true}},
		{"quote", `quote: "'"`, Input{Quote: '\''}},
		{"no header", `header: false`, Input{NoHeader: true}},
		{"header", `header: true`, Input{}},
		{"no null tokens", `nulls: []`, Input{Nulls: []string{}, NullsSet: true}},
		{"null tokens", `nulls: ["", n/a, 0]`, Input{Nulls: []string{"", "n/a", "0"}, NullsSet: true}},
		{"non-ASCII delimiter", `delimiter: "¦"`, Input{Delimiter: '¦'}},
		{"no quote lets the delimiter be a quote", "quote: ''\n  delimiter: '\"'", Input{Delimiter: '"', NoQuote: true}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			src := "policy: p\ndata: one.csv\ncsv:\n  " + c.csv + "\ncolumns: {a: {nulls: 0}}\n"
			p, err := Parse("input.yaml", []byte(src))
			if err != nil {
				t.Fatal(err)
			}
			c.want.Paths = []string{"one.csv"}
			if got := fmt.Sprintf("%#v", p.Input); got != fmt.Sprintf("%#v", c.want) {
				t.Errorf("got  %s\nwant %#v", got, c.want)
			}
		})
	}
}

func TestErrorFormat(t *testing.T) {
	src := "policy: p\ncolumns:\n  weight_kg:\n\tmaximun: 150\n"
	src = strings.Replace(src, "\tmaximun", "    maximun", 1)
	_, err := Parse("policy.yaml", []byte(src))
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 1 {
		t.Fatalf("got %v", err)
	}
	if got, want := err.Error(), `policy.yaml:4:5: columns.weight_kg: unknown key "maximun" (did you mean "maximum"?)`; got != want {
		t.Errorf("Error:\ngot  %s\nwant %s", got, want)
	}
	wantDetail := `policy.yaml:4:5: columns.weight_kg: unknown key "maximun" (did you mean "maximum"?)
    4 |     maximun: 150
      |     ^`
	if got := list.Detail(); got != wantDetail {
		t.Errorf("Detail:\ngot\n%s\nwant\n%s", got, wantDetail)
	}
	js, err := list[0].MarshalJSON()
	if err != nil {
		t.Fatal(err)
	}
	wantJSON := `{"code":"unknown-key","file":"policy.yaml","line":4,"col":5,"path":"columns.weight_kg",` +
		`"message":"unknown key \"maximun\"","hint":"did you mean \"maximum\"?","source":"    maximun: 150"}`
	if string(js) != wantJSON {
		t.Errorf("JSON:\ngot  %s\nwant %s", js, wantJSON)
	}
	// A caret under a column after a tab keeps the tab.
	e := &Error{Pos: Pos{Line: 7, Col: 3}, Source: "\t x: 1"}
	if got, want := e.Snippet(), "    7 | \t x: 1\n      | \t ^"; got != want {
		t.Errorf("Snippet:\ngot  %q\nwant %q", got, want)
	}
	// A syntax error has a line and no column: no caret.
	e = &Error{Pos: Pos{File: "f.yaml", Line: 2}, Source: "a: [", Message: "m"}
	if got, want := e.Error()+"\n"+e.Snippet(), "f.yaml:2: m\n    2 | a: ["; got != want {
		t.Errorf("no column:\ngot  %q\nwant %q", got, want)
	}
}

func TestErrorListCap(t *testing.T) {
	var b strings.Builder
	b.WriteString("policy: p\ncolumns:\n  a:\n")
	for i := 0; i < 25; i++ {
		fmt.Fprintf(&b, "    key%02d: 1\n", i)
	}
	_, err := Parse("cap.yaml", []byte(b.String()))
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 25 {
		t.Fatalf("got %d problems, want 25: %v", len(list), err)
	}
	lines := strings.Split(err.Error(), "\n")
	if len(lines) != ErrorsShown+1 || lines[ErrorsShown] != "and 5 more problems (25 in all)" {
		t.Errorf("got %d lines ending %q", len(lines), lines[len(lines)-1])
	}
	if !strings.HasPrefix(lines[0], "cap.yaml:4:5: ") || !strings.HasPrefix(lines[19], "cap.yaml:23:5: ") {
		t.Errorf("not sorted by position: %q ... %q", lines[0], lines[19])
	}
	if !sort.SliceIsSorted(list, func(i, j int) bool { return list[i].Pos.Line < list[j].Pos.Line }) {
		t.Error("list not sorted")
	}
}

func TestTextProblems(t *testing.T) {
	cases := []struct {
		src       string
		line, col int
		text      string
	}{
		{"policy: p\ncolumns:\n  a: {nulls: 0}\n  b\xff: {}\n", 4, 4, "not valid UTF-8"},
		{"policy: p\nabout: \"bell \a\"\n", 2, 14, "character U+0007 is not allowed"},
		{"policy: p\n\n\nabout: [", 4, 0, "invalid YAML"},
	}
	for _, c := range cases {
		_, err := Parse("text.yaml", []byte(c.src))
		var list ErrorList
		if !errors.As(err, &list) || len(list) != 1 || list[0].Code != CodeSyntax || list[0].Pos.Line != c.line ||
			list[0].Pos.Col != c.col || !strings.Contains(list[0].Message, c.text) {
			t.Errorf("%q: got %v, want syntax at %d:%d %q", c.src, err, c.line, c.col, c.text)
		}
	}
}

func TestLoad(t *testing.T) {
	_, err := Load("testdata/no-such-policy.yaml")
	var list ErrorList
	if err == nil || errors.As(err, &list) || !strings.Contains(err.Error(), "testdata/no-such-policy.yaml") {
		t.Errorf("Load of a missing file: %v", err)
	}
	p, err := Load("testdata/good/minimal.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The digest is from sha256sum testdata/good/minimal.yaml.
	if p.File != "testdata/good/minimal.yaml" || p.Hash != "sha256:3e9a099f9fe0ed236be45c23ac5c5818d301e55cf50fa81e65299cd851c83e63" {
		t.Errorf("file %s hash %s", p.File, p.Hash)
	}
}
