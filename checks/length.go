package checks

import (
	"fmt"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"

	"github.com/assay-project/assay/rules"
)

// newLengthCheck compiles minLength and maxLength: the share of non-null
// strings shorter or longer than the bound, counted in Unicode code points
// (utf8.RuneCountInString; an invalid byte counts as one). A value's score
// is how many characters it is short or over, so the listing starts with
// the values farthest off.
func newLengthCheck(r *rules.Rule, s rules.LengthSpec, env *Env) (Check, error) {
	c, err := bindColumnOf(r, env, string(s.Bound), classString)
	if err != nil {
		return nil, err
	}
	if s.Length < 0 {
		return nil, fmt.Errorf("%s of column %q is negative", s.Bound, c.name)
	}
	vc := &valueCheck{rule: r, env: env, col: c}
	switch s.Bound {
	case rules.KindMinLength:
		vc.breaks = "are shorter than " + characters(s.Length)
		vc.text = func(v string) verdict {
			if n := utf8.RuneCountInString(v); n < s.Length {
				return verdict{breaks: true, score: float64(s.Length - n)}
			}
			return verdict{}
		}
		vc.scan = func(a arrow.Array, _ *scratch, hit func(int, float64)) {
			eachString(a, func(i int, v string) {
				if n := utf8.RuneCountInString(v); n < s.Length {
					hit(i, float64(s.Length-n))
				}
			})
		}
	case rules.KindMaxLength:
		vc.breaks = "are longer than " + characters(s.Length)
		vc.text = func(v string) verdict {
			if n := utf8.RuneCountInString(v); n > s.Length {
				return verdict{breaks: true, score: float64(n - s.Length)}
			}
			return verdict{}
		}
		vc.scan = func(a arrow.Array, _ *scratch, hit func(int, float64)) {
			eachString(a, func(i int, v string) {
				if len(v) <= s.Length {
					return // no more code points than bytes
				}
				if n := utf8.RuneCountInString(v); n > s.Length {
					hit(i, float64(n-s.Length))
				}
			})
		}
	default:
		return nil, fmt.Errorf("length bound of kind %q", s.Bound)
	}
	return vc, nil
}

func characters(n int) string {
	if n == 1 {
		return "1 character"
	}
	return fmt.Sprintf("%d characters", n)
}
