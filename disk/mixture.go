package disk

import (
	"fmt"
	"math"
)

// WeightedSigma is one component of an age bin's vertical profile: a tracer
// of vertical dispersion SigmaKms carrying a share Weight of the bin's
// surface density.
type WeightedSigma struct {
	SigmaKms float64
	Weight   float64
}

// Mixture is an age bin's vertical profile as a weighted mean of tracer
// profiles. Weights need not sum to one; they are normalised, so the bin's
// profile always integrates to one over z.
type Mixture []WeightedSigma

// validate reports whether m describes a profile; bin names the age bin in
// the message.
func (m Mixture) validate(bin int) error {
	if len(m) == 0 {
		return fmt.Errorf("disk: age bin %d has no vertical component; want at least one (SigmaKms, Weight) pair", bin)
	}
	sum := 0.0
	for j, c := range m {
		if !(c.SigmaKms > 0) || math.IsInf(c.SigmaKms, 0) {
			return fmt.Errorf("disk: age bin %d component %d has SigmaKms = %v; want a positive, finite vertical dispersion in km/s", bin, j, c.SigmaKms)
		}
		if !(c.Weight >= 0) || math.IsInf(c.Weight, 0) {
			return fmt.Errorf("disk: age bin %d component %d has Weight = %v; want a finite weight ≥ 0", bin, j, c.Weight)
		}
		sum += c.Weight
	}
	if !(sum > 0) {
		return fmt.Errorf("disk: age bin %d has weights summing to %v; want a positive sum", bin, sum)
	}
	return nil
}
