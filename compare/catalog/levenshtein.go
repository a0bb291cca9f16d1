package catalog

import (
	"strconv"
	"strings"
)

// levenshtein returns the edit distance (insertions, deletions,
// substitutions) between a and b, compared rune by rune.
func levenshtein(a, b string) int {
	ra := []rune(a)
	rb := []rune(b)
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

// closest returns the candidate nearest to name by case-insensitive edit
// distance (the first one on ties), or "" if there are no candidates.
func closest(name string, candidates []string) string {
	best, bestD := "", -1
	ln := strings.ToLower(name)
	for _, c := range candidates {
		d := levenshtein(ln, strings.ToLower(c))
		if bestD < 0 || d < bestD {
			best, bestD = c, d
		}
	}
	return best
}

// listColumns formats column names for an error message, eliding the
// middle of very wide tables.
func listColumns(names []string) string {
	const maxShown = 40
	quoted := make([]string, 0, min(len(names), maxShown))
	for i, n := range names {
		if i == maxShown {
			break
		}
		quoted = append(quoted, `"`+n+`"`)
	}
	s := strings.Join(quoted, ", ")
	if len(names) > maxShown {
		s += ", … (" + strconv.Itoa(len(names)-maxShown) + " more)"
	}
	return s
}
