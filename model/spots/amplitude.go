package spots

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// AmplitudeModel relates spot amplitude to the Rossby number Ro = P/τ_c.
// Activity saturates at fast rotation, so the amplitude is flat below RoSat
// and falls as a power law above it:
//
//	A(Ro) = AmpSatPpm                       Ro ≤ RoSat
//	A(Ro) = AmpSatPpm (Ro/RoSat)^(−Slope)   Ro > RoSat
//
// with lognormal star-to-star scatter of ScatterDex. Ro must be computed in
// the same turnover scale as RoSat was chosen for.
type AmplitudeModel struct {
	RoSat      float64 // Rossby number of saturation
	AmpSatPpm  float64 // saturated semi-amplitude (ppm)
	Slope      float64 // power-law index of the decline above RoSat
	ScatterDex float64 // lognormal scatter (dex)
}

// DefaultAmplitudeModel returns:
//
//   - RoSat = 0.15: activity indicators saturate at Ro ≈ 0.1–0.2 [memory].
//   - AmpSatPpm = 10000 (1 %): saturated, spotted young K and M dwarfs show
//     percent-level modulation [memory].
//   - Slope = 1.5: chosen so that a solar-like Ro ≈ 2 gives ~200 ppm, the
//     order of the Sun's own rotational modulation (~170 ppm in the
//     photometric activity index of García et al. 2014 [memory]); a slope of
//     2, also quoted, gives ~60 ppm there.
//   - ScatterDex = 0.2 [common practice, no source; the scatter about
//     amplitude–Ro trends in space photometry is a few tenths of a dex].
func DefaultAmplitudeModel() AmplitudeModel {
	return AmplitudeModel{RoSat: 0.15, AmpSatPpm: 10000, Slope: 1.5, ScatterDex: 0.2}
}

// Validate reports parameters that cannot describe an amplitude relation.
func (a AmplitudeModel) Validate() error {
	switch {
	case !(a.RoSat > 0) || math.IsInf(a.RoSat, 1):
		return fmt.Errorf("spots: RoSat must be positive and finite, got %g", a.RoSat)
	case !(a.AmpSatPpm > 0) || math.IsInf(a.AmpSatPpm, 1):
		return fmt.Errorf("spots: AmpSatPpm must be positive and finite (ppm), got %g", a.AmpSatPpm)
	case !(a.Slope >= 0) || math.IsInf(a.Slope, 1):
		return fmt.Errorf("spots: Slope must be finite and ≥ 0 (amplitude falls with Ro), got %g", a.Slope)
	case !(a.ScatterDex >= 0) || math.IsInf(a.ScatterDex, 1):
		return fmt.Errorf("spots: ScatterDex must be finite and ≥ 0, got %g", a.ScatterDex)
	}
	return nil
}

// MedianPpm returns the amplitude (ppm) of the median star at Rossby
// number ro; NaN for ro ≤ 0 or NaN.
func (a AmplitudeModel) MedianPpm(ro float64) float64 {
	if !(ro > 0) {
		return math.NaN()
	}
	if ro <= a.RoSat {
		return a.AmpSatPpm
	}
	return a.AmpSatPpm / power(ro/a.RoSat, a.Slope)
}

// Draw returns one star's amplitude (ppm) at Rossby number ro, scattered
// lognormally about MedianPpm with one normal deviate from r (drawn whatever
// ro is).
func (a AmplitudeModel) Draw(ro float64, r *rand.Rand) float64 {
	amp, _ := a.DrawDeviate(ro, r)
	return amp
}

// DrawDeviate is Draw that also returns the normal deviate z it drew: the
// amplitude is MedianPpm(ro)·10^(ScatterDex·z), so z is what a derivative
// in ScatterDex needs. It is LogAmplitude's draw at ln ro, so that a star
// gets the same amplitude whichever form its Rossby number came in.
func (a AmplitudeModel) DrawDeviate(ro float64, r *rand.Rand) (amp, z float64) {
	return a.Log().DrawDeviate(math.Log(ro), r)
}

// LogAmplitude is an AmplitudeModel prepared for stars whose Rossby number
// is known by its logarithm (as the population's rotations are): its
// constants' logarithms are worked out once, and a draw costs one normal
// deviate and one exponential,
//
//	A = AmpSatPpm · exp(ln 10 · ScatterDex · z − Slope · max(0, ln Ro − ln RoSat)).
type LogAmplitude struct {
	ampSat, k, slope, lnRoSat float64
}

// Log returns a prepared for draws at ln Ro.
func (a AmplitudeModel) Log() LogAmplitude {
	return LogAmplitude{ampSat: a.AmpSatPpm, k: math.Ln10 * a.ScatterDex, slope: a.Slope, lnRoSat: math.Log(a.RoSat)}
}

// LnRoSat returns ln RoSat.
func (l LogAmplitude) LnRoSat() float64 { return l.lnRoSat }

// DrawDeviate returns one star's amplitude (ppm) at ln Ro = lnRo and the
// normal deviate z it drew from r (drawn whatever lnRo is): FromDeviate at
// that deviate.
func (l LogAmplitude) DrawDeviate(lnRo float64, r *rand.Rand) (amp, z float64) {
	z = r.NormFloat64()
	return l.FromDeviate(lnRo, z), z
}

// FromDeviate returns the amplitude (ppm) at ln Ro = lnRo of a star whose
// scatter deviate is z; NaN when lnRo is NaN or −Inf (no Rossby number, or
// Ro = 0).
func (l LogAmplitude) FromDeviate(lnRo, z float64) float64 {
	if !(lnRo > math.Inf(-1)) {
		return math.NaN()
	}
	e := l.k * z
	if lnRo > l.lnRoSat {
		e -= l.slope * (lnRo - l.lnRoSat)
	}
	return l.ampSat * math.Exp(e)
}
