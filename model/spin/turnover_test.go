package spin

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestTurnoverSolarValues(t *testing.T) {
	// Source: Cranmer & Saar (2011), ApJ 741, 54, formula as recalled in
	// DESIGN.md. Evaluated by hand at 5772 K: T/1952.5 = 2.9562,
	// (T/6250)^18 = 0.2388, 314.24 e^−3.1950 + 0.002 = 12.88 d — the
	// brief's "≈ 12.9 d" holds.
	tau, ok := CranmerSaar2011.Days(Star{TeffK: 5772})
	require.True(t, ok)
	assert.InDelta(t, 12.88, tau, 0.01)

	// From memory of Wright et al. (2018), MNRAS 479, 2351:
	// log τ = 2.33 − 1.50 + 0.31 = 1.14 ⇒ 13.8 d at 1 M☉.
	tau, ok = Wright2018.Days(Star{MassMsun: 1})
	require.True(t, ok)
	assert.InDelta(t, 13.8, tau, 0.05)
	assert.InDelta(t, tau, Wright2018.Solar(), 1e-12)

	// From memory of van Saders et al. (2016), Nature 529, 181: the Sun's
	// Rossby number in the Cranmer–Saar scale is ≈ 2; tolerance reflects that.
	ro, ok := CranmerSaar2011.Rossby(25.4, Star{TeffK: 5772})
	require.True(t, ok)
	assert.InDelta(t, 2.0, ro, 0.1)
}

func TestTurnoverGrowsTowardCoolStars(t *testing.T) {
	prev := math.Inf(1)
	for teff := csMinTeffK; teff <= csMaxTeffK; teff += 100 {
		tau, ok := CranmerSaar2011.Days(Star{TeffK: teff})
		require.True(t, ok)
		assert.Less(t, tau, prev, "τ_c must fall with T_eff (%g K)", teff)
		prev = tau
	}
	prev = math.Inf(1)
	for m := wrightMinMsun; m <= wrightMaxMsun; m += 0.02 {
		tau, ok := Wright2018.Days(Star{MassMsun: m})
		require.True(t, ok)
		assert.Less(t, tau, prev, "τ_c must fall with mass (%g M☉)", m)
		prev = tau
	}
}

func TestTurnoverRangesAndNames(t *testing.T) {
	for _, s := range []Star{{TeffK: 3000}, {TeffK: 7500}, {}} {
		_, ok := CranmerSaar2011.Days(s)
		assert.False(t, ok, "%+v", s)
	}
	for _, s := range []Star{{MassMsun: 0.05}, {MassMsun: 1.5}, {MassMsun: math.NaN()}} {
		_, ok := Wright2018.Days(s)
		assert.False(t, ok, "%+v", s)
	}
	_, ok := Wright2018.Rossby(-1, Star{MassMsun: 1})
	assert.False(t, ok, "negative period")
	_, ok = TurnoverTime(0).Days(Star{MassMsun: 1, TeffK: 5772})
	assert.False(t, ok, "unset prescription")

	for _, name := range TurnoverNames() {
		tt, err := TurnoverByName(name)
		require.NoError(t, err)
		assert.Equal(t, name, tt.Name())
	}
	_, err := TurnoverByName("noyes1984")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "wright2018")
}
