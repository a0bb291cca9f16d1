package model

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// The alias table must reproduce its weights: a χ² goodness-of-fit test
// (Pearson 1900) with 4 degrees of freedom; the 0.999 quantile of χ²₄ is
// 18.47 (standard statistical tables).
func TestAliasReproducesWeights(t *testing.T) {
	w := []float64{0.5, 3, 0, 1.5, 5}
	a, err := newAlias(w)
	require.NoError(t, err)
	r := ChunkStream(7, 0)
	const n = 200000
	counts := make([]float64, len(w))
	for range n {
		counts[a.draw(r)]++
	}
	require.Zero(t, counts[2], "a zero weight is never drawn")
	chi2 := 0.0
	for i, x := range w {
		if x == 0 {
			continue
		}
		e := n * x / 10
		chi2 += (counts[i] - e) * (counts[i] - e) / e
	}
	require.Less(t, chi2, 18.47)
	_, err = newAlias([]float64{0, 0})
	require.Error(t, err)
	_, err = newAlias([]float64{1, math.NaN()})
	require.Error(t, err)
}
