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

// MixtureDensity is a mixture's vertical density in one sheet, normalised
// to unit integral over all z: the weighted mean of its components' tracer
// densities (Sheet.TracerDensity), with every per-component constant
// worked out once for the many evaluations an importance weight per star
// needs. The ratio of two mixtures' densities at a star's height is the
// weight that turns stars placed by one into stars placed by the other.
type MixtureDensity struct {
	invZ0 float64
	exps  []float64 // n_j of each component
	coefs []float64 // w_j / (Σw · z0 · ∫cosh^−n_j)
}

// Prepare returns m's density in s, ready for evaluation.
func (m Mixture) Prepare(s Sheet) MixtureDensity {
	z0 := s.Z0Pc()
	d := MixtureDensity{invZ0: 1 / z0}
	var den float64
	for _, c := range m {
		den += c.Weight
	}
	for _, c := range m {
		n := s.Exponent(c.SigmaKms)
		d.exps = append(d.exps, n)
		d.coefs = append(d.coefs, c.Weight/(den*z0*coshPowerIntegral(n)))
	}
	return d
}

// At returns the density in pc⁻¹ at height zPc.
func (d MixtureDensity) At(zPc float64) float64 {
	lc := logCosh(zPc * d.invZ0)
	var v float64
	for j, n := range d.exps {
		v += d.coefs[j] * math.Exp(-n*lc)
	}
	return v
}
