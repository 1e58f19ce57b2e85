package profile

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/santhosh-tekuri/jsonschema/v6"
	"go.yaml.in/yaml/v3"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/report"
	"github.com/assay-project/assay/engine/source"
	"github.com/assay-project/assay/rules"
)

var update = flag.Bool("update", false, "rewrite the golden drafts under testdata")

// hive is one row of the clean generated dataset.
type hive struct {
	id       string
	site     string
	weight   float64 // normal(50, 8), recorded to 0.01
	temp     float64 // normal(34, 1.5), recorded to 0.1
	humidity float64 // 2·temp − 10 + normal(0, 0.5): a linear pair with temp
	visits   int64   // lognormal, whole numbers
	day      string
	note     string // missing in about 2% of rows
}

// cleanHives makes n rows from a seeded generator: the same n gives the
// same rows.
func cleanHives(n int) []hive {
	r := rand.New(rand.NewPCG(42, 7))
	sites := []string{"north", "south", "east", "west"}
	rows := make([]hive, n)
	for i := range rows {
		temp := math.Round((34+1.5*r.NormFloat64())*10) / 10
		h := hive{
			id:       fmt.Sprintf("H-%05d", i+1),
			site:     sites[r.IntN(len(sites))],
			weight:   math.Round((50+8*r.NormFloat64())*100) / 100,
			temp:     temp,
			humidity: math.Round((2*temp-10+0.5*r.NormFloat64())*100) / 100,
			visits:   int64(math.Round(math.Exp(5 + 0.4*r.NormFloat64()))),
			day:      fmt.Sprintf("2026-%02d-%02d", 1+i%12, 1+i%28),
			note:     fmt.Sprintf("batch %d", r.IntN(500)),
		}
		if r.Float64() < 0.02 {
			h.note = ""
		}
		rows[i] = h
	}
	return rows
}

