package checks

import "github.com/assay-project/assay/rules"

// newUniqueCheck compiles unique: the share of a column's non-null values
// that belong to a duplicated value, every row of each duplicated group
// counting (values 1, 2, 2, 3, 3, 3 give 5/6). Missing values and cells that
// did not parse are not values and never duplicates. It runs in two passes
// (see dupCheck): hashes first, exact groups second.
func newUniqueCheck(r *rules.Rule, env *Env) (Check, error) {
	if _, err := bindOne(r, env, "unique"); err != nil {
		return nil, err
	}
	return newDupCheck(r, env, false)
}
