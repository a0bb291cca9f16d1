package grid

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestLinspace(t *testing.T) {
	// Common practice, no source: n evenly spaced values with both ends
	// exact, as numpy.linspace gives them.
	x := Linspace(math.Log10(0.3), 2, 61)
	assert.Len(t, x, 61)
	assert.Equal(t, math.Log10(0.3), x[0])
	assert.Equal(t, 2.0, x[60], "the last value is the upper end exactly, not lo+(hi−lo)")
	assert.InDelta(t, (2-math.Log10(0.3))/60, x[31]-x[30], 1e-15)
	assert.Equal(t, []float64{0, 0.25, 0.5, 0.75, 1}, Linspace(0, 1, 5))
}
