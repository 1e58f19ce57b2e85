package checks

import (
	"fmt"
	"regexp"
	"regexp/syntax"

	"github.com/assay-project/assay/rules"
)

// newPatternCheck compiles pattern: the share of non-null strings in which
// the RE2 pattern finds no match. The pattern is unanchored, as in JSON
// Schema: "^...$" asks for a whole-string match. Every breaking value
// scores 1, so the listing keeps the first rows. A pattern of fixed ASCII
// width (fixedWidthOf) is matched byte by byte; any other runs the regular
// expression, once per distinct value while that pays (verdicts).
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
	if fw, ok := fixedWidthOf(re); ok {
		vc.scan, vc.text = scanPassing(fw.match), failing(fw.match)
		return vc, nil
	}
	vc.text = failing(re.MatchString)
	vc.scan = scanText(vc.text)
	return vc, nil
}

// fixedWidth is a pattern anchored at both ends that matches, at each of
// at most 64 positions, one ASCII character of a set: "^D-[0-9]{4}$" is
// the sets {D}, {-} and four times {0..9}. A string matches it exactly
// when it has one byte per position, each in its position's set. The
// regular expression would say the same: it reads the string as UTF-8,
// and a byte of 0x80 or above, alone or in a sequence, is never an ASCII
// character.
type fixedWidth struct {
	n int // positions
	// allow has bit i of allow[c] set when byte c may stand at position
	// i; it is 0 for bytes of 0x80 and above.
	allow [256]uint64
}

// add allows the characters lo..hi at the next position.
func (fw *fixedWidth) add(lo, hi rune) {
	for c := lo; c <= hi; c++ {
		fw.allow[c] |= 1 << fw.n
	}
}

// fixedWidthOf returns the fixedWidth form of re when it has one: its
// syntax, simplified (x{4} written out as xxxx), is the beginning of the
// text, then literals without case folding and character classes of
// ASCII characters only (captures and empty matches among them), then
// the end of the text, with at most 64 characters between.
func fixedWidthOf(re *regexp.Regexp) (*fixedWidth, bool) {
	tree, err := syntax.Parse(re.String(), syntax.Perl) // as regexp.Compile parses it
	if err != nil {
		return nil, false
	}
	tree = tree.Simplify()
	if tree.Op != syntax.OpConcat || len(tree.Sub) < 2 || tree.Sub[0].Op != syntax.OpBeginText ||
		tree.Sub[len(tree.Sub)-1].Op != syntax.OpEndText {
		return nil, false
	}
	fw := new(fixedWidth)
	var walk func(t *syntax.Regexp) bool
	walk = func(t *syntax.Regexp) bool {
		switch t.Op {
		case syntax.OpEmptyMatch:
			return true
		case syntax.OpConcat, syntax.OpCapture:
			for _, sub := range t.Sub {
				if !walk(sub) {
					return false
				}
			}
			return true
		case syntax.OpLiteral:
			if t.Flags&syntax.FoldCase != 0 {
				return false
			}
			for _, r := range t.Rune {
				if r < 0 || r > 0x7f || fw.n == 64 {
					return false
				}
				fw.add(r, r)
				fw.n++
			}
			return true
		case syntax.OpCharClass:
			if fw.n == 64 {
				return false
			}
			for k := 0; k+1 < len(t.Rune); k += 2 {
				lo, hi := t.Rune[k], t.Rune[k+1]
				if lo < 0 || hi > 0x7f || lo > hi {
					return false
				}
				fw.add(lo, hi)
			}
			fw.n++
			return true
		}
		return false
	}
	for _, sub := range tree.Sub[1 : len(tree.Sub)-1] {
		if !walk(sub) {
			return nil, false
		}
	}
	return fw, true
}

// match reports whether s matches the pattern.
func (fw *fixedWidth) match(s string) bool {
	if len(s) != fw.n {
		return false
	}
	for i := range len(s) {
		if fw.allow[s[i]]>>i&1 == 0 {
			return false
		}
	}
	return true
}
