package checks

import (
	"fmt"

	"github.com/assay-project/assay/rules"
)

// newRequiredCheck compiles table.required: the number of the rule's
// columns absent from the data (Env.DataColumns), in policy order.
func newRequiredCheck(r *rules.Rule, env *Env) (Check, error) {
	return &schemaCheck{
		rule:  r,
		found: notIn(r.Columns, env.DataColumns),
		none:  "every required column is in the data",
		some: func(cols string, n int) string {
			return fmt.Sprintf("%d required column%s %s absent from the data: %s", n, plural(n), isAre(n), cols)
		},
	}, nil
}
