package disk

import "math"

// Cell is a patch of sky between two circles about a pole (angular radii
// ρ1 < ρ2) and two half great circles through it (azimuths φ1 < φ2), with
// the distance range observed through it. Cones are cut into such
// ring sectors about their axis; a Sphere into strips about the Galactic
// pole, for which cos ρ = sin b and φ = l.
//
// A direction uniform in solid angle over the cell has cos ρ and φ uniform
// over their ranges, which makes drawing one cheap.
type Cell struct {
	// What Draw reads comes first, in two cache lines. mid and side
	// complete the frame at the middle azimuth φm, mid = cos φm e1 +
	// sin φm e2 and side = −sin φm e1 + cos φm e2; Draw turns from mid by
	// at most halfPhi.
	pole, mid, side vec3
	cMin, cMax      float64 // range of cos ρ
	halfPhi         float64
	phi1, phi2      float64 // azimuth range in radians, from e1 toward e2
	galactic        bool    // pole is the north Galactic pole and e1 points to l = 0

	e1, e2               vec3    // with pole, a right-handed frame
	sinBMin, sinBMax     float64 // bounds on sin b over the cell (exact for galactic cells)
	distMinPc, distMaxPc float64
}

// newCell returns the cell between angular radii rho1 < rho2 and azimuths
// phi1 < phi2 (radians) about the frame (pole, e1, e2).
func newCell(pole, e1, e2 vec3, rho1, rho2, phi1, phi2, distMinPc, distMaxPc float64, galactic bool) Cell {
	c := Cell{
		pole: pole, e1: e1, e2: e2,
		cMin: math.Cos(rho2), cMax: math.Cos(rho1),
		phi1: phi1, phi2: phi2,
		galactic:  galactic,
		distMinPc: distMinPc, distMaxPc: distMaxPc,
	}
	phiM := 0.5 * (phi1 + phi2)
	sm, cm := math.Sincos(phiM)
	c.mid = e1.scale(cm).add(e2.scale(sm))
	c.side = e1.scale(-sm).add(e2.scale(cm))
	c.halfPhi = 0.5 * (phi2 - phi1)
	if galactic {
		c.sinBMin, c.sinBMax = c.cMin, c.cMax
		return c
	}
	// A bound: every point lies within the circumradius r of the centre, so
	// its latitude lies within r of the centre's latitude.
	centre, r := c.circumcircle(rho1, rho2)
	bc := latitudeOf(centre)
	const slack = 1e-12 // rounding of the corner distances
	c.sinBMin = math.Sin(math.Max(bc-r-slack, -math.Pi/2))
	c.sinBMax = math.Sin(math.Min(bc+r+slack, math.Pi/2))
	return c
}

// point returns the unit vector at angular radius rho and azimuth phi.
func (c *Cell) point(rho, phi float64) vec3 {
	sr, cr := math.Sincos(rho)
	sp, cp := math.Sincos(phi)
	return c.pole.scale(cr).add(c.e1.scale(sr * cp)).add(c.e2.scale(sr * sp))
}

// circumcircle returns a centre inside the cell and the largest angular
// distance from it to any point of the cell. The distance from a point
// along a circle about the pole grows with the azimuth offset (up to π), so
// on the arcs it peaks at the corners; along a meridian it is a sinusoid in
// ρ whose far extreme may lie inside the edge, so that point is checked too.
func (c *Cell) circumcircle(rho1, rho2 float64) (vec3, float64) {
	if rho1 == 0 && c.phi2-c.phi1 >= 2*math.Pi-1e-12 {
		return c.pole, rho2
	}
	phiM := 0.5 * (c.phi1 + c.phi2)
	centre := c.point(0.5*(rho1+rho2), phiM)
	r := 0.0
	for _, phi := range [2]float64{c.phi1, c.phi2} {
		for _, rho := range [2]float64{rho1, rho2} {
			r = math.Max(r, angleBetween(centre, c.point(rho, phi)))
		}
		// cos(distance) along the meridian = a cos ρ + s sin ρ, smallest at
		// ρ = atan2(s, a) + π.
		a := centre.dot(c.pole)
		sp, cp := math.Sincos(phi)
		s := centre.dot(c.e1.scale(cp).add(c.e2.scale(sp)))
		far := math.Atan2(s, a) + math.Pi
		for _, rho := range [3]float64{far - 2*math.Pi, far, far + 2*math.Pi} {
			if rho > rho1 && rho < rho2 {
				r = math.Max(r, angleBetween(centre, c.point(rho, phi)))
			}
		}
	}
	return centre, r
}

