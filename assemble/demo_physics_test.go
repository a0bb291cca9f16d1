package assemble

import (
	"context"
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/scenarios"
)

// Common practice, no source (a fact of the trade): the gap in field-star
// rotation periods sits near the ~600 Myr gyrochrone, which for K dwarfs
// falls at roughly 10–20 days. The demo's burst population (0.6 Gyr) of
// B−V 0.9–1.2 catalog stars must land there.
func TestDemoBurstKDwarfsNearSixHundredMyrGyrochrone(t *testing.T) {
	res, err := scenarios.LoadExample("burst")
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
	require.Greater(t, len(periods), 100, "the burst puts K dwarfs in the catalog")
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

// Spots fade as stars spin down, so a survey misses most old, slow
// rotators (common practice, no source: detection fractions of field
// rotation surveys fall with age and period). With the examples' spot and
// noise parameters the model must show that: most stars older than 5 Gyr
// that pass the catalog's photometric cuts have no detected period,
// while most stars of 0.1–1 Gyr do.
func TestExampleMissesMostOldSlowStars(t *testing.T) {
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	b, err := Build(&res.Scenario)
	require.NoError(t, err)
	var oldN, oldDet, youngN, youngDet int
	const eligible = model.FlagInMagRange | model.FlagInColorRange | model.FlagOnMainSeq
	err = model.RunChunks(context.Background(), 5, 300000, 16384, 2, b.Population.Fill, func(c *model.Chunk) error {
		for i := 0; i < c.N; i++ {
			f := c.Flags[i]
			if f&eligible != eligible || f&model.FlagOutsideLaw != 0 {
				continue
			}
			det := f&model.FlagDetected != 0
			switch a := c.AgeGyr[i]; {
			case a > 5:
				oldN++
				if det {
					oldDet++
				}
			case a > 0.1 && a < 1:
				youngN++
				if det {
					youngDet++
				}
			}
		}
		return nil
	})
	require.NoError(t, err)
	require.Greater(t, oldN, 1000)
	require.Greater(t, youngN, 200)
	require.Less(t, float64(oldDet)/float64(oldN), 0.5, "most old stars undetected")
	require.Greater(t, float64(youngDet)/float64(youngN), 0.8, "most young stars detected")
}

// The stall example must open a gap in the period–color plane without a
// burst (the "new phase of spin-down" alternative): among single K
// dwarfs (B−V 1.0–1.3, 0.64–0.77 M☉) the stalled stars pile up at 11–14 d
// and the fast catch-up that follows leaves 14.5–18 d sparse, while the
// same scenario with the stall switched off has more stars per log-period
// interval at 14.5–18 d than at 11–14 d. Common practice, no source: the
// observed gap sits near the ~600 Myr gyrochrone, 10–20 d for K dwarfs.
// (The windows were 10–14 d and 14–18 d for the earlier stall, which
// paused these stars from 0.4–0.75 Gyr on; the stall of issue 9 holds them
// from 0.65 Gyr, at their 12–14.5 d periods of that age, so the pile sits
// higher and the gap begins above 14.5 d.)
func TestStallOpensGapWithoutBurst(t *testing.T) {
	counts := func(stall bool) (pile, gap int) {
		res, err := scenarios.LoadExample("stall")
		require.NoError(t, err)
		require.Len(t, res.Scenario.History.Parts, 2, "no burst in the stall example")
		res.Scenario.Spin.Options.Set("stall", "enabled", stall)
		b, err := Build(&res.Scenario)
		require.NoError(t, err)
		err = model.RunChunks(context.Background(), 11, 1_000_000, 32768, 2, b.Population.Fill, func(c *model.Chunk) error {
			for i := 0; i < c.N; i++ {
				if !c.Flags[i].Selected() || c.CompanionMsun[i] > 0 || c.ObsBV[i] < 1.0 || c.ObsBV[i] > 1.3 {
					continue
				}
				switch p := c.MeasPeriodD[i]; {
				case p >= 11 && p < 14:
					pile++
				case p >= 14.5 && p < 18:
					gap++
				}
			}
			return nil
		})
		require.NoError(t, err)
		return pile, gap
	}
	// Per unit log period: the two windows are log10(14/11) and log10(18/14.5) wide.
	density := func(pile, gap int) (float64, float64) {
		return float64(pile) / math.Log10(14.0/11), float64(gap) / math.Log10(18/14.5)
	}
	p1, g1 := counts(true)
	require.Greater(t, p1, 150)
	dp, dg := density(p1, g1)
	withStall := dg / dp
	t.Logf("stall: pile %d, gap %d, gap/pile density %.3f", p1, g1, withStall)
	assert.Less(t, withStall, 0.8, "stall: a sparse band above the pile-up (pile %d, gap %d)", p1, g1)
	p0, g0 := counts(false)
	dp, dg = density(p0, g0)
	t.Logf("no stall: pile %d, gap %d, gap/pile density %.3f", p0, g0, dg/dp)
	assert.Greater(t, dg/dp, 1.0, "no stall: no gap (%d, %d)", p0, g0)
	// The gap is the stall's doing: it lowers the density ratio by more
	// than half. (Measured: 0.75 against 2.2 in the high-latitude field of
	// issue 11, whose older mix fills the gap more than the earlier
	// low-latitude field did, where the first bound was 0.7.)
	assert.Less(t, withStall, 0.5*dg/dp, "the stall empties the band")
}
