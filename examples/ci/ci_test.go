// Package ci tests the example CI workflows: they are valid YAML and run
// the command the README documents.
package ci

import (
	"os"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

const command = "go run ./cmd/assay check examples/apiary/policy.yaml --report junit=assay.xml --report markdown=summary.md"

// scripts collects every string under the keys run and script.
func scripts(n *yaml.Node, key string, out *[]string) {
	switch n.Kind {
	case yaml.ScalarNode:
		if key == "run" || key == "script" {
			*out = append(*out, n.Value)
		}
	case yaml.MappingNode:
		for i := 0; i+1 < len(n.Content); i += 2 {
			scripts(n.Content[i+1], n.Content[i].Value, out)
		}
	case yaml.SequenceNode, yaml.DocumentNode:
		for _, c := range n.Content {
			scripts(c, key, out)
		}
	}
}

func TestWorkflows(t *testing.T) {
	for _, name := range []string{"github-actions.yml", "gitlab-ci.yml"} {
		data, err := os.ReadFile(name)
		if err != nil {
			t.Fatal(err)
		}
		var doc yaml.Node
		if err := yaml.Unmarshal(data, &doc); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		var runs []string
		scripts(&doc, "", &runs)
		found := false
		for _, r := range runs {
			found = found || strings.TrimSpace(r) == command
		}
		if !found {
			t.Errorf("%s runs %q, not %q", name, runs, command)
		}
	}
}
