package checks

import (
	"fmt"

	"github.com/assay-project/assay/rules"
)

// Compile turns a resolved rule into a Check for env's schema. It fails when
// the rule cannot apply to the data as read (a column of the wrong type, an
// expression that does not type-check), naming the rule and its position.
func Compile(r *rules.Rule, env *Env) (Check, error) {
	if r.Segment != nil {
		return compileSegmented(r, env)
	}
	var (
		c   Check
		err error
	)
	switch s := r.Spec.(type) {
	case rules.TypeSpec:
		c, err = newTypeCheck(r, s, env)
	case rules.NullsSpec:
		c, err = newNullsCheck(r, env)
	case rules.UniqueSpec:
		c, err = newUniqueCheck(r, env)
	case rules.BoundSpec:
		c, err = newBoundCheck(r, s, env)
	case rules.EnumSpec:
		c, err = newEnumCheck(r, s, env)
	case rules.PatternSpec:
		c, err = newPatternCheck(r, s, env)
	case rules.LengthSpec:
		c, err = newLengthCheck(r, s, env)
	case rules.SummarySpec:
		c, err = newSummaryCheck(r, s, env)
	case rules.RowSpec:
		c, err = newRowCheck(r, s, env)
	case rules.RowCountSpec:
		c, err = newRowCountCheck(r, env)
	case rules.KeySpec:
		c, err = newKeyCheck(r, env)
	case rules.ClosedSpec:
		c, err = newClosedCheck(r, s, env)
	case rules.RequiredSpec:
		c, err = newRequiredCheck(r, env)
	case rules.DistributionSpec:
		c, err = newDistributionCheck(r, s, env)
	case rules.ExtremesSpec:
		c, err = newExtremesCheck(r, s, env)
	case rules.JointSpec:
		c, err = newJointCheck(r, s, env)
	case rules.DriftSpec:
		c, err = newDriftCheck(r, s, env)
	case rules.PairSpec:
		c, err = newPairCheck(r, s, env)
	default:
		return nil, fmt.Errorf("%s: rule %s: no check implements kind %q", r.Pos, r.ID, r.Kind)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: rule %s: %w", r.Pos, r.ID, err)
	}
	return c, nil
}
