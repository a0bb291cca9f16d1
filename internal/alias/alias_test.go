package alias

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// Both ways of drawing from the table reproduce the weights: a χ²
// goodness-of-fit test (Pearson 1900) with 4 degrees of freedom; the 0.999
// quantile of χ²₄ is 18.47 (standard statistical tables).
func TestTablesReproduceWeights(t *testing.T) {
	w := []float64{0.5, 3, 0, 1.5, 5}
	tab := New(w)
	packed := make([]Entry, len(w))
	BuildPacked(w, packed)
	r := rand.New(rand.NewPCG(7, 11))
	const n = 200000
	for name, draw := range map[string]func() int{
		"Draw": func() int { return tab.Draw(r.Float64()) },
		"Pick": func() int { return Pick(r.Uint64(), packed) },
	} {
		counts := make([]float64, len(w))
		for range n {
			counts[draw()]++
		}
		require.Zero(t, counts[2], "%s: a zero weight is never drawn", name)
		chi2 := 0.0
		for i, x := range w {
			if x == 0 {
				continue
			}
			e := n * x / 10
			chi2 += (counts[i] - e) * (counts[i] - e) / e
		}
		require.Less(t, chi2, 18.47, name)
	}
}
