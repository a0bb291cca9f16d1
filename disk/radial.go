package disk

import (
	"fmt"
	"math"
)

// Radial is the exponential radial profile of the disk's surface density,
// Σ(R) ∝ exp(−R/ScaleLengthKpc). The thin disk's scale length is
// ≈ 2.6 kpc [memory]. ScaleLengthKpc = +Inf switches the radial profile off
// (a flat disk).
type Radial struct {
	ScaleLengthKpc float64
}

// DefaultRadial returns the thin-disk scale length 2.6 kpc [memory].
func DefaultRadial() Radial { return Radial{ScaleLengthKpc: 2.6} }

// Validate reports whether the scale length is positive.
func (r Radial) Validate() error {
	if !(r.ScaleLengthKpc > 0) {
		return fmt.Errorf("disk: Radial ScaleLengthKpc = %v kpc; want a positive scale length (thin disk ≈ 2.6 kpc), or +Inf for no radial gradient", r.ScaleLengthKpc)
	}
	return nil
}

// Weight returns the surface density at radius rKpc relative to that at
// r0Kpc, exp(−(R − R0)/h).
func (r Radial) Weight(rKpc, r0Kpc float64) float64 {
	if math.IsInf(r.ScaleLengthKpc, 1) {
		return 1
	}
	return math.Exp(-(rKpc - r0Kpc) / r.ScaleLengthKpc)
}
