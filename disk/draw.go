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
// A rejected point is never used, so its angles are not worked out: lDeg
// and bDeg are then NaN.
//
// Draw allocates nothing; r is the only source of randomness.
func (s *Sampler) Draw(k int, r *rand.Rand) (lDeg, bDeg, dPc, zPc float64, accepted bool) {
	p := s.propose(k, r)
	if s.invScalePc != 0 && !expNegBelow(p.radialUniform(r), s.radialExcess(&p)) {
		return math.NaN(), math.NaN(), p.dPc, p.zPc, false
	}
	lDeg, bDeg = p.angles()
	return lDeg, bDeg, p.dPc, p.zPc, true
}

// proposal is a point drawn from a bin's vertical density over the field,
// before the radial rejection.
type proposal struct {
	galactic bool    // cell about the Galactic pole: sin b = uc, l = phi
	uc, phi  float64 // for galactic cells
	u        vec3    // direction, for other cells
	dPc, zPc float64

	// spare is 32 random bits the proposal drew but did not use, when
	// hasSpare: a fresh uniform for the radial rejection.
	spare    uint32
	hasSpare bool
}

// radialUniform returns a uniform number in [0, 1) independent of the
// proposal: its spare bits if it has them, otherwise fresh ones from r.
// Whether the spare bits were used depends only on other bits, so either
// way the number is uniform and independent of the point.
func (p *proposal) radialUniform(r *rand.Rand) float64 {
	if p.hasSpare {
		return unit32(uint64(p.spare))
	}
	return unit32(r.Uint64())
}

// propose draws a point from bin k's density ν_k(z) over the field, exactly
// (see Draw).
func (s *Sampler) propose(k int, r *rand.Rand) proposal {
	t := &s.bins[k]
	var p proposal
	for {
		ci, env := pickClass(r.Uint64(), t.classes)
		first := s.classStart[ci]
		b := &s.blocks[int(first)+pickAlias(r.Uint64(), s.blockAlias[first:s.classStart[ci+1]])]
		if s.trial(t, env, b, r, &p) {
			return p
		}
	}
}

// trial draws a point uniform in block b into p and keeps it with
// probability ν(z)/(ν(0) env) for the profile of t; env must bound ν/ν(0)
// over the block. It reports whether the point was kept.
func (s *Sampler) trial(t *binTable, env float64, b *block, r *rand.Rand, p *proposal) (kept bool) {
	c := &s.cells[b.cell]
	x := r.Uint64()
	sinB := c.cMin + unit32(x>>32)*(c.cMax-c.cMin)
	p.galactic = c.galactic
	if c.galactic {
		p.uc = sinB
		p.phi = c.phi1 + unit32(x)*(c.phi2-c.phi1)
	} else {
		p.u = c.drawDirection(sinB, unit32(x))
		sinB = p.u.z
	}
	x = r.Uint64()
	x2 := r.Uint64()
	p.dPc, p.hasSpare = s.shells[b.shell].distance(x, uint32(x2), r)
	p.spare = uint32(x2)
	p.zPc = p.dPc*sinB + s.zSunPc
	y := unit32(x2>>32) * env
	// ν falls with |z|: between grid nodes i and i+1 it lies within
	// [lo(i+1), hi(i)].
	if i := int(math.Abs(p.zPc) * s.invZStepPc); i+1 < len(t.bounds) {
		if y <= float64(t.bounds[i+1].lo) {
			return true
		}
		if y > float64(t.bounds[i].hi) {
			return false
		}
	}
	return y <= t.prof.rel(p.zPc)
}

// distance draws a distance in the shell, uniform in volume, from the
// random bits x and, when the mixture needs them (see shell), spare and
// then r. unused reports that spare was not needed.
func (sh *shell) distance(x uint64, spare uint32, r *rand.Rand) (dPc float64, unused bool) {
	f := unit32(x)
	if sel := uint32(x >> 32); sel >= sh.flatBelow {
		f = max(f, unit32(uint64(spare)))
		if sel >= sh.linBelow {
			f = max(f, unit32(r.Uint64()))
		}
		return sh.dLoPc + f*sh.dSpanPc, false
	}
	return sh.dLoPc + f*sh.dSpanPc, true
}

// sinB returns the sine of the proposal's Galactic latitude.
func (p *proposal) sinB() float64 {
	if p.galactic {
		return p.uc
	}
	return clampUnit(p.u.z)
}

// radialExcess returns (R − R_min)/h for the proposal, R its Galactocentric
// radius, so that exp(−radialExcess) is its radial weight over the largest
// one in the field.
func (s *Sampler) radialExcess(p *proposal) float64 {
	return (math.Sqrt(nonNeg(s.r2Pc2(p))) - s.rMinPc) * s.invScalePc
}

// r2Pc2 returns the square of the proposal's Galactocentric radius,
// R² = R0² − 2 R0 d cos b cos l + d² cos² b.
func (s *Sampler) r2Pc2(p *proposal) float64 {
	sinB := p.sinB()
	var cosBCosL float64
	if p.galactic {
		cosBCosL = math.Sqrt(nonNeg(1-sinB*sinB)) * math.Cos(p.phi)
	} else {
		cosBCosL = p.u.x
	}
	d := p.dPc
	return s.r0Pc*s.r0Pc - 2*s.r0Pc*d*cosBCosL + d*d*(1-sinB*sinB)
}

// angles returns the proposal's Galactic longitude in [0, 360) and
// latitude, in degrees.
func (p *proposal) angles() (lDeg, bDeg float64) { return p.direction().Angles() }

// direction returns the proposal's direction, angles not yet worked out.
func (p *proposal) direction() Direction {
	if p.galactic {
		// About the Galactic pole cos ρ = sin b and φ = l.
		return Direction{x: p.phi, sinB: p.uc, galactic: true}
	}
	return Direction{x: p.u.x, y: p.u.y, sinB: p.sinB()}
}

// Direction is a drawn point's direction on the sky in the form the draw
// produced it. Turning it into Galactic angles costs an arctangent and an
// arcsine, which a caller that keeps few of its points can leave for the
// points it keeps.
type Direction struct {
	x, y, sinB float64 // unit vector (x, y, sin b); for galactic: x = l in radians
	galactic   bool
}

// Angles returns the Galactic longitude in [0, 360) and latitude, in
// degrees.
func (d Direction) Angles() (lDeg, bDeg float64) {
	if d.galactic {
		lDeg = d.x * radToDeg
	} else {
		lDeg = math.Atan2(d.y, d.x) * radToDeg
		if lDeg < 0 {
			lDeg += 360
		}
	}
	if lDeg >= 360 {
		lDeg = 0
	}
	return lDeg, math.Asin(d.sinB) * radToDeg
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
