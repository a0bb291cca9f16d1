package compare

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The young fraction falls with height above the plane, and the true
// history scores better than a wrong one.
// Source: Spitzer (1942), ApJ 95, 329 — an isothermal tracer of lower
// vertical dispersion is more concentrated to the plane; young stars are
// colder (disk heating), so their share must fall with |z|.
func TestHeightCheck(t *testing.T) {
	truth := piecewiseHistory(t, []float64{3, 3, 1, 1, 1, 1, 1, 1, 1})
	world := newTestWorld(t, truth, tplEdges)
	// The field reaches |z| ≈ 330 pc: bins up to 400 pc.
	sp, err := NewSpace(0.45, 1.6, 8, 1, 60, 10, []float64{0, 60, 120, 200, 400})
	require.NoError(t, err)
	tpl, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), tplEdges, sp, TemplateOptions{Stars: 400_000, Seed: 4, ChunkStars: 16384})
	require.NoError(t, err)
	wTrue := truth.BinWeights(tplEdges)
	wOld := piecewiseHistory(t, []float64{0.01, 0.01, 1, 1, 1, 1, 1, 1, 1}).BinWeights(tplEdges)
	// Data: a Poisson draw of 20,000 stars from the truth.
	obs := &Observed{Counts: poissonData(tpl, wTrue, 20000/tpl.totalStars(wTrue), 8)}
	gyro := func(bv float64) (float64, bool) {
		return world.law.(interface {
			PeriodAt(bv, ageGyr float64) (float64, bool)
		}).PeriodAt(bv, 0.6)
	}
	res, err := HeightCheck(tpl, obs, 0.6, gyro, map[string][]float64{"truth": wTrue, "old": wOld})
	require.NoError(t, err)
	require.Len(t, res.Hypotheses, 2)
	assert.Equal(t, "old", res.Hypotheses[0].Name)
	t.Logf("young fraction by |z| %v: %.3f; truth predicts %.3f; old predicts %.3f", res.ZEdgesPc, res.Fraction, res.Hypotheses[1].Fraction, res.Hypotheses[0].Fraction)
	for z := range res.Fraction {
		assert.InDelta(t, float64(res.Young[z])/float64(res.Total[z]), res.Fraction[z], 1e-12)
		assert.LessOrEqual(t, res.Lo68[z], res.Fraction[z])
		assert.GreaterOrEqual(t, res.Hi68[z], res.Fraction[z])
	}
	assert.Greater(t, res.Fraction[0], res.Fraction[len(res.Fraction)-1], "the young fraction must fall with height")
	for z := 1; z < len(res.Fraction); z++ {
		assert.Less(t, res.Hypotheses[1].Fraction[z], res.Hypotheses[1].Fraction[z-1])
	}
	assert.Greater(t, res.Hypotheses[1].LogL, res.Hypotheses[0].LogL)
	assert.False(t, math.IsInf(res.Hypotheses[1].LogL, 0))

	_, err = HeightCheck(tpl.Collapse2D(), &Observed{Counts: make([]float64, 80)}, 0.6, gyro, nil)
	assert.ErrorContains(t, err, "two |z| bins")
}