// SolidAngleSr returns the cell's solid angle in steradians.
func (c *Cell) SolidAngleSr() float64 { return (c.cMax - c.cMin) * (c.phi2 - c.phi1) }

// DistRangePc returns the distance range observed through the cell, in pc.
func (c *Cell) DistRangePc() (minPc, maxPc float64) { return c.distMinPc, c.distMaxPc }

// SinBRange returns bounds on sin b over the cell: exact for strips about
// the Galactic pole, slightly wide for ring sectors of cones.
func (c *Cell) SinBRange() (lo, hi float64) { return c.sinBMin, c.sinBMax }

// directionAt returns the unit vector at cos ρ = cr and azimuth phi.
func (c *Cell) directionAt(cr, phi float64) vec3 {
	sr := math.Sqrt(nonNeg(1 - cr*cr))
	sp, cp := math.Sincos(phi)
	return vec3{
		cr*c.pole.x + sr*(cp*c.e1.x+sp*c.e2.x),
		cr*c.pole.y + sr*(cp*c.e1.y+sp*c.e2.y),
		cr*c.pole.z + sr*(cp*c.e1.z+sp*c.e2.z),
	}
}

// drawDirection returns the unit vector at cos ρ = cr and the azimuth a
// fraction v ∈ [0, 1) of the way across the cell. Cells narrower than
// 2 smallAngleRad in azimuth turn from their middle azimuth with sinCosSmall,
// which costs a few multiplications against math.Sincos's argument
// reduction.
func (c *Cell) drawDirection(cr, v float64) vec3 {
	if c.halfPhi > smallAngleRad {
		return c.directionAt(cr, c.phi1+v*(c.phi2-c.phi1))
	}
	sr := math.Sqrt(nonNeg(1 - cr*cr))
	sx, cx := sinCosSmall((2*v - 1) * c.halfPhi)
	sc, ss := sr*cx, sr*sx
	return vec3{
		cr*c.pole.x + sc*c.mid.x + ss*c.side.x,
		cr*c.pole.y + sc*c.mid.y + ss*c.side.y,
		cr*c.pole.z + sc*c.mid.z + ss*c.side.z,
	}
}

// smallAngleRad bounds the arguments of sinCosSmall; below tinyAngleRad it
// needs fewer terms.
const (
	smallAngleRad = 0.25
	tinyAngleRad  = 0.02
)

// sinCosSmall returns sin x and cos x for |x| ≤ smallAngleRad from their
// Taylor series in Horner form, with constant reciprocals so that nothing
// divides. The first omitted terms, x¹³/13! and x¹⁴/14!, are below 3e−18
// there, under the rounding of the result.
func sinCosSmall(x float64) (sin, cos float64) {
	x2 := x * x
	if x2 <= tinyAngleRad*tinyAngleRad {
		// Fewer terms for the usual narrow cell: the first omitted,
		// x⁹/9! and x¹⁰/10!, are below 2e−21 for |x| ≤ tinyAngleRad.
		sin = x * (1 - x2*(1.0/6)*(1-x2*(1.0/20)*(1-x2*(1.0/42))))
		cos = 1 - x2*0.5*(1-x2*(1.0/12)*(1-x2*(1.0/30)*(1-x2*(1.0/56))))
		return sin, cos
	}
	sin = x * (1 - x2*(1.0/6)*(1-x2*(1.0/20)*(1-x2*(1.0/42)*(1-x2*(1.0/72)*(1-x2*(1.0/110))))))
	cos = 1 - x2*0.5*(1-x2*(1.0/12)*(1-x2*(1.0/30)*(1-x2*(1.0/56)*(1-x2*(1.0/90)*(1-x2*(1.0/132))))))
	return sin, cos
}

