package stats

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestQuantileSortedDefinition7(t *testing.T) {
	// Source: Hyndman & Fan (1996), Am. Stat. 50, 361, definition 7
	// (NumPy's default): numpy.quantile([1, 2, 3, 4], [0.16, 0.5, 0.84])
	// = [1.48, 2.5, 3.52].
	x := []float64{1, 2, 3, 4}
	assert.InDelta(t, 1.48, QuantileSorted(x, 0.16), 1e-12)
	assert.InDelta(t, 2.5, QuantileSorted(x, 0.5), 1e-12)
	assert.InDelta(t, 3.52, QuantileSorted(x, 0.84), 1e-12)
	// The ends are the extreme order statistics.
	assert.Equal(t, 1.0, QuantileSorted(x, 0))
	assert.Equal(t, 4.0, QuantileSorted(x, 1))
	assert.Equal(t, 7.0, QuantileSorted([]float64{7}, 0.3))
	assert.True(t, math.IsNaN(QuantileSorted(nil, 0.5)))
}
