package spots

import (
	"fmt"
	"math"
)

// NoiseModel gives the photometric noise per cadence as a function of
// apparent magnitude: photon noise, whose relative size scales as
// flux^(−1/2) = 10^(0.2 (m − RefMag)), added in quadrature to a floor
// (instrument and pointing systematics, stellar granulation at short
// cadence) that bright stars cannot beat.
type NoiseModel struct {
	FloorPpm    float64 // noise floor per cadence (ppm)
	RefMag      float64 // reference magnitude
	PpmAtRefMag float64 // photon noise per cadence at RefMag (ppm)
}

// DefaultNoiseModel returns a floor of 30 ppm and 100 ppm of photon noise
// per 45-minute cadence at magnitude 12 in the survey band: the order of
// a 1 m-class space photometer [memory; an illustration, the scenario
// should state its survey's values].
func DefaultNoiseModel() NoiseModel {
	return NoiseModel{FloorPpm: 30, RefMag: 12, PpmAtRefMag: 100}
}

// Validate reports parameters that cannot describe photometric noise.
func (n NoiseModel) Validate() error {
	switch {
	case !(n.FloorPpm >= 0) || math.IsInf(n.FloorPpm, 1):
		return fmt.Errorf("spots: noise FloorPpm must be finite and ≥ 0, got %g", n.FloorPpm)
	case !(n.PpmAtRefMag > 0) || math.IsInf(n.PpmAtRefMag, 1):
		return fmt.Errorf("spots: noise PpmAtRefMag must be positive and finite, got %g", n.PpmAtRefMag)
	case math.IsNaN(n.RefMag) || math.IsInf(n.RefMag, 0):
		return fmt.Errorf("spots: noise RefMag must be finite, got %g", n.RefMag)
	}
	return nil
}

// PpmPerCadence returns the noise per cadence (ppm) at apparent magnitude
// mag: sqrt(floor² + (PpmAtRefMag · 10^(0.2 (mag − RefMag)))²).
func (n NoiseModel) PpmPerCadence(mag float64) float64 {
	photon := n.PpmAtRefMag * math.Exp(0.2*math.Ln10*(mag-n.RefMag))
	// Plain sqrt rather than math.Hypot: ppm values are far from overflow,
	// and this sits on the per-star path.
	return math.Sqrt(n.FloorPpm*n.FloorPpm + photon*photon)
}