// Gauss–Legendre rules on [−1, 1].
var (
	gl3x = [3]float64{-0.7745966692414834, 0, 0.7745966692414834}
	gl3w = [3]float64{5.0 / 9, 8.0 / 9, 5.0 / 9}
	gl4x = [4]float64{-0.8611363115940526, -0.3399810435848563, 0.3399810435848563, 0.8611363115940526}
	gl4w = [4]float64{0.3478548451374538, 0.6521451548625461, 0.6521451548625461, 0.3478548451374538}
)

// sinBNode is a quadrature node over a cell's solid angle: the sine of the
// latitude there and the solid angle (sr) it stands for.
type sinBNode struct{ sinB, weightSr float64 }

// quadrature returns nodes that integrate smooth functions of sin b over the
// cell: three Gauss–Legendre nodes in sin b for strips about the Galactic
// pole (on which sin b is constant along φ), and otherwise a product of
// three Gauss–Legendre nodes in ρ, weighted by sin ρ, with three in φ —
// Gauss–Legendre over a sector, equally spaced over a full circle, where the
// trapezoid rule is exact for the low harmonics a small cap has. Nodes in
// ρ rather than cos ρ keep the rule accurate on the innermost rings, where
// sin ρ = √(1 − cos²ρ) is far from polynomial in cos ρ.
func (c *Cell) quadrature(dst []sinBNode) []sinBNode {
	dst = dst[:0]
	if c.galactic {
		hc := 0.5 * (c.cMax - c.cMin)
		mc := 0.5 * (c.cMax + c.cMin)
		for i, x := range gl3x {
			dst = append(dst, sinBNode{sinB: mc + hc*x, weightSr: gl3w[i] * hc * (c.phi2 - c.phi1)})
		}
		return dst
	}
	rho1 := math.Acos(clamp(c.cMax, -1, 1))
	rho2 := math.Acos(clamp(c.cMin, -1, 1))
	hr, mr := 0.5*(rho2-rho1), 0.5*(rho2+rho1)
	hp, mp := 0.5*(c.phi2-c.phi1), 0.5*(c.phi2+c.phi1)
	fullCircle := c.phi2-c.phi1 >= 2*math.Pi-1e-12
	for i, x := range gl3x {
		sr, cr := math.Sincos(mr + hr*x)
		for j, y := range gl3x {
			phi, wPhi := mp+hp*y, gl3w[j]*hp
			if fullCircle {
				phi, wPhi = c.phi1+2*math.Pi*float64(j)/3, 2*math.Pi/3
			}
			sp, cp := math.Sincos(phi)
			sinB := cr*c.pole.z + sr*(cp*c.e1.z+sp*c.e2.z)
			dst = append(dst, sinBNode{sinB: sinB, weightSr: gl3w[i] * hr * sr * wPhi})
		}
	}
	return dst
}

// maxCosToCentre returns an upper bound on the cosine of the angle between
// any direction in the cell and the Galactic centre (l, b) = (0, 0), used to
// bound the smallest Galactocentric radius the cell reaches.
func (c *Cell) maxCosToCentre() float64 {
	if c.galactic {
		// cos ψ = cos b cos l ≤ cos b, largest where |b| is smallest.
		if c.sinBMin <= 0 && c.sinBMax >= 0 {
			return 1
		}
		s := math.Min(math.Abs(c.sinBMin), math.Abs(c.sinBMax))
		return math.Sqrt(1 - s*s)
	}
	rho1 := math.Acos(clamp(c.cMax, -1, 1))
	rho2 := math.Acos(clamp(c.cMin, -1, 1))
	centre, r := c.circumcircle(rho1, rho2)
	psi := angleBetween(centre, vec3{1, 0, 0}) - r - 1e-12
	if psi <= 0 {
		return 1
	}
	return math.Cos(psi)
}
