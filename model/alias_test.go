package model

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// The table itself is internal/alias's (tested there against its weights);
// here, the weights a population hands it are checked first.
func TestAliasRefusesBadWeights(t *testing.T) {
	_, err := newAlias(nil)
	require.Error(t, err)
	_, err = newAlias([]float64{0, 0})
	require.ErrorContains(t, err, "all weights are zero")
	_, err = newAlias([]float64{1, math.NaN()})
	require.Error(t, err)
	_, err = newAlias([]float64{1, -2})
	require.Error(t, err)
	a, err := newAlias([]float64{0, 3, 0})
	require.NoError(t, err)
	r := ChunkStream(7, 0)
	for range 1000 {
		require.Equal(t, 1, a.draw(r), "only the one positive weight is drawn")
	}
}
