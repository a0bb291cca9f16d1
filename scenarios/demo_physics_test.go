package scenarios

import (
	"context"
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"

	"spinpop/model"
)

// Common practice, no source (a fact of the trade): the gap in field-star
// rotation periods sits near the ~600 Myr gyrochrone, which for K dwarfs
// falls at roughly 10–20 days. The demo's burst population (0.6 Gyr) of
// B−V 0.9–1.2 catalogue stars must land there.
func TestDemoBurstKDwarfsNearSixHundredMyrGyrochrone(t *testing.T) {
	res, err := LoadExample("burst")
	require.NoError(t, err)
	b, err := Build(&res.Scenario)
	require.NoError(t, err)
	var periods []float64
	err = model.RunChunks(context.Background(), 3, 300000, 16384, 2, b.Population.Fill, func(c *model.Chunk) error {
		for i := 0; i < c.N; i++ {
			if c.Flags[i].Selected() && math.Abs(c.AgeGyr[i]-0.6) < 0.05 && c.BV[i] >= 0.9 && c.BV[i] <= 1.2 && c.CompanionMsun[i] == 0 {
				periods = append(periods, c.MeasPeriodD[i])
			}
		}
		return nil
	})
	require.NoError(t, err)
	require.Greater(t, len(periods), 100, "the burst puts K dwarfs in the catalogue")
	sort.Float64s(periods)
	med := periods[len(periods)/2]
	require.GreaterOrEqual(t, med, 10.0)
	require.LessOrEqual(t, med, 20.0)
	// Most of them, not only the median (aliases and scatter aside).
	in := 0
	for _, p := range periods {
		if p >= 10 && p <= 20 {
			in++
		}
	}
	require.Greater(t, float64(in)/float64(len(periods)), 0.8)
}
