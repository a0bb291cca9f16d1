package spin

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// stalledBarnes is Barnes (2007) with the default stall switched on and
// the given catch-up fraction.
func stalledBarnes(catchUp float64) GyroLaw {
	g := Barnes2007()
	g.Stall = DefaultStallOptions()
	g.Stall.Enabled = true
	g.Stall.CatchUpFraction = catchUp
	return g
}

// The stall on an empirical law is the torque law's pause on the
// relation: what is observed [memory; see StallOptions] is K dwarfs of
// about 1 Gyr at the periods of those of about 0.65 Gyr while G dwarfs
// spin down. The default window is 0.65–1 Gyr; a star of full strength
// (0.6–0.75 M☉) holds its period exactly, one beyond the taper (1.1 M☉
// up) follows the relation, and after the catch-up (a quarter of the
// pause) every star is back on it.
func TestStallOnEmpiricalLaw(t *testing.T) {
	g := stalledBarnes(0.25)
	require.NoError(t, g.Validate())
	plain := Barnes2007()
	period := func(l GyroLaw, m, bv, age float64) float64 {
		p, ok := l.Period(Star{MassMsun: m, BV: bv, AgeGyr: age}, nil)
		require.True(t, ok)
		return p
	}
	for _, m := range []float64{0.6, 0.7, 0.75} {
		bv := 1.2
		assert.InDelta(t, period(plain, m, bv, 0.65), period(g, m, bv, 1.0), 1e-12, "%g M☉ held from 0.65 to 1 Gyr", m)
		assert.InDelta(t, period(plain, m, bv, 0.65), period(g, m, bv, 0.8), 1e-12, "%g M☉ inside the pause", m)
		assert.InDelta(t, period(plain, m, bv, 1.2), period(g, m, bv, 1.2), 1e-12, "%g M☉ after the catch-up (1.0875 Gyr)", m)
		// Half way through the catch-up it has won back half the time.
		assert.InDelta(t, period(plain, m, bv, 1.04375-0.175), period(g, m, bv, 1.04375), 1e-12, "%g M☉ catching up", m)
	}
	assert.InDelta(t, period(plain, 1.15, 0.55, 0.9), period(g, 1.15, 0.55, 0.9), 1e-12, "a G dwarf beyond the taper spins down")
	// The calibrated range still applies to the true age.
	_, ok := g.Period(Star{MassMsun: 0.7, BV: 1.2, AgeGyr: 0.05}, nil)
	assert.False(t, ok)

	// Without a catch-up the star stays behind by the pause for good.
	g0 := stalledBarnes(0)
	assert.InDelta(t, period(plain, 0.7, 1.2, 4.57-0.35), period(g0, 0.7, 1.2, 4.57), 1e-12)

	// A stall that cannot be is refused with the law.
	bad := stalledBarnes(0)
	bad.Stall.FullMinMsun = 0.9
	assert.ErrorContains(t, bad.Validate(), "stall masses")
}

// The empirical laws read [spin.stall] from the options, switched off by
// default; the torque law still does.
func TestEmpiricalLawsBorrowTheStall(t *testing.T) {
	spec, ok := Lookup("barnes2007")
	require.True(t, ok)
	assert.Equal(t, []string{"stall"}, spec.Borrows)
	var names []string
	for _, tb := range spec.ReadTables() {
		names = append(names, tb.Name)
	}
	assert.Equal(t, []string{"barnes2007", "stall"}, names)
	l, err := spec.New(stallOn{}, Env{Turnover: Wright2018})
	require.NoError(t, err)
	g := l.(GyroLaw)
	assert.True(t, g.Stall.Enabled)
	assert.Equal(t, 0.65, g.Stall.StartGyrAtPivot)
	l, err = spec.New(Defaults{}, Env{Turnover: Wright2018})
	require.NoError(t, err)
	assert.False(t, l.(GyroLaw).Stall.Enabled)
}

// stallOn is the default options with [spin.stall] switched on.
type stallOn struct{ Defaults }

func (o stallOn) Bool(table, key string) bool {
	if table == "stall" && key == "enabled" {
		return true
	}
	return o.Defaults.Bool(table, key)
}
