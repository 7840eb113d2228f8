package cohort

import "strings"

// Closest returns the name in names nearest to want by edit distance,
// ignoring case, or "" when none is near enough to be a likely typo (more
// than a third of want's length, and at least two, edits away).
func Closest(want string, names []string) string {
	best, bestD := "", -1
	w := strings.ToLower(want)
	for _, n := range names {
		d := editDistance(w, strings.ToLower(n))
		if bestD < 0 || d < bestD {
			best, bestD = n, d
		}
	}
	limit := max(2, len([]rune(want))/3)
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
