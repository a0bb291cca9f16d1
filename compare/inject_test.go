package compare

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Injection–recovery on a demo-like setup: 40 age bins, 23 colors × 30
// periods of gyrochrone templates (Barnes 2007 law), 30,000-star mocks. A
// 20 % burst at 0.6 Gyr must be recovered within ±0.1 Gyr and detected at
// p < 0.01 in every mock; smooth-history mocks may reach p < 0.05 in about
// 5 % of cases. Tolerance: with 60 false-alarm mocks the count is
// Binomial(60, 0.05), mean 3; more than 8 has probability < 0.3 %.
// Common practice, no source: the thresholds are the issue's.
func TestInjectionRecovery(t *testing.T) {
	edges := demoEdges()
	tpl := gyroTemplates(t, edges, 23, 30, 1e5, 0.04)
	smooth, burst := demoModels(t, edges)
	sweep := InjectionSweep{
		BurstAgesGyr:   []float64{0.6},
		BurstFractions: []float64{0.2},
		Replicates:     60,
		NStars:         30000,
		Seed:           3,
		Workers:        2,
		NullMocks:      200,
	}
	res, err := InjectRecover(context.Background(), tpl, LikeOptions{TemplateNoise: NoiseIgnore}, smooth, burst, sweep)
	require.NoError(t, err)
	require.Len(t, res.Cells, 1)
	c := res.Cells[0]
	for i, a := range c.RecoveredAgesGyr {
		assert.InDelta(t, 0.6, a, 0.1, "mock %d", i)
	}
	assert.Equal(t, sweep.Replicates, c.Detected, "p-values %v", c.PValues)
	t.Logf("median age %.4f, coverage68 %.2f, false alarms %.3f [%.3f, %.3f]", c.MedianAgeGyr, c.Coverage68, res.FalseAlarmRate, res.FALo68, res.FAHi68)
	assert.LessOrEqual(t, res.FalseAlarmRate*float64(sweep.Replicates), 8.0)
	// The 68 % interval covers the truth in roughly 68 % of mocks:
	// Binomial(60, 0.68) lies in [0.5, 0.85] with probability > 99 %.
	assert.InDelta(t, 0.68, c.Coverage68, 0.18)
	assert.Len(t, res.NullLRs, 200)
	assert.False(t, math.IsNaN(c.MedianAgeGyr))
}
