package suggest

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestDistance(t *testing.T) {
	// Source: Levenshtein (1966); the textbook example "kitten" →
	// "sitting" takes three edits (two substitutions, one insertion).
	assert.Equal(t, 3, Distance("kitten", "sitting"))
	assert.Equal(t, 0, Distance("", ""))
	assert.Equal(t, 4, Distance("", "abcd"))
	assert.Equal(t, 1, Distance("période", "periode"), "counted in runes, not bytes")
	long := strings.Repeat("a", 100)
	assert.Equal(t, 0, Distance(long, strings.Repeat("a", MaxLen)), "only the first MaxLen runes count")
}

func TestNearest(t *testing.T) {
	n, d := Nearest("seeed", []string{"chunk_stars", "seed", "stars_generated"}, nil)
	assert.Equal(t, "seed", n)
	assert.Equal(t, 1, d)
	n, d = Nearest("PROT", []string{"prot_d", "Prot"}, strings.ToLower)
	assert.Equal(t, "Prot", n, "folded before comparing; the candidate is returned as written")
	assert.Equal(t, 0, d)
	n, d = Nearest("x", nil, nil)
	assert.Equal(t, "", n)
	assert.Equal(t, -1, d)
	n, _ = Nearest("ab", []string{"ax", "xb"}, nil)
	assert.Equal(t, "ax", n, "ties go to the earlier candidate")
}
