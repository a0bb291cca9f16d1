// Package suggest finds the valid name nearest to a misspelt one, for "did
// you mean" in error messages: the project's one string-distance rule,
// shared by the scenario loader (keys, enumerated values, parameter
// paths) and the catalog reader (column names).
package suggest

// MaxLen caps the runes compared: the distance is quadratic in the length,
// and a name longer than this is garbage, not a typo.
const MaxLen = 64

// Distance is the Levenshtein edit distance (insertions, deletions,
// substitutions) between a and b, counted in runes, each truncated to
// MaxLen runes.
func Distance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	ra, rb = ra[:min(len(ra), MaxLen)], rb[:min(len(rb), MaxLen)]
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

// Nearest returns the candidate closest to s by Distance after fold is
// applied to both (nil: compared as written), and that distance; ties go
// to the earlier candidate. It returns "" and -1 when there are no
// candidates.
func Nearest(s string, candidates []string, fold func(string) string) (string, int) {
	best, bestD := "", -1
	if fold != nil {
		s = fold(s)
	}
	for _, c := range candidates {
		fc := c
		if fold != nil {
			fc = fold(c)
		}
		if d := Distance(s, fc); bestD < 0 || d < bestD {
			best, bestD = c, d
		}
	}
	return best, bestD
}
