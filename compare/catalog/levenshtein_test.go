package catalog

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestClosestColumn(t *testing.T) {
	// Common practice, no source: the nearest column by edit distance,
	// checkable by hand (internal/suggest tests the distance itself).
	assert.Equal(t, "parallax", closest("Paralax", []string{"ra", "dec", "parallax", "period"}))
	assert.Equal(t, "", closest("x", nil))
}
