package disk

import (
	"math"
	"math/rand/v2"
)

// Draw returns a position of an age-bin-k star in the field: Galactic
// longitude and latitude in degrees, distance and height above the midplane
// (ZPc) in pc. k must lie in [0, NumBins()).
//
// It picks a height class with probability ∝ its upper bound on ν_k times
// its volume, a block of the class by volume, a point uniform in the
// block's volume, and keeps it with probability ν_k(z)/bound, repeating
// until one is kept: the result follows the bin's density ν_k(z) over the
// field exactly, with no error from the block size or the height grid. The
// grid's brackets on ν_k decide almost every acceptance without evaluating
// ν_k.
//
// The radial profile is then applied by rejection: accepted is true with
// probability exp(−(R − R0)/h)/RadialAcceptanceMax(), R the Galactocentric
// radius (RPc). Because that probability differs between bins, a caller that
// wants the joint (age, position) distribution must, on accepted == false,
// discard the point and redraw the age bin too, not just call Draw again.
//
// Draw allocates nothing; r is the only source of randomness.
func (s *Sampler) Draw(k int, r *rand.Rand) (lDeg, bDeg, dPc, zPc float64, accepted bool) {
	t := &s.bins[k]
	var c *Cell
	var uc, phi float64 // cos ρ and azimuth in the cell's frame
	var u vec3          // direction, for cells not about the Galactic pole
	for {
		ci := pickAlias(r.Uint64(), t.classes)
		env := float64(t.bounds[ci].hi)
		first := s.classStart[ci]
		bi := int(first) + pickAlias(r.Uint64(), s.blockAlias[first:s.classStart[ci+1]])
		b := &s.blocks[bi]
		c = &s.cells[b.cell]
		x := r.Uint64()
		uc = c.cMin + unit32(x>>32)*(c.cMax-c.cMin)
		phi = c.phi1 + unit32(x)*(c.phi2-c.phi1)
		sinB := uc
		if !c.galactic {
			u = c.directionAt(uc, phi)
			sinB = u.z
		}
		x = r.Uint64()
		dPc = math.Cbrt(b.d3Lo + unit32(x>>32)*b.d3Range)
		zPc = dPc*sinB + s.zSunPc
		y := unit32(x) * env
		// ν_k falls with |z|: between grid nodes i and i+1 it lies within
		// [lo(i+1), hi(i)].
		if i := int(math.Abs(zPc) * s.invZStepPc); i+1 < len(t.bounds) {
			if y <= float64(t.bounds[i+1].lo) {
				break
			}
			if y > float64(t.bounds[i].hi) {
				continue
			}
		}
		if y <= t.prof.rel(zPc) {
			break
		}
	}
	var sinB, cosBCosL float64
	if c.galactic {
		// About the Galactic pole cos ρ = sin b and φ = l.
		sinB = uc
		lDeg = phi * radToDeg
		if s.invScalePc != 0 {
			cosBCosL = math.Sqrt(math.Max(0, 1-uc*uc)) * math.Cos(phi)
		}
	} else {
		sinB = clamp(u.z, -1, 1)
		lDeg = math.Atan2(u.y, u.x) * radToDeg
		if lDeg < 0 {
			lDeg += 360
		}
		cosBCosL = u.x
	}
	if lDeg >= 360 {
		lDeg = 0
	}
	bDeg = math.Asin(sinB) * radToDeg
	if s.invScalePc == 0 {
		return lDeg, bDeg, dPc, zPc, true
	}
	// R² = R0² − 2 R0 d cos b cos l + d² cos² b.
	rho2 := s.r0Pc*s.r0Pc - 2*s.r0Pc*dPc*cosBCosL + dPc*dPc*(1-sinB*sinB)
	xr := (math.Sqrt(math.Max(rho2, 0)) - s.rMinPc) * s.invScalePc
	return lDeg, bDeg, dPc, zPc, expNegBelow(r.Float64(), xr)
}

// unit32 maps the low 32 bits of x to [0, 1).
func unit32(x uint64) float64 { return float64(uint32(x)) * (1.0 / (1 << 32)) }

// expNegBelow reports whether y < exp(−x) for x ≥ 0, deciding most cases
// from the alternating Taylor bounds 1 − x + x²/2 − x³/6 ≤ e^(−x) ≤
// 1 − x + x²/2 before calling math.Exp.
func expNegBelow(y, x float64) bool {
	upper := 1 - x + 0.5*x*x
	if y >= upper {
		return false
	}
	if y < upper-x*x*x/6 {
		return true
	}
	return y < math.Exp(-x)
}
