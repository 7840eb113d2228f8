package cohort

import (
	"strings"
	"unicode/utf8"
)

// Closest returns the name in names nearest to want by edit distance,
// ignoring case, or "" when none is near enough to be a likely typo (more
// than a third of want's length, and at least two, edits away).
func Closest(want string, names []string) string {
	best, bestD := "", -1
	w := strings.ToLower(want)
	limit := max(2, utf8.RuneCountInString(want)/3)
	nw := utf8.RuneCountInString(w)
	for _, n := range names {
		// The distance is at least the difference in length: a name
		// too long or too short to be near is not measured (a binary
		// file's "header" may be megabytes long).
		l := strings.ToLower(n)
		if nn := utf8.RuneCountInString(l); nn > nw+limit || nn < nw-limit {
			continue
		}
		d := editDistance(w, l)
		if bestD < 0 || d < bestD {
			best, bestD = n, d
		}
	}
	if bestD < 0 || bestD > limit {
		return ""
	}
	return best
}

// editDistance is the Levenshtein distance between a and b, in runes.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