// writeHives writes rows as CSV into dir and returns its path.
func writeHives(t *testing.T, dir, name string, rows []hive) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("id,site,weight_kg,temp_c,humidity_pct,visits,day,note\n")
	for _, h := range rows {
		w := "NA"
		if !math.IsNaN(h.weight) {
			w = fmt.Sprint(h.weight)
		}
		fmt.Fprintf(&b, "%s,%s,%s,%v,%v,%d,%s,%s\n", h.id, h.site, w, h.temp, h.humidity, h.visits, h.day, h.note)
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// draft profiles paths into dir/policy.yaml, with data naming the files
// relative to dir, and returns the policy's text.
func draft(t *testing.T, dir string, paths ...string) []byte {
	t.Helper()
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	var data []string
	for _, p := range paths {
		data = append(data, filepath.Base(p))
	}
	text, err := Draft(context.Background(), paths, Options{Name: "drafted", Data: data, Seed: 1,
		Source: source.Options{Allocator: mem}})
	if err != nil {
		t.Fatalf("draft: %v", err)
	}
	if err := os.WriteFile(filepath.Join(dir, "policy.yaml"), text, 0o644); err != nil {
		t.Fatal(err)
	}
	return text
}

// check runs the policy in dir on paths (the policy's own data when none).
func check(t *testing.T, dir string, paths ...string) *report.Report {
	t.Helper()
	pol, err := rules.Load(filepath.Join(dir, "policy.yaml"))
	if err != nil {
		t.Fatalf("the drafted policy does not load: %v", err)
	}
	rep, err := engine.Run(context.Background(), pol, paths, engine.Options{Workers: 1})
	if err != nil {
		t.Fatalf("run: %v", err)
	}
	return rep
}

// notPassing lists the ids of the results that did not pass.
func notPassing(rep *report.Report) []string {
	var out []string
	for _, r := range rep.Results {
		if r.Verdict != report.Pass || r.Status != report.OK {
			out = append(out, fmt.Sprintf("%s (%s)", r.ID, r.Verdict))
		}
	}
	return out
}

func verdictOf(rep *report.Report, id string) (report.Verdict, bool) {
	for _, r := range rep.Results {
		if r.ID == id {
			return r.Verdict, true
		}
	}
	return report.Pass, false
}

func TestRoundTripGenerated(t *testing.T) {
	dir := t.TempDir()
	rows := cleanHives(3000)
	path := writeHives(t, dir, "hives.csv", rows)
	text := draft(t, dir, path)
	rep := check(t, dir)
	if bad := notPassing(rep); len(bad) > 0 {
		t.Fatalf("the drafted policy does not pass on its own data: %v\n%s", bad, text)
	}
	// What the draft must contain, rule by rule.
	for _, id := range []string{"columns.id.unique", "columns.site.enum", "columns.weight_kg.distribution",
		"columns.weight_kg.minimum", "columns.weight_kg.maximum", "columns.note.nulls", "columns.day.type",
		"columns.visits.distribution", "table.closed", "pairs.temp_c+humidity_pct.correlation",
		"pairs.temp_c+humidity_pct.residuals"} {
		if _, ok := verdictOf(rep, id); !ok {
			t.Errorf("no rule %s in the draft\n%s", id, text)
		}
	}
	for _, want := range []string{"family: normal", "enum: [east, north, south, west]", "relation: linear"} {
		if !bytes.Contains(text, []byte(want)) {
			t.Errorf("draft lacks %q\n%s", want, text)
		}
	}
	sd := 8.0
	cases := []struct {
		name   string
		plant  func(rows []hive)
		failed []string // rules that must fail
		prefix string   // every rule not passing has an id starting with this
	}{
		{"unit change x1000", func(rows []hive) {
			for i := range rows {
				rows[i].weight *= 1000
			}
		}, []string{"columns.weight_kg.maximum", "columns.weight_kg.distribution"}, "columns.weight_kg."},
		{"mean shift of half a sd", func(rows []hive) {
			for i := range rows {
				rows[i].weight += sd / 2
			}
		}, []string{"columns.weight_kg.distribution"}, "columns.weight_kg."},
		{"new category", func(rows []hive) {
			for i := 0; i < len(rows); i += 20 {
				rows[i].site = "central"
			}
		}, []string{"columns.site.enum"}, "columns.site."},
		{"10% nulls", func(rows []hive) {
			for i := 0; i < len(rows); i += 10 {
				rows[i].weight = math.NaN()
			}
		}, []string{"columns.weight_kg.nulls"}, "columns.weight_kg."},
		{"broken relation", func(rows []hive) {
			r := rand.New(rand.NewPCG(3, 3))
			r.Shuffle(len(rows), func(i, j int) { rows[i].humidity, rows[j].humidity = rows[j].humidity, rows[i].humidity })
		}, []string{"pairs.temp_c+humidity_pct.correlation"}, "pairs.temp_c+humidity_pct."},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			planted := slices.Clone(rows)
			c.plant(planted)
			p := writeHives(t, dir, strings.ReplaceAll(c.name, " ", "-")+".csv", planted)
			rep := check(t, dir, p)
			if rep.Verdict != report.Fail {
				t.Fatalf("verdict %s, want fail; not passing: %v", rep.Verdict, notPassing(rep))
			}
			t.Logf("not passing: %v", notPassing(rep))
			for _, id := range c.failed {
				if v, _ := verdictOf(rep, id); v != report.Fail {
					t.Errorf("%s: %s, want fail", id, v)
				}
			}
			for _, r := range rep.Results {
				if r.Verdict != report.Pass && !strings.HasPrefix(r.ID, c.prefix) {
					t.Errorf("%s: %s, but only %s* should be", r.ID, r.Verdict, c.prefix)
				}
			}
		})
	}
}

