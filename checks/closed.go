package checks

import (
	"fmt"

	"github.com/assay-project/assay/rules"
)

// newClosedCheck compiles table.closed: the number of data columns the
// policy does not declare (Env.DataColumns outside s.Allowed, in data
// order).
func newClosedCheck(r *rules.Rule, s rules.ClosedSpec, env *Env) (Check, error) {
	return &schemaCheck{
		rule:  r,
		found: notIn(env.DataColumns, s.Allowed),
		none:  "every column of the data is declared in the policy",
		some: func(cols string, n int) string {
			return fmt.Sprintf("%d column%s of the data %s not declared in the policy: %s", n, plural(n), isAre(n), cols)
		},
	}, nil
}
