package catalog

import (
	"strconv"
	"strings"

	"spinpop/internal/suggest"
)

// closest returns the candidate nearest to name by case-insensitive edit
// distance (the first one on ties), or "" if there are no candidates.
func closest(name string, candidates []string) string {
	best, _ := suggest.Nearest(name, candidates, strings.ToLower)
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
