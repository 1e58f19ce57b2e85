package engine_test

import (
	"strings"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/rules"
)

func TestValidate(t *testing.T) {
	tests := []struct {
		name string
		expr string
		want string // substring of the error; "" for none
	}{
		{"types fit", `weight > 0 && tag != ""`, ""},
		{"number plus string", `weight + tag > 1`, "p.yaml:7:29: invalid operation: +"},
		{"undeclared type waits for data", `other > 1`, ""},
		{"not a boolean", `weight + 1`, "must be true or false"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			src := "policy: p\ncolumns:\n  weight: {type: number}\n  tag: {type: string}\n  other: {}\nrows:\n  - {name: r, expr: '" + tt.expr + "'}\n"
			pol, err := rules.Parse("p.yaml", []byte(src))
			if err != nil {
				t.Fatal(err)
			}
			err = engine.Validate(pol)
			switch {
			case tt.want == "" && err != nil:
				t.Fatalf("unexpected error: %v", err)
			case tt.want != "" && err == nil:
				t.Fatalf("no error, want one containing %q", tt.want)
			case tt.want != "" && !strings.Contains(err.Error(), tt.want):
				t.Fatalf("error %q lacks %q", err, tt.want)
			}
		})
	}
}
