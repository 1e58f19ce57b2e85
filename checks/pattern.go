package checks

import (
	"fmt"
	"regexp"

	"github.com/assay-project/assay/rules"
)

// newPatternCheck compiles pattern: the share of non-null strings in which
// the RE2 pattern finds no match. The pattern is unanchored, as in JSON
// Schema: "^...$" asks for a whole-string match. Every breaking value
// scores 1, so the listing keeps the first rows.
func newPatternCheck(r *rules.Rule, s rules.PatternSpec, env *Env) (Check, error) {
	c, err := bindColumnOf(r, env, "pattern", classString)
	if err != nil {
		return nil, err
	}
	re := s.Regexp
	if re == nil {
		if re, err = regexp.Compile(s.Pattern); err != nil {
			return nil, fmt.Errorf("pattern of column %q: %w", c.name, err)
		}
	}
	vc := &valueCheck{rule: r, env: env, col: c, breaks: "fail to match " + re.String()}
	vc.scan = scanText(func(v string) verdict { return verdict{breaks: !re.MatchString(v), score: 1} })
	return vc, nil
}
