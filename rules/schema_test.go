package rules

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"
	"go.yaml.in/yaml/v3"

	"github.com/assay-project/assay/checks/dist"
)

// policySchema compiles JSONSchema; compiling also checks it against the
// draft 2020-12 metaschema.
func policySchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(JSONSchema))
	if err != nil {
		t.Fatalf("schema is not JSON: %v", err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("policy.schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("policy.schema.json")
	if err != nil {
		t.Fatalf("compile schema: %v", err)
	}
	return sch
}

// instance reads a YAML policy as the JSON value an editor validates.
func instance(t *testing.T, path string) any {
	t.Helper()
	var doc yaml.Node
	if err := yaml.Unmarshal(mustRead(t, path), &doc); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	js, err := json.Marshal(plain(t, &doc))
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	v, err := jsonschema.UnmarshalJSON(bytes.NewReader(js))
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// plain turns a YAML node into Go values that encode as JSON: mapping keys
// as text, dates and timestamps as their text.
func plain(t *testing.T, n *yaml.Node) any {
	t.Helper()
	switch n = deref(n); n.Kind {
	case yaml.DocumentNode:
		return plain(t, n.Content[0])
	case yaml.MappingNode:
		m := map[string]any{}
		for i := 0; i+1 < len(n.Content); i += 2 {
			m[n.Content[i].Value] = plain(t, n.Content[i+1])
		}
		return m
	case yaml.SequenceNode:
		l := []any{}
		for _, c := range n.Content {
			l = append(l, plain(t, c))
		}
		return l
	}
	switch n.ShortTag() {
	case "!!str", "!!timestamp":
		return n.Value
	}
	var v any
	if err := n.Decode(&v); err != nil {
		t.Fatalf("line %d: %v", n.Line, err)
	}
	return v
}

// TestSchemaAcceptsPolicies validates every good fixture and every example
// policy of the repository against the schema, and parses them. Examples
// may not exist yet; good fixtures must.
func TestSchemaAcceptsPolicies(t *testing.T) {
	sch := policySchema(t)
	good, err := filepath.Glob("testdata/good/*.yaml")
	if err != nil || len(good) == 0 {
		t.Fatalf("no policies in testdata/good: %v", err)
	}
	files := map[string]bool{}
	for _, pattern := range []string{"testdata/good/*.yaml", "../examples/*/*.yaml", "../examples/*/policy*.yaml"} {
		matches, err := filepath.Glob(pattern)
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range matches {
			files[m] = true
		}
	}
	for f := range files {
		if err := sch.Validate(instance(t, f)); err != nil {
			t.Errorf("%s: %v", f, err)
		}
		if _, err := Load(f); err != nil {
			t.Errorf("%s: the schema accepts it but Parse does not: %v", f, err)
		}
	}
	t.Logf("%d policies validated", len(files))
}

// TestSchemaRejectsShapeProblems: a policy whose problems are of its shape
// (unknown keys, wrong kinds, a missing name) fails the schema too.
func TestSchemaRejectsShapeProblems(t *testing.T) {
	sch := policySchema(t)
	n := 0
	for _, c := range badFixtures {
		if !c.schema {
			continue
		}
		n++
		if err := sch.Validate(instance(t, filepath.Join("testdata/bad", c.file))); err == nil {
			t.Errorf("%s: the schema accepts it", c.file)
		}
	}
	if n < 3 {
		t.Errorf("only %d bad fixtures marked for the schema", n)
	}
	// Single problems, one at a time, each a change of a valid policy.
	for _, src := range []string{
		"policy: p\ncolumns: {a: {type: decimal}}\n",
		"policy: p\ncolumns: {a: {nulls: [1]}}\n",
		"policy: p\ncolumns: {a: {nulls: 1.5}}\n",
		"policy: p\ncolumns: {a: {nulls: {warn: 1%, fial: 2%}}}\n",
		"policy: p\ncolumns: {a: {summary: {meen: {minimum: 1}}}}\n",
		"policy: p\ncolumns: {a: {summary: {p95: {warn: [1]}}}}\n",
		"policy: p\ncolumns: {a: {minLength: -1}}\n",
		"policy: p\ncolumns: {a: {unique: yes}}\n",
		"policy: p\nrows: [{name: r}]\n",
		"policy: p\nrows: {minimum: 1}\n",
		"policy: p\ntable: {closed: \"true\"}\n",
		"policy: p\ntable: {key: []}\n",
		"policy: p\ncsv: {quote: \"ab\"}\n",
		"policy: p\ncolumns: {a: {distribution: gausian}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: normal, test: kolmogorov}}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: normal, measure: pvalue}}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: poisson, trials: 3}}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: normal, resolution: fine}}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: normal, sample: 10}}}\n",
		"policy: p\ncolumns: {a: {distribution: {test: ks}}}\n",
		"policy: p\ncolumns: {a: {distribution: {family: categorical, shares: {A: -1}}}}\n",
		"policy: p\ncolumns: {a: {extremes: tukee}}\n",
		"policy: p\ncolumns: {a: {extremes: {rule: esd, max_outliers: 0}}}\n",
		"policy: p\ncolumns: {a: {extremes: {rule: zscore, k: -3}}}\n",
		"policy: p\ncolumns: {a: {extremes: {rule: grubbs, alpha: 1.5}}}\n",
		"policy: p\ncolumns: {a: {extremes: {method: tukey}}}\n",
		"policy: p\ncolumns: {a: {extremes: [tukey]}}\n",
		"policy: p\njoint: [{columns: [a]}]\n",
		"policy: p\njoint: [{name: j}]\n",
		"policy: p\njoint: [{columns: [a, b], method: pca}]\n",
		"policy: p\njoint: [{columns: [a, b], quantile: 1}]\n",
		"policy: p\njoint: [{columns: [a, b], robust: yes}]\n",
		"policy: p\njoint: {columns: [a, b]}\n",
		"policy: p\npairs: [{columns: [a, b], relation: linar, slope: {minimum: 1}}]\n",
		"policy: p\npairs: [{columns: [a, b], relation: monotonic, slope: {minimum: 1}}]\n",
		"policy: p\npairs: [{columns: [a, b], relation: ordered, strict: yes}]\n",
		"policy: p\npairs: [{columns: [a, b], relation: linear, residuals: {rule: cook}}]\n",
		"policy: p\npairs: [{columns: [a, b], relation: linear, residuals: {cutoff: 0}}]\n",
		"policy: p\npairs: [{columns: [a, b]}]\n",
		"policy: p\npairs: {columns: [a, b], relation: determines}\n",
		"policy: p\ncolumns: {a: {nulls: 0, by: site}}\n",
		"policy: p\ncolumns: {a: {nulls: 0, by: {columns: [s], limit: 0}}}\n",
		"policy: p\ncolumns: {a: {nulls: 0, where: \"\"}}\n",
	} {
		f := filepath.Join(t.TempDir(), "p.yaml")
		writeFile(t, f, src)
		if err := sch.Validate(instance(t, f)); err == nil {
			t.Errorf("the schema accepts:\n%s", src)
		}
		if _, err := Parse(f, []byte(src)); err == nil {
			t.Errorf("Parse accepts:\n%s", src)
		}
	}
}

// TestSchemaInStep keeps the schema and the parser in step: every key the
// parser knows is a property of the schema and the other way round, and
// every property has a description for editors.
func TestSchemaInStep(t *testing.T) {
	var s map[string]any
	if err := json.Unmarshal(JSONSchema, &s); err != nil {
		t.Fatal(err)
	}
	defs := s["$defs"].(map[string]any)
	props := func(m any) []string {
		var keys []string
		for k := range m.(map[string]any)["properties"].(map[string]any) {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		return keys
	}
	sorted := func(l []string) []string {
		l = append([]string(nil), l...)
		sort.Strings(l)
		return l
	}
	top := s["properties"].(map[string]any)
	column := defs["column"].(map[string]any)["properties"].(map[string]any)
	var types []string
	for _, v := range column["type"].(map[string]any)["enum"].([]any) {
		types = append(types, v.(string))
	}
	enum := func(m any) []string {
		var out []string
		for _, v := range m.(map[string]any)["enum"].([]any) {
			out = append(out, v.(string))
		}
		sort.Strings(out)
		return out
	}
	distRule := defs["distributionRule"].(map[string]any)["properties"].(map[string]any)
	jointRule := defs["jointRule"].(map[string]any)["properties"].(map[string]any)
	pairRule := defs["pairRule"].(map[string]any)["properties"].(map[string]any)
	for _, c := range []struct {
		name         string
		schema, code []string
	}{
		{"top", props(s), topKeys},
		{"column", props(defs["column"]), columnKeys},
		{"table", props(top["table"]), tableKeys},
		{"row", props(defs["rowRule"]), rowKeys},
		{"summary", props(column["summary"]), statNames},
		{"type", sorted(types), TypeNames()},
		{"distribution", props(defs["distributionRule"]), distributionKeys},
		{"family", enum(defs["familyName"]), dist.Names()},
		{"test", enum(distRule["test"]), DistTestNames()},
		{"measure", enum(distRule["measure"]), DistMeasureNames()},
		{"extremes", props(defs["extremesRule"]), extremesKeys},
		{"extremes rule", enum(defs["extremesMethod"]), ExtremesMethodNames()},
		{"joint", props(defs["jointRule"]), jointKeys},
		{"joint method", enum(jointRule["method"]), JointMethodNames()},
		{"pair", props(defs["pairRule"]), allPairKeys()},
		{"relation", enum(pairRule["relation"]), RelationNames()},
	} {
		if got, want := strings.Join(c.schema, " "), strings.Join(sorted(c.code), " "); got != want {
			t.Errorf("%s keys: the schema has %s, the parser %s", c.name, got, want)
		}
	}
	var walk func(path string, v any)
	walk = func(path string, v any) {
		switch v := v.(type) {
		case map[string]any:
			if p, ok := v["properties"].(map[string]any); ok {
				for k, d := range p {
					if !described(d.(map[string]any), defs) {
						t.Errorf("%s.%s has no description", path, k)
					}
				}
			}
			for k, c := range v {
				walk(path+"."+k, c)
			}
		case []any:
			for _, c := range v {
				walk(path, c)
			}
		}
	}
	walk("schema", s)
}

// described reports whether a property schema has a description, itself
// or through its $ref.
func described(p map[string]any, defs map[string]any) bool {
	if _, ok := p["description"]; ok {
		return true
	}
	if ref, ok := p["$ref"].(string); ok {
		def, ok := defs[strings.TrimPrefix(ref, "#/$defs/")].(map[string]any)
		return ok && described(def, defs)
	}
	return false
}

func writeFile(t *testing.T, path, text string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}