// TestRoundTripReference drafts policies from reference datasets
// (testdata/README.md): NIST's 500 normal random numbers (e-Handbook
// RANDN.DAT), whose best family by AIC is the normal one, and NIST StRD
// Norris (36 calibration pairs on a line, certified R² 0.99999), whose
// columns make a linear pair. Each draft passes on its data.
func TestRoundTripReference(t *testing.T) {
	cases := []struct {
		file string
		rows int64
		want []string
	}{
		{"nist_ehb_randn_normal_random.csv", 500, []string{"family: normal"}},
		{"nist_strd_norris.csv", 36, []string{"- columns: [\"y\", x]\n    relation: linear\n    correlation: {minimum: 0.89}"}},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			dir := t.TempDir()
			src, err := os.ReadFile(filepath.Join("testdata", c.file))
			if err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(dir, c.file)
			if err := os.WriteFile(path, src, 0o644); err != nil {
				t.Fatal(err)
			}
			text := draft(t, dir, path)
			for _, w := range c.want {
				if !bytes.Contains(text, []byte(w)) {
					t.Errorf("draft lacks %q\n%s", w, text)
				}
			}
			rep := check(t, dir)
			if bad := notPassing(rep); len(bad) > 0 {
				t.Fatalf("the drafted policy does not pass on its own data: %v\n%s", bad, text)
			}
			if rep.Rows != c.rows {
				t.Errorf("rows %d, want %d", rep.Rows, c.rows)
			}
		})
	}
}

// TestDeterministic drafts the same data twice, and compares with the
// golden draft (go test -update rewrites it).
func TestDeterministic(t *testing.T) {
	dir := t.TempDir()
	path := writeHives(t, dir, "hives.csv", cleanHives(1000))
	first := draft(t, dir, path)
	second := draft(t, dir, path)
	if !bytes.Equal(first, second) {
		t.Fatalf("two drafts of the same data differ:\n%s\n---\n%s", first, second)
	}
	golden := filepath.Join("testdata", "hives.yaml")
	if *update {
		if err := os.WriteFile(golden, first, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(first, want) {
		t.Errorf("draft differs from %s (go test -update rewrites it):\n%s", golden, first)
	}
}

// TestSchema validates drafts against the policy JSON Schema, as an editor
// would.
func TestSchema(t *testing.T) {
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(rules.JSONSchema))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("policy.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("policy.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	path := writeHives(t, dir, "hives.csv", cleanHives(500))
	text := draft(t, dir, path)
	var v any
	if err := yaml.Unmarshal(text, &v); err != nil {
		t.Fatal(err)
	}
	js, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(js))
	if err != nil {
		t.Fatal(err)
	}
	if err := sch.Validate(inst); err != nil {
		t.Errorf("draft does not validate against the schema: %v\n%s", err, text)
	}
}

func TestBounds(t *testing.T) {
	cases := []struct {
		lo, hi         float64
		integer        bool
		wantLo, wantHi float64
	}{
		{-2.647, 3.436, false, -3.3, 4.1},     // width 6.083, margin 0.6083, step 0.1
		{12.3, 98.1, false, 3, 107},           // width 85.8, step 1
		{0.5, 2.5, false, 0.3, 2.7},           // step 0.1
		{3, 90, true, 0, 99},                  // lower bound of non-negative data stays >= 0
		{1947, 1962, true, 1945, 1964},        // step 1 for integers
		{5, 5, false, 5, 5},                   // constant
		{-90, -10, false, -98, -2},            // width 80, step 1
		{-1e308, 1e308, false, -1e308, 1e308}, // the width overflows: no margin
	}
	for _, c := range cases {
		lo, hi := bounds(c.lo, c.hi, c.integer)
		if lo != c.wantLo || hi != c.wantHi {
			t.Errorf("bounds(%v, %v, %v) = %v, %v, want %v, %v", c.lo, c.hi, c.integer, lo, hi, c.wantLo, c.wantHi)
		}
	}
}

func TestNullsThreshold(t *testing.T) {
	cases := []struct {
		nulls, rows int64
		want        float64
	}{
		{0, 100, 0},
		{2, 100, 0.04},   // 1.5·2% + 1%
		{1, 1000, 0.012}, // 0.15% + 1%, rounded up to 0.1%
		{90, 100, 1},
	}
	for _, c := range cases {
		if got := nullsThreshold(c.nulls, c.rows); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("nullsThreshold(%d, %d) = %v, want %v", c.nulls, c.rows, got, c.want)
		}
	}
}

