package engine

import (
	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/checks"
	"github.com/assay-project/assay/rules"
)

// Validate checks what can be checked of a policy without data, beyond what
// rules.Load already did: every row expression whose columns all declare a
// type is compiled against those types, so a type error (a number added to
// a string) is found before any data arrives. Expressions that read a
// column without a declared type wait for the data. The error lists every
// problem at its place in the policy, like a run's.
func Validate(p *rules.Policy) error {
	var (
		fields []arrow.Field
		typed  = map[string]bool{}
	)
	for _, c := range p.Columns {
		if t := ArrowType(c.Type); t != nil {
			fields = append(fields, arrow.Field{Name: c.Name, Type: t, Nullable: true})
			typed[c.Name] = true
		}
	}
	env := &checks.Env{Schema: arrow.NewSchema(fields, nil), Policy: p}
	var problems []problem
	for _, r := range p.Rules {
		if r.Kind != rules.KindRow || !allTyped(r.Columns, typed) {
			continue
		}
		if _, err := checks.Compile(r, env); err != nil {
			problems = append(problems, problem{r.Pos, err.Error()})
		}
	}
	if len(problems) == 0 {
		return nil
	}
	return &MismatchError{Policy: p.File, Problems: sortedMessages(problems), NoData: true}
}

func allTyped(cols []string, typed map[string]bool) bool {
	for _, c := range cols {
		if !typed[c] {
			return false
		}
	}
	return true
}
