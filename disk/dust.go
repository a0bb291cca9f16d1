package disk

import (
	"fmt"
	"math"
)

// Extinction gives the V-band extinction in magnitudes toward a star.
type Extinction interface {
	AV(lDeg, bDeg, dPc float64, sun Sun) float64
}

// NoDust is the extinction of a dereddened catalog: zero everywhere.
type NoDust struct{}

// AV returns 0.
func (NoDust) AV(lDeg, bDeg, dPc float64, sun Sun) float64 { return 0 }

// DustLayer is a plane-parallel dust layer whose V-band extinction per unit
// length falls exponentially with height above the midplane,
// a(z) = MidplaneAvPerKpc · exp(−|z|/ScaleHeightPc). The solar
// neighbourhood is described by a scale height ≈ 100–130 pc and a midplane
// extinction ≈ 0.7–1 mag/kpc [memory]. It has no radial gradient: within a
// few kpc of the Sun the vertical structure dominates.
type DustLayer struct {
	ScaleHeightPc    float64
	MidplaneAvPerKpc float64
}

// DefaultDustLayer returns a 110 pc layer with 0.8 mag/kpc at the midplane
// [memory].
func DefaultDustLayer() DustLayer { return DustLayer{ScaleHeightPc: 110, MidplaneAvPerKpc: 0.8} }

// Validate reports whether the layer has a positive scale height and a
// non-negative midplane extinction.
func (dl DustLayer) Validate() error {
	if !(dl.ScaleHeightPc > 0) || math.IsInf(dl.ScaleHeightPc, 0) {
		return fmt.Errorf("disk: DustLayer ScaleHeightPc = %v pc; want a positive, finite scale height (≈ 100–130 pc)", dl.ScaleHeightPc)
	}
	if !(dl.MidplaneAvPerKpc >= 0) || math.IsInf(dl.MidplaneAvPerKpc, 0) {
		return fmt.Errorf("disk: DustLayer MidplaneAvPerKpc = %v mag/kpc; want a finite extinction ≥ 0 (≈ 0.7–1 mag/kpc)", dl.MidplaneAvPerKpc)
	}
	return nil
}

// AV returns the V-band extinction in magnitudes to distance dPc along
// (l, b): the integral of a(z) along the sight line, whose height is
// z(s) = z☉ + s sin b as in ZPc. In closed form, for a stretch that stays
// on one side of the midplane with z going from z1 to z2,
//
//	∫ a ds = a0 H (e^(−|z1|/H) − e^(−|z2|/H)) / |sin b|,
//
// computed with expm1 so that it tends to a0 Δs e^(−|z|/H) as sin b → 0. A
// sight line that crosses the midplane is split there.
func (dl DustLayer) AV(lDeg, bDeg, dPc float64, sun Sun) float64 {
	a0 := dl.MidplaneAvPerKpc / 1000 // mag/pc
	h := dl.ScaleHeightPc
	sinB := math.Sin(bDeg * degToRad)
	z1 := sun.ZPc
	z2 := z1 + dPc*sinB
	if (z1 > 0 && z2 < 0) || (z1 < 0 && z2 > 0) {
		s0 := -z1 / sinB // path length to the midplane
		return a0 * (layerPath(z1, s0, sinB, h) + layerPath(0, dPc-s0, sinB, h))
	}
	return a0 * layerPath(z1, dPc, sinB, h)
}

// layerPath returns ∫₀^L exp(−|z0 + s k|/H) ds for a stretch that does not
// cross z = 0 (beyond its ends).
func layerPath(z0, length, k, h float64) float64 {
	// On one side of the plane |z0 + s k| = |z0| + s κ, κ = k sign.
	kappa := k
	if z0 < 0 || (z0 == 0 && k < 0) {
		kappa = -k
	}
	if kappa == 0 {
		return length * math.Exp(-math.Abs(z0)/h)
	}
	x := kappa * length / h
	return math.Exp(-math.Abs(z0)/h) * h * -math.Expm1(-x) / kappa
}
