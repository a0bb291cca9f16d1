package catalog

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestLevenshtein(t *testing.T) {
	// Common practice, no source: textbook edit distances, checkable by hand.
	assert.Equal(t, 3, levenshtein("kitten", "sitting"))
	assert.Equal(t, 0, levenshtein("plx", "plx"))
	assert.Equal(t, 3, levenshtein("", "abc"))
	assert.Equal(t, 1, levenshtein("paralax", "parallax"))
	assert.Equal(t, 1, levenshtein("ñu", "nu"), "runes, not bytes")
	assert.Equal(t, "parallax", closest("Paralax", []string{"ra", "dec", "parallax", "period"}))
	assert.Equal(t, "", closest("x", nil))
}
