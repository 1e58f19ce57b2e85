package checks

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"github.com/assay-project/assay/rules"
)

// newEnumCheck compiles enum: the share of non-null values that are not one
// of the listed values. Strings compare as text (exactly, case and all);
// integers and numbers numerically (so 1 and 1.0 are the same member; NaN
// is never one; on a float32 column the members are rounded to float32, as
// the data were); booleans by the words true and false; dates and
// timestamps as instants (the policy resolves them to seconds since the
// epoch, which are scaled to the column's unit as bounds are). Every
// breaking value scores 1: none is farther off than another, so the
// listing keeps the first rows.
func newEnumCheck(r *rules.Rule, s rules.EnumSpec, env *Env) (Check, error) {
	c, err := bindColumnOf(r, env, "enum", classString, classInteger, classNumber, classBoolean, classTime)
	if err != nil {
		return nil, err
	}
	vc := &valueCheck{rule: r, env: env, col: c, breaks: "are outside the list " + listValues(s.Values)}
	switch c.class {
	case classString:
		has := newTextSet(s.Values).has
		vc.scan, vc.text = scanPassing(has), failing(has)
	case classNumber:
		if err := allNumbers(c, s); err != nil {
			return nil, err
		}
		set := make(map[float64]bool, len(s.Numbers))
		for _, v := range s.Numbers {
			set[asStored(c, v)] = true
		}
		vc.scan = func(a arrow.Array, sc *scratch, hit func(int, float64)) {
			v := validOf(a)
			for i, x := range float64s(a, &sc.floats) {
				if !set[x] && v.at(i) {
					hit(i, 1)
				}
			}
		}
	case classInteger, classTime:
		set, err := enumInts(c, s)
		if err != nil {
			return nil, err
		}
		vc.scan = func(a arrow.Array, sc *scratch, hit func(int, float64)) {
			v := validOf(a)
			for i, x := range int64s(a, &sc.ints) {
				if !set[x] && v.at(i) {
					hit(i, 1)
				}
			}
		}
	case classBoolean:
		var allowed [2]bool // indexed by false, true
		for _, v := range s.Values {
			switch strings.ToLower(v) {
			case "false":
				allowed[0] = true
			case "true":
				allowed[1] = true
			default:
				return nil, fmt.Errorf("enum value %q is not a boolean but column %q holds %s", v, c.name, typeWords(c.typ))
			}
		}
		vc.scan = func(a arrow.Array, _ *scratch, hit func(int, float64)) {
			b := a.(*array.Boolean)
			v := validOf(a)
			for i := range b.Len() {
				if v.at(i) && !allowed[boolIndex(b.Value(i))] {
					hit(i, 1)
				}
			}
		}
	}
	return vc, nil
}

// textSet is a set of strings. A few members are kept by their first
// byte, and a value is compared with the members that share its first
// byte, which costs less than hashing every value looked up; more go in a
// map.
type textSet struct {
	byFirst *[256][]string
	empty   bool // "" is a member (of a few)
	many    map[string]bool
}

// fewMembers is the most members a textSet keeps by their first byte.
const fewMembers = 8

func newTextSet(members []string) textSet {
	if len(members) <= fewMembers {
		t := textSet{byFirst: new([256][]string)}
		for _, m := range members {
			if m == "" {
				t.empty = true
				continue
			}
			t.byFirst[m[0]] = append(t.byFirst[m[0]], m)
		}
		return t
	}
	m := make(map[string]bool, len(members))
	for _, v := range members {
		m[v] = true
	}
	return textSet{many: m}
}

// has reports whether s is a member.
func (t textSet) has(s string) bool {
	if t.many != nil {
		return t.many[s]
	}
	if s == "" {
		return t.empty
	}
	for _, m := range t.byFirst[s[0]] {
		if m == s {
			return true
		}
	}
	return false
}

func boolIndex(b bool) int {
	if b {
		return 1
	}
	return 0
}

// allNumbers makes sure every enum value is a number, for a numeric column.
func allNumbers(c column, s rules.EnumSpec) error {
	if len(s.Numbers) == len(s.Values) {
		return nil
	}
	for _, v := range s.Values {
		if _, err := strconv.ParseFloat(v, 64); err != nil {
			return fmt.Errorf("enum value %q is not a number but column %q holds %s", v, c.name, typeWords(c.typ))
		}
	}
	return fmt.Errorf("enum values of column %q are not all numbers", c.name)
}

// enumInts is the set of enum members in an integer or time column's unit
// (the policy gives times as seconds since the epoch). A number that is not
// a whole unit can never be a member and is left out.
func enumInts(c column, s rules.EnumSpec) (map[int64]bool, error) {
	if err := allNumbers(c, s); err != nil {
		return nil, err
	}
	set := make(map[int64]bool, len(s.Numbers))
	for _, f := range s.Numbers {
		if u := toUnits(f, c.perSecond); u == math.Trunc(u) && u >= math.MinInt64 && u < 0x1p63 {
			set[int64(u)] = true
		}
	}
	return set, nil
}

// listValues writes up to ten enum values for a message.
func listValues(vs []string) string {
	const most = 10
	if len(vs) <= most {
		return strings.Join(vs, ", ")
	}
	return fmt.Sprintf("%s and %d more", strings.Join(vs[:most], ", "), len(vs)-most)
}