// TestStr reads each written string back through YAML, in block and flow
// context.
func TestStr(t *testing.T) {
	for _, s := range []string{"site", "y", "no", "True", "null", "01", "1.5", "a b", "a: b", "#x", "[x]", "é", "a,b",
		"-", "", "line\nbreak", `back\slash "q"`, "~"} {
		var got struct {
			K string   `yaml:"k"`
			L []string `yaml:"l"`
		}
		doc := "k: " + str(s) + "\nl: " + flow([]string{s, s}, str) + "\n"
		if err := yaml.Unmarshal([]byte(doc), &got); err != nil {
			t.Errorf("%q: %v in %q", s, err, doc)
			continue
		}
		if got.K != s || len(got.L) != 2 || got.L[0] != s {
			t.Errorf("%q written as %q reads back as %q, %q", s, str(s), got.K, got.L)
		}
	}
}

func TestSigOut(t *testing.T) {
	cases := []struct {
		v    float64
		to   func(float64) float64
		want float64
	}{
		{5.9800004, math.Ceil, 5.98001},
		{5.9800004, math.Floor, 5.98},
		{-1.2345678, math.Floor, -1.23457},
		{-1.2345678, math.Ceil, -1.23456},
		{1234567, math.Ceil, 1234570},
		{0, math.Ceil, 0},
	}
	for _, c := range cases {
		if got := sigOut(c.v, c.to); got != c.want {
			t.Errorf("sigOut(%v) = %v, want %v", c.v, got, c.want)
		}
	}
}

// ruleIDs parses a draft and lists its rule ids.
func ruleIDs(t *testing.T, text []byte) []string {
	t.Helper()
	pol, err := rules.Parse("draft.yaml", text)
	if err != nil {
		t.Fatalf("draft does not parse: %v\n%s", err, text)
	}
	var ids []string
	for _, r := range pol.Rules {
		ids = append(ids, r.ID)
	}
	return ids
}

// TestWhatIsDrafted drafts small tables and lists which rules each column
// gets.
func TestWhatIsDrafted(t *testing.T) {
	cases := []struct {
		name      string
		csv       func(i int) string // row i
		header    string
		want, not []string
	}{
		{"integer identifier", func(i int) string { return fmt.Sprintf("%d,%d", 1000+i, i%7) }, "n,k",
			[]string{"columns.n.unique", "columns.k.enum", "columns.k.minimum"},
			[]string{"columns.n.minimum", "columns.n.maximum", "columns.n.distribution", "columns.k.unique", "columns.k.distribution"}},
		{"rare category", func(i int) string {
			if i == 0 {
				return "rare"
			}
			return []string{"a", "b"}[i%2]
		}, "s", nil, []string{"columns.s.enum", "columns.s.unique"}},
		{"two-column key", func(i int) string { return fmt.Sprintf("s%d,%d,%d", i/10, i%10, i%3) }, "a,b,c",
			[]string{"table.key"}, []string{"columns.a.unique", "columns.b.unique"}},
		{"no key", func(i int) string { return fmt.Sprintf("s%d,%d", i%10, i%20) }, "a,b",
			nil, []string{"table.key", "columns.a.unique"}},
		{"monotonic pair", func(i int) string { return fmt.Sprintf("%d,%.6g", i, math.Exp(float64(i)/4)) }, "x,y",
			[]string{"pairs.x+y.correlation"}, []string{"pairs.x+y.residuals"}},
		{"pair ids that would clash", func(i int) string { return fmt.Sprintf("%d,%d,%d,%d", i, 2*i, 3*i, 4*i) }, "a+b,c,a,b+c",
			[]string{"pairs.a+b+c.correlation", "pairs.a+b+a.correlation"}, nil},
		{"few distinct numbers", func(i int) string { return []string{"0.5", "1.5", "2.5"}[i%3] }, "v",
			[]string{"columns.v.minimum"}, []string{"columns.v.distribution", "columns.v.enum"}},
		{"too few for a family", func(i int) string { return fmt.Sprintf("%d.5", i*i%37) }, "x",
			[]string{"columns.x.minimum"}, []string{"columns.x.distribution"}},
		{"widened type", func(i int) string {
			if i == 40 {
				return "4.5"
			}
			return fmt.Sprint(i)
		}, "v", []string{"columns.v.type", "columns.v.distribution"}, []string{"columns.v.enum"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var b strings.Builder
			b.WriteString(c.header + "\n")
			n := 60
			if c.name == "too few for a family" {
				n = 40
			}
			for i := range n {
				b.WriteString(c.csv(i) + "\n")
			}
			dir := t.TempDir()
			path := filepath.Join(dir, "d.csv")
			if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
				t.Fatal(err)
			}
			// The reader infers types from the first 20 rows only.
			text, err := Draft(context.Background(), []string{path}, Options{Data: []string{"d.csv"}, Source: source.Options{SampleRows: 20}})
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, "policy.yaml"), text, 0o644); err != nil {
				t.Fatal(err)
			}
			if bad := notPassing(check(t, dir)); len(bad) > 0 {
				t.Errorf("the draft does not pass on its data: %v\n%s", bad, text)
			}
			ids := ruleIDs(t, text)
			for _, id := range c.want {
				if !slices.Contains(ids, id) {
					t.Errorf("no %s in %v\n%s", id, ids, text)
				}
			}
			for _, id := range c.not {
				if slices.Contains(ids, id) {
					t.Errorf("%s drafted\n%s", id, text)
				}
			}
		})
	}
}

