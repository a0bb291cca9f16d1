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
// z(s) = z☉ + s sin b as in ZPc. See SunDust.AV.
func (dl DustLayer) AV(lDeg, bDeg, dPc float64, sun Sun) float64 {
	return dl.FromSun(sun).AV(dPc, sun.ZPc+dPc*math.Sin(bDeg*degToRad))
}

// SunDust is a DustLayer seen from the Sun: every sight line starts at
// z☉, so what they share is worked out once and a star's extinction
// follows from its distance and height alone.
type SunDust struct {
	a0PerPc float64 // midplane extinction per pc
	invH    float64 // 1/scale height
	zSunPc  float64
	eSun    float64 // exp(−|z☉|/H)
	toPlane float64 // mean of exp(−|z|/H) along a path from z☉ to the midplane
}

// FromSun returns the layer as seen from sun.
func (dl DustLayer) FromSun(sun Sun) SunDust {
	invH := 1 / dl.ScaleHeightPc
	a := math.Abs(sun.ZPc) * invH
	return SunDust{
		a0PerPc: dl.MidplaneAvPerKpc / 1000,
		invH:    invH,
		zSunPc:  sun.ZPc,
		eSun:    math.Exp(-a),
		// From |z☉| down to 0 the decay runs backwards: mean e^{−|z|/H}
		// = e^{−a}·meanExpDecay(−a) = (1 − e^{−a})/a.
		toPlane: math.Exp(-a) * meanExpDecay(-a),
	}
}

// AV returns the V-band extinction in magnitudes to a star at distance dPc
// and height zPc above the midplane (zPc = z☉ + d sin b, as ZPc gives): the
// integral of a(z) along the straight sight line. On a stretch that stays
// on one side of the midplane |z| changes linearly with path length, so
//
//	∫ a ds = a0 L e^(−|z1|/H) (1 − e^(−x))/x,  x = (|z2| − |z1|)/H,
//
// L the stretch's length, computed with expm1 so that it tends to
// a0 L e^(−|z1|/H) as x → 0 (a sight line along the plane). A sight line
// that crosses the midplane is split there.
func (sd SunDust) AV(dPc, zPc float64) float64 {
	z1, z2 := sd.zSunPc, zPc
	if (z1 > 0 && z2 < 0) || (z1 < 0 && z2 > 0) {
		a1, a2 := math.Abs(z1), math.Abs(z2)
		s0 := dPc * a1 / (a1 + a2) // path length to the midplane
		return sd.a0PerPc * (s0*sd.toPlane + (dPc-s0)*meanExpDecay(a2*sd.invH))
	}
	return sd.a0PerPc * dPc * sd.eSun * meanExpDecay((math.Abs(z2)-math.Abs(z1))*sd.invH)
}

// meanExpDecay returns the mean of e^(−t x) over t in [0, 1], (1 − e^(−x))/x,
// which is 1 at x = 0.
func meanExpDecay(x float64) float64 {
	if math.Abs(x) < 0.0625 {
		// Taylor series Σ (−x)ⁿ/(n+1)!; the first omitted term, x⁹/10!, is
		// below 5e−18. Cheaper than expm1, and exact where 1 − e^(−x)
		// would cancel.
		return 1 - x*(1.0/2)*(1-x*(1.0/3)*(1-x*(1.0/4)*(1-x*(1.0/5)*(1-x*(1.0/6)*(1-x*(1.0/7)*(1-x*(1.0/8)*(1-x*(1.0/9))))))))
	}
	// Here 1 − e^(−x) loses under 2e−15 of its value to cancellation.
	return (1 - math.Exp(-x)) / x
}
