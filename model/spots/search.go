package spots

import (
	"fmt"
	"math"
)

// SearchCompleteness is the share of periods a survey's period search
// finds beyond what the light curve's signal-to-noise allows (Detection):
// slow rotators are lost to spot evolution, to detrending that removes
// long-period power and to red noise, none of which the white-noise
// signal-to-noise sees. Real pipelines measure this loss by injecting
// and recovering signals and find it falls steeply with period [common
// practice, no source]; how it depends on color is survey-specific. It is
// a logistic in ln P,
//
//	ε = 1 / (1 + (P/P½)^Steepness),   P½ = HalfPeriodD · (τ_c/τ_c☉)^TurnoverPower,
//
// so TurnoverPower 0 is a loss at a fixed period whatever the star, 1 a
// loss at a fixed Rossby number, and values between a loss that moves
// partly with the convective turnover time τ_c. HalfPeriodD 0 means no
// such loss (ε = 1): the scenarios' default, kept so that a fit can free
// it as a nuisance parameter of selection.
type SearchCompleteness struct {
	HalfPeriodD   float64 // P½ for a star of the Sun's turnover time (d); 0 = no loss
	TurnoverPower float64 // how P½ scales with τ_c
	Steepness     float64 // logistic slope in ln P
}

// Enabled reports whether the search loses any periods.
func (s SearchCompleteness) Enabled() bool { return s.HalfPeriodD > 0 }

// Validate reports parameters that cannot describe a completeness; with
// HalfPeriodD 0 (no loss) the other two are not read and not checked.
func (s SearchCompleteness) Validate() error {
	if !(s.HalfPeriodD >= 0) || math.IsInf(s.HalfPeriodD, 1) {
		return fmt.Errorf("spots: search completeness HalfPeriodD must be finite and ≥ 0 (days; 0 = no loss), got %g", s.HalfPeriodD)
	}
	if !s.Enabled() {
		return nil // the other two are not read
	}
	switch {
	case !(s.TurnoverPower >= 0) || !(s.TurnoverPower <= 3):
		return fmt.Errorf("spots: search completeness TurnoverPower must be in [0, 3] (0: a fixed period, 1: a fixed Rossby number), got %g", s.TurnoverPower)
	case !(s.Steepness > 0) || !(s.Steepness <= 50):
		return fmt.Errorf("spots: search completeness Steepness must be in (0, 50] (logistic slope in ln P), got %g", s.Steepness)
	}
	return nil
}

// Efficiency returns ε for a period periodD of a star whose turnover time
// is tauRatio = τ_c/τ_c☉ (read only when TurnoverPower ≠ 0). A star
// without a turnover time (tauRatio NaN) when one is needed, or a
// non-positive period, gives 0; a disabled completeness gives 1.
func (s SearchCompleteness) Efficiency(periodD, tauRatio float64) float64 {
	if !s.Enabled() {
		return 1
	}
	if !(periodD > 0) {
		return 0
	}
	half := s.HalfPeriodD
	if s.TurnoverPower != 0 {
		if !(tauRatio > 0) {
			return 0
		}
		half *= math.Exp(s.TurnoverPower * math.Log(tauRatio))
	}
	return 1 / (1 + math.Exp(s.Steepness*math.Log(periodD/half)))
}
