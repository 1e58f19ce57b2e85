package rules

import (
	"fmt"
	"strings"
)

// Suggest returns the candidate closest to name, for a "did you mean"
// hint, or "" when none is close. Closeness is the optimal string alignment
// distance (Levenshtein edits plus swaps of adjacent characters; Damerau
// 1964) between the lower-cased names, counted in characters. A candidate
// is close when that distance is at most max(1, (len(name)+1)/4) and smaller
// than the length of both names, so a short name is never matched with an
// unrelated one. Ties go to the earlier candidate; a candidate equal to name
// wins outright.
func Suggest(name string, candidates []string) string {
	a := []rune(strings.ToLower(name))
	limit := max(1, (len(a)+1)/4)
	best, bestD := "", limit+1
	for _, c := range candidates {
		if c == name {
			return c
		}
		b := []rune(strings.ToLower(c))
		if d := distance(a, b); d < bestD && d < len(a) && d < len(b) {
			best, bestD = c, d
		}
	}
	return best
}

// didYouMean is the hint for an unknown name, or "".
func didYouMean(name string, candidates []string) string {
	if s := Suggest(name, candidates); s != "" {
		return fmt.Sprintf("did you mean %q?", s)
	}
	return ""
}

// distance is the optimal string alignment distance between a and b: the
// fewest insertions, deletions, substitutions and swaps of two adjacent
// characters that turn a into b, no substring edited twice.
func distance(a, b []rune) int {
	// Three rows of the dynamic-programming table suffice: the swap looks
	// two rows back.
	prev2 := make([]int, len(b)+1)
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				cur[j] = min(cur[j], prev2[j-2]+1)
			}
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(b)]
}
