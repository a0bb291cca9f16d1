package othermodel

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The law's age by hand from the definition in Stall's comment:
// τ = t − h·min(max(t − 0.6, 0), 0.5), h = 1 on 0.95–1.30, linear to 0
// over 0.15 mag beyond.
func TestStallLawAge(t *testing.T) {
	s := KDwarfStall()
	for _, c := range []struct{ bv, age, want float64 }{
		{1.10, 0.40, 0.40},  // before the pause
		{1.10, 0.90, 0.60},  // inside it: held at the start
		{1.10, 1.10, 0.60},  // at its end
		{1.10, 3.00, 2.50},  // after: half a Gyr behind for good
		{0.80, 3.00, 3.00},  // a G dwarf beyond the taper never pauses
		{0.875, 3.00, 2.75}, // halfway down the blue taper: h = 0.5
		{1.375, 0.80, 0.70}, // halfway down the red taper, inside the pause
		{1.50, 3.00, 3.00},  // beyond the red taper
	} {
		assert.InDelta(t, c.want, s.LawAgeGyr(c.bv, c.age), 1e-12, "B−V %g, %g Gyr", c.bv, c.age)
	}
}

// With the stall, the catalog's K dwarfs follow the law at the stalled
// age (the intrinsic scatter about it as without a stall) and lie below
// the law at their true age; the G dwarfs are untouched.
func TestStallReachesTheCatalog(t *testing.T) {
	cfg := smallConfig(3000)
	st := KDwarfStall()
	cfg.Stall = &st
	stars, _, err := Generate(cfg, 11)
	require.NoError(t, err)
	var devStalled, devTrue, devG []float64
	for _, s := range stars {
		bv := DwarfOfMass(s.MassMsun).BV
		law, ok := cfg.Gyro.PeriodD(bv, st.LawAgeGyr(bv, s.AgeGyr)*1000)
		require.True(t, ok)
		plain, _ := cfg.Gyro.PeriodD(bv, s.AgeGyr*1000)
		switch {
		case bv >= st.FullMinBV && bv <= st.FullMaxBV && s.AgeGyr > st.StartGyr+0.2 && s.AgeGyr < 2:
			devStalled = append(devStalled, math.Log10(s.TruePeriodD/law))
			devTrue = append(devTrue, math.Log10(s.TruePeriodD/plain))
		case bv < st.FullMinBV-st.TaperMag:
			devG = append(devG, math.Log10(s.TruePeriodD/plain))
		}
	}
	require.Greater(t, len(devStalled), 100)
	require.Greater(t, len(devG), 100)
	mean, sd := meanSD(devStalled)
	t.Logf("%d stalled stars: %.4f ± %.4f dex about the stalled law, %.4f about the plain one; %d G dwarfs", len(devStalled), mean, sd, func() float64 { m, _ := meanSD(devTrue); return m }(), len(devG))
	assert.InDelta(t, 0, mean, 0.02)
	assert.InDelta(t, cfg.PeriodScatterDex, sd, 0.015)
	// Held at 0.6 Gyr or 0.5 Gyr behind, at true ages of 0.8–2 Gyr: periods
	// shorter than the plain law's by n·log10(t/τ) dex, 0.028–0.14 for
	// n = 0.5189, so the mean against the true age sits far below.
	meanTrue, _ := meanSD(devTrue)
	assert.Less(t, meanTrue, -0.035)
	meanG, _ := meanSD(devG)
	assert.InDelta(t, 0, meanG, 0.04)
}

func TestStallValidated(t *testing.T) {
	cfg := DefaultConfig()
	cfg.Stall = &Stall{StartGyr: 0.6, DurationGyr: 0.5, FullMinBV: 1.3, FullMaxBV: 0.95}
	_, _, err := Generate(cfg, 1)
	assert.ErrorContains(t, err, "FullMinBV ≤ FullMaxBV")
	cfg.Stall = &Stall{StartGyr: 0, DurationGyr: 0.5}
	_, _, err = Generate(cfg, 1)
	assert.ErrorContains(t, err, "StartGyr > 0")
}
