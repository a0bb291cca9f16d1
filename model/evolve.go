package model

import "math"

// MSLifetimeGyr is the main-sequence lifetime of a star of the given mass,
// 10 Gyr (M/M☉)^−2.5 (common practice: L ∝ M^3.5 burning a fixed fraction
// of the star's hydrogen, scaled to the Sun's ~10 Gyr). It is +Inf for
// non-positive masses, which therefore never evolve.
func MSLifetimeGyr(massMsun float64) float64 {
	if !(massMsun > 0) {
		return math.Inf(1)
	}
	return 10 / (massMsun * massMsun * math.Sqrt(massMsun))
}

// A crude post-main-sequence model, in units of the main-sequence lifetime
// τ. It is a documented approximation for removing and brightening evolved
// stars in a dwarf sample, not stellar evolution: between τ and
// (1 + SubgiantSpanFrac) τ the star brightens linearly from 0 to
// SubgiantBrighteningMag (a subgiant; the published tracks brighten by
// ~1.5–2 mag in V across the subgiant branch [memory]); from then until
// GoneAtLifetimeFrac τ it stays that bright (base of the giant branch);
// past GoneAtLifetimeFrac τ it is a giant or a remnant and leaves the sample.
const (
	SubgiantSpanFrac       = 0.15
	SubgiantBrighteningMag = 1.75
	GoneAtLifetimeFrac     = 1.2
)

// EvolvedBrightening is how much brighter (dMag ≥ 0, in magnitudes, the
// same in every band) a star of the given mass and age is than the
// main-sequence relations say, under the crude model above. gone reports
// that the star has left the dwarf sample (giant or remnant) by
// GoneAtLifetimeFrac × MSLifetimeGyr; dMag is then SubgiantBrighteningMag
// but meaningless. Main-sequence stars get (0, false).
func EvolvedBrightening(massMsun, ageGyr float64) (dMag float64, gone bool) {
	tau := MSLifetimeGyr(massMsun)
	x := ageGyr/tau - 1 // fraction of the lifetime past the main sequence
	switch {
	case !(x > 0):
		return 0, false
	case x > GoneAtLifetimeFrac-1:
		return SubgiantBrighteningMag, true
	case x >= SubgiantSpanFrac:
		return SubgiantBrighteningMag, false
	}
	return SubgiantBrighteningMag * x / SubgiantSpanFrac, false
}
