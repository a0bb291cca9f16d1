package spin

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

// The calibration error of a gyrochronological age, checked two ways:
// against the first-order propagation worked by hand for Barnes (2007) at
// B−V = 0.8 and 0.833 Gyr (a ± 0.011, b ± 0.024, c ± 0.02, n ± 0.0070:
// terms 0.02744, 0.04238, 0.05791, 0.09072 → 0.1189), and against
// numerical derivatives of the law itself (the age that keeps the period
// fixed when one coefficient moves by ±1σ), which share no code with the
// closed form.
func TestAgeCalibrationBarnes(t *testing.T) {
	g := Barnes2007()
	s, ok := AgeCalibration(g, 0.8, 0.833)
	assert.True(t, ok)
	assert.InDelta(t, 0.1188, s, 0.0005, "hand-worked first-order propagation")

	p, _ := g.PeriodAt(0.8, 0.833)
	ageAt := func(h GyroLaw) float64 { // invert h at the same period by bisection
		lo, hi := 0.1, 13.8
		for range 200 {
			mid := 0.5 * (lo + hi)
			if q, _ := h.PeriodAt(0.8, mid); q < p {
				lo = mid
			} else {
				hi = mid
			}
		}
		return 0.5 * (lo + hi)
	}
	var s2 float64
	for _, move := range []func(h *GyroLaw, d float64){
		func(h *GyroLaw, d float64) { h.A += d * g.Uncertainty.A },
		func(h *GyroLaw, d float64) { h.B += d * g.Uncertainty.B },
		func(h *GyroLaw, d float64) { h.C += d * g.Uncertainty.C },
		func(h *GyroLaw, d float64) { h.N += d * g.Uncertainty.N },
	} {
		up, down := g, g
		move(&up, 1e-3)
		move(&down, -1e-3)
		d := (math.Log(ageAt(up)) - math.Log(ageAt(down))) / 2e-3
		s2 += d * d
	}
	assert.InDelta(t, math.Sqrt(s2), s, 1e-4, "numerical derivatives of the law")

	wrapped := Scattered{Law: g, Dex: 0.1}
	s3, ok := AgeCalibration(wrapped, 0.8, 0.833)
	assert.True(t, ok)
	assert.Equal(t, s, s3, "a scattered law is the same law underneath")

	_, ok = AgeCalibration(g, 0.3, 0.833)
	assert.False(t, ok, "a color the law refuses")
}
