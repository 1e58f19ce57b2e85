package checks

// Placeholders until the plain checks land; this file is deleted then.

import (
	"errors"

	"github.com/assay-project/assay/rules"
)

var errNotYet = errors.New("not implemented yet")

func newTypeCheck(*rules.Rule, rules.TypeSpec, *Env) (Check, error)       { return nil, errNotYet }
func newNullsCheck(*rules.Rule, *Env) (Check, error)                      { return nil, errNotYet }
func newUniqueCheck(*rules.Rule, *Env) (Check, error)                     { return nil, errNotYet }
func newBoundCheck(*rules.Rule, rules.BoundSpec, *Env) (Check, error)     { return nil, errNotYet }
func newEnumCheck(*rules.Rule, rules.EnumSpec, *Env) (Check, error)       { return nil, errNotYet }
func newPatternCheck(*rules.Rule, rules.PatternSpec, *Env) (Check, error) { return nil, errNotYet }
func newLengthCheck(*rules.Rule, rules.LengthSpec, *Env) (Check, error)   { return nil, errNotYet }
func newSummaryCheck(*rules.Rule, rules.SummarySpec, *Env) (Check, error) { return nil, errNotYet }
func newRowCountCheck(*rules.Rule, *Env) (Check, error)                   { return nil, errNotYet }
func newKeyCheck(*rules.Rule, *Env) (Check, error)                        { return nil, errNotYet }
func newClosedCheck(*rules.Rule, rules.ClosedSpec, *Env) (Check, error)   { return nil, errNotYet }
func newRequiredCheck(*rules.Rule, *Env) (Check, error)                   { return nil, errNotYet }
