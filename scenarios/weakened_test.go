package scenarios

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
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
	for _, turn := range spin.TurnoverNames() {
		s := res.Scenario
		s.Spin.Turnover = turn
		rel, err := model.DwarfSequence()
		require.NoError(t, err)
		law, err := BuildLaw(&s, rel)
		require.NoError(t, err)
		tl := law.(*spin.TorqueLaw)
		assert.Equal(t, 1.05, tl.Options().RoCritOverSolar, turn)
		// Whatever the turnover scale, a solar twin freezes at 1.05 P☉.
		p, ok := tl.PeriodAt(1, 9, 0.5)
		require.True(t, ok)
		assert.InDelta(t, 1.05*25.4, p, 1e-9, turn)
	}
}
