package checks

import (
	"errors"

	"github.com/assay-project/assay/rules"
)

// newKeyCheck compiles table.key: the share of rows whose combination of
// the key columns occurs in more than one row, every row of each
// duplicated combination counting. Every row counts: a missing value is a
// value of its own (two rows alike but for being both empty in one key
// column share their key), and a cell that did not parse is compared by its
// text. It runs in two passes (see dupCheck): hashes first, exact groups
// second.
func newKeyCheck(r *rules.Rule, env *Env) (Check, error) {
	if len(r.Columns) == 0 {
		return nil, errors.New("key names no column")
	}
	return newDupCheck(r, env, true)
}
