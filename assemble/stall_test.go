package assemble

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// lawOf builds example:base's law with the given --set overrides.
func lawOf(t *testing.T, sets ...string) (spin.Law, error) {
	t.Helper()
	ov, err := scenarios.ParseOverrides(sets)
	require.NoError(t, err)
	res, err := scenarios.Resolve("example:base", ov...)
	require.NoError(t, err)
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	return Law(&res.Scenario, rel)
}

// A stall can be switched on under an empirical law (the burst's own
// law, so that burst and stall differ in nothing else), and its keys move
// it; the torque law's other feature still belongs to the torque law.
func TestStallUnderEmpiricalLaw(t *testing.T) {
	law, err := lawOf(t, "spin.stall.enabled=true", "spin.stall.start_gyr_at_0p8msun=0.8", "spin.period_scatter_dex=0")
	require.NoError(t, err)
	g, ok := law.(spin.GyroLaw)
	require.True(t, ok, "example:base's law is Barnes (2007), got %T", law)
	assert.True(t, g.Stall.Enabled)
	assert.Equal(t, 0.8, g.Stall.StartGyrAtPivot)

	_, err = lawOf(t, "spin.weakened_braking.enabled=true")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "spin.weakened_braking")
	assert.Contains(t, err.Error(), `set spin.law = "torque"`)

	// The stall's keys are nuisance paths of the empirical law.
	assert.Contains(t, scenarios.NuisancePaths("barnes2007"), "spin.stall.start_gyr_at_0p8msun")
}

// The stall's tapers were chosen so that the torque law's slow sequence
// stays monotonic in mass (spin.TestStallKeepsSequenceMonotonic); on the
// empirical laws, along the relation table's dwarf sequence, the period
// must also never fall as B−V grows, at any age through the pause and the
// catch-up.
func TestStallKeepsEmpiricalSequenceMonotonic(t *testing.T) {
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	for _, law := range []spin.GyroLaw{spin.Barnes2007(), spin.MamajekHillenbrand2008(), spin.Angus2015()} {
		g := law
		g.Stall = spin.DefaultStallOptions()
		g.Stall.Enabled = true
		for age := 0.5; age <= 1.3; age += 0.01 {
			prev := 0.0
			n := 0
			for m := 1.3; m >= 0.4; m -= 0.002 {
				pt, ok := rel.At(m)
				if !ok {
					continue
				}
				p, ok := g.Period(spin.Star{MassMsun: m, AgeGyr: age, BV: pt.BV}, nil)
				if !ok {
					continue
				}
				n++
				require.GreaterOrEqual(t, p, prev*(1-1e-12), "%s at %.2f Gyr: %.3f M☉ (B−V %.3f) below a bluer star", g.LawName, age, m, pt.BV)
				prev = p
			}
			require.Greater(t, n, 100, "%s: stars in range", g.LawName)
		}
	}
}
