package checks

import (
	"fmt"

	"github.com/assay-project/assay/rules"
)

// newUniqueCheck compiles unique: the share of a column's non-null values
// that belong to a duplicated value, every row of each duplicated group
// counting (values 1, 2, 2, 3, 3, 3 give 5/6). Missing values and cells that
// did not parse are not values and never duplicates. It runs in two passes
// (see dupCheck): hashes first, exact groups second.
func newUniqueCheck(r *rules.Rule, env *Env) (Check, error) {
	if len(r.Columns) != 1 {
		return nil, fmt.Errorf("unique reads one column, the rule names %d", len(r.Columns))
	}
	return newDupCheck(r, env, false)
}
