package model

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// Common practice, no source: τ_MS = 10 Gyr (M/M☉)^−2.5.
func TestMSLifetimeGyr(t *testing.T) {
	assert.InDelta(t, 10, MSLifetimeGyr(1), 1e-12)
	assert.InEpsilon(t, 10*math.Pow(2, -2.5), MSLifetimeGyr(2), 1e-12)
	assert.InEpsilon(t, 10*math.Pow(0.8, -2.5), MSLifetimeGyr(0.8), 1e-12)
	assert.True(t, math.IsInf(MSLifetimeGyr(0), 1))
	assert.True(t, math.IsInf(MSLifetimeGyr(math.NaN()), 1))
}

// The crude subgiant model: nothing on the main sequence, linear
// brightening to 1.75 mag over 15 % of τ, gone past 1.2 τ. Common practice,
// no source: the published tracks brighten ~1.5–2 mag across the subgiant
// branch [memory].
func TestEvolvedBrightening(t *testing.T) {
	const m = 1.2
	tau := MSLifetimeGyr(m)
	cases := []struct {
		age   float64
		dMag  float64
		gone  bool
		label string
	}{
		{0.5 * tau, 0, false, "main sequence"},
		{tau, 0, false, "end of the main sequence"},
		{1.075 * tau, 0.875, false, "half way across the subgiant branch"},
		{1.15 * tau, 1.75, false, "end of the subgiant branch"},
		{1.19 * tau, 1.75, false, "base of the giant branch"},
		{1.21 * tau, 1.75, true, "giant or remnant"},
		{100 * tau, 1.75, true, "long dead"},
	}
	for _, c := range cases {
		d, gone := EvolvedBrightening(m, c.age)
		assert.InDelta(t, c.dMag, d, 1e-9, c.label)
		assert.Equal(t, c.gone, gone, c.label)
	}
	prev := 0.0
	for x := 0.9; x < 1.2; x += 0.001 {
		d, _ := EvolvedBrightening(m, x*tau)
		assert.GreaterOrEqual(t, d, prev, "brightening never fades at %g τ", x)
		assert.LessOrEqual(t, d, 2.0)
		prev = d
	}
	// A 0.8 M☉ star is still a dwarf at 13.8 Gyr (τ ≈ 17.5 Gyr).
	d, gone := EvolvedBrightening(0.8, 13.8)
	assert.Zero(t, d)
	assert.False(t, gone)
}
