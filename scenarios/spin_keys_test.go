package scenarios

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spin"
)

// The old absolute threshold ro_crit is refused with what to write
// instead, naming the file and line; the new key is a multiple of Ro☉.
func TestWeakenedBrakingKeys(t *testing.T) {
	_, err := LoadBytes("x.toml", []byte(minimal+"[spin.weakened_braking]\nenabled = true\nro_crit = 2.0\n"), nil)
	require.Error(t, err)
	for _, want := range []string{"x.toml:8:", "ro_crit", "no longer read", "ro_crit_over_solar", "wright2018", "cranmer-saar2011"} {
		assert.Contains(t, err.Error(), want)
	}

	_, err = LoadBytes("x.toml", []byte(minimal+"[spin.weakened_braking]\nenabled = true\nro_crit_over_solar = 0.8\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "spin.weakened_braking.ro_crit_over_solar")

	res, err := LoadBytes("x.toml", []byte(minimal+"[spin]\nlaw = \"torque\"\n[spin.weakened_braking]\nenabled = true\nro_crit_over_solar = 1.05\n"), nil)
	require.NoError(t, err)
	spec, ok := spin.Lookup("torque")
	require.True(t, ok)
	for _, name := range spin.TurnoverNames() {
		turn, err := spin.TurnoverByName(name)
		require.NoError(t, err)
		// A toy T_eff(M), only for the Cranmer & Saar turnover.
		teff := func(m float64) float64 { return 5772 * math.Pow(m, 0.55) }
		law, err := spec.New(res.Scenario.Spin.Options, spin.Env{Turnover: turn, TeffOfMass: teff})
		require.NoError(t, err)
		tl := law.(*spin.TorqueLaw)
		assert.Equal(t, 1.05, tl.Options().RoCritOverSolar, name)
		// Whatever the turnover scale, a solar twin freezes at 1.05 P☉.
		p, ok := tl.PeriodAt(1, 9, 0.5)
		require.True(t, ok)
		assert.InDelta(t, 1.05*25.4, p, 1e-9, name)
	}
}

// The stall's masses must rise in order; a misordered one is named.
func TestStallMassKeys(t *testing.T) {
	_, err := LoadBytes("x.toml", []byte(minimal+"[spin]\nlaw = \"torque\"\n[spin.stall]\nenabled = true\nfull_mass_max_msun = 0.55\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "spin.stall.full_mass_max_msun")
	assert.Contains(t, err.Error(), "empty full-strength mass range")
	_, err = LoadBytes("x.toml", []byte(minimal+"[spin]\nlaw = \"torque\"\n[spin.stall]\nenabled = true\nmass_max_msun = 0.7\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "spin.stall.mass_max_msun")
	res, err := LoadExample("stall")
	require.NoError(t, err)
	o := res.Scenario.Spin.Options
	assert.Equal(t, []float64{0.5, 0.6, 0.75, 1.1}, []float64{o.Float("stall", "mass_min_msun"), o.Float("stall", "full_mass_min_msun"),
		o.Float("stall", "full_mass_max_msun"), o.Float("stall", "mass_max_msun")})
}