// TestParquet drafts from a Parquet file whose stored types include one no
// policy type reads (uint64): it gets no type rule, and the draft passes.
func TestParquet(t *testing.T) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "serial", Type: arrow.PrimitiveTypes.Uint64},
		{Name: "depth_cm", Type: arrow.PrimitiveTypes.Int32},
		{Name: "moisture", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	r := rand.New(rand.NewPCG(5, 5))
	for i := range 200 {
		b.Field(0).(*array.Uint64Builder).Append(1<<63 + uint64(i))
		b.Field(1).(*array.Int32Builder).Append(int32(10 * (i % 6)))
		if i%25 == 0 {
			b.Field(2).(*array.Float64Builder).AppendNull()
		} else {
			b.Field(2).(*array.Float64Builder).Append(math.Round((30+4*r.NormFloat64())*10) / 10)
		}
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	dir := t.TempDir()
	path := filepath.Join(dir, "soil.parquet")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(schema, f, nil, pqarrow.DefaultWriterProps())
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	text := draft(t, dir, path)
	ids := ruleIDs(t, text)
	for _, id := range []string{"columns.depth_cm.type", "columns.depth_cm.enum", "columns.moisture.nulls", "columns.moisture.distribution"} {
		if !slices.Contains(ids, id) {
			t.Errorf("no %s\n%s", id, text)
		}
	}
	if slices.Contains(ids, "columns.serial.type") {
		t.Errorf("a type drafted for a uint64 column\n%s", text)
	}
	if bad := notPassing(check(t, dir)); len(bad) > 0 {
		t.Errorf("the draft does not pass on its data: %v\n%s", bad, text)
	}
}

// TestStdin drafts from standard input whose type needs widening after
// the rows the reader infers from, so that it is read twice.
func TestStdin(t *testing.T) {
	var b strings.Builder
	b.WriteString("v\n")
	for i := range 60 {
		fmt.Fprintf(&b, "%d\n", i)
	}
	b.WriteString("0.5\n")
	tmp := t.TempDir()
	text, err := Draft(context.Background(), []string{"-"}, Options{Source: source.Options{SampleRows: 10,
		Stdin: strings.NewReader(b.String()), TempDir: tmp}})
	if err != nil {
		t.Fatal(err)
	}
	if left, _ := os.ReadDir(tmp); len(left) > 0 {
		t.Errorf("temporary files left behind: %v", left)
	}
	for _, want := range []string{"from 61 rows of standard input", "type: number"} {
		if !bytes.Contains(text, []byte(want)) {
			t.Errorf("draft lacks %q\n%s", want, text)
		}
	}
}
