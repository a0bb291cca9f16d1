package spin

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The log form must be the law: a solar twin under Barnes (2007) has
// ln P = ln 26.62 d (the worked value of TestGyroSolarTwin, by hand), and
// for every star, with and without scatter, LnPeriod is ln of Period with
// the same draws from the same stream.
func TestLogFormIsTheLaw(t *testing.T) {
	f, ok := LogFormOf(Barnes2007())
	require.True(t, ok)
	lnP, ok := f.LnPeriod(Star{BV: 0.65, AgeGyr: 4.57}, nil)
	require.True(t, ok)
	// Source: Barnes (2007), ApJ 669, 1167; 26.62 d by hand (gyro_test.go).
	assert.InDelta(t, math.Log(26.62), lnP, 0.01)

	laws := map[string]Law{
		"bare":           Barnes2007(),
		"scattered":      Scattered{Law: MamajekHillenbrand2008(), Dex: 0.08},
		"scaled+scatter": Scattered{Law: Angus2015(), Dex: 0.15, Scale: 1.3},
		"stalled":        Scattered{Law: stalledBarnes(0), Dex: 0.08},
	}
	for name, law := range laws {
		t.Run(name, func(t *testing.T) {
			f, ok := LogFormOf(law)
			require.True(t, ok)
			ra, rb := rand.New(rand.NewPCG(7, 1)), rand.New(rand.NewPCG(7, 1))
			for i := range 2000 {
				// Colors and ages from inside and outside every law's range.
				// Masses across the stall's (0.5–1.1 M☉).
				s := Star{BV: 0.3 + 1.5*float64(i%97)/96, AgeGyr: 0.05 + 14*float64(i%89)/88, MassMsun: 0.45 + 0.7*float64(i%83)/82}
				p, okP := law.Period(s, ra)
				lnP, okL := f.LnPeriod(s, rb)
				require.Equal(t, okP, okL, "star %+v", s)
				if okP {
					assert.InDelta(t, math.Log(p), lnP, 1e-12, "star %+v", s)
				} else {
					assert.True(t, math.IsNaN(lnP))
				}
			}
			// The same draws: the streams are still in step.
			assert.Equal(t, ra.Uint64(), rb.Uint64())
		})
	}
}

// A law without a closed log form says so, and the population takes the
// log of its period.
func TestLogFormRefused(t *testing.T) {
	torque, err := NewTorqueLaw(DefaultTorqueOptions())
	require.NoError(t, err)
	_, ok := LogFormOf(torque)
	assert.False(t, ok)
	_, ok = LogFormOf(Scattered{Law: torque, Dex: 0.1})
	assert.False(t, ok)
}
