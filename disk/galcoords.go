package disk

import "math"

const (
	degToRad = math.Pi / 180
	radToDeg = 180 / math.Pi
)

// HelioCartesian converts Galactic longitude and latitude in degrees and a
// distance in pc to heliocentric Cartesian coordinates in pc: x toward the
// Galactic centre (l = 0, b = 0), y toward l = 90°, z toward the north
// Galactic pole (b = 90°).
func HelioCartesian(lDeg, bDeg, dPc float64) (xPc, yPc, zPc float64) {
	sl, cl := math.Sincos(lDeg * degToRad)
	sb, cb := math.Sincos(bDeg * degToRad)
	return dPc * cb * cl, dPc * cb * sl, dPc * sb
}

// GalacticFromHelio inverts HelioCartesian: it returns l in [0, 360), b in
// [−90, 90] and d ≥ 0. At the origin it returns zeros.
func GalacticFromHelio(xPc, yPc, zPc float64) (lDeg, bDeg, dPc float64) {
	dPc = math.Sqrt(xPc*xPc + yPc*yPc + zPc*zPc)
	if dPc == 0 {
		return 0, 0, 0
	}
	lDeg = math.Atan2(yPc, xPc) * radToDeg
	if lDeg < 0 {
		lDeg += 360
	}
	if lDeg >= 360 {
		lDeg -= 360
	}
	bDeg = math.Atan2(zPc, math.Hypot(xPc, yPc)) * radToDeg
	return lDeg, bDeg, dPc
}

// tilt returns sin θ and cos θ of the angle θ = asin(z☉/R0) by which
// astropy's Galactocentric frame is turned about its y axis so that the Sun
// sits z☉ above the midplane.
func (s Sun) tilt() (sinT, cosT float64) {
	sinT = s.ZPc / (s.RKpc * 1000)
	return sinT, math.Sqrt(1 - sinT*sinT)
}

// GalactocentricFromHelio converts heliocentric Cartesian coordinates (pc)
// to Galactocentric ones (pc) in astropy's convention: the origin at the
// Galactic centre, x pointing from the centre away from the Sun's side (the
// Sun sits at x ≈ −R0), y toward l = 90°, z toward the north Galactic pole,
// and the frame turned about y by θ = asin(z☉/R0) so that the Sun lies z☉
// above the plane z = 0, at (−R0 cos θ, 0, z☉). The Galactic centre
// direction is (l, b) = (0, 0); astropy's default centre direction differs
// from it by about 1e-4 degrees, which moves points by ~1e-6 of their
// distance from the centre.
func (s Sun) GalactocentricFromHelio(xPc, yPc, zPc float64) (xGcPc, yGcPc, zGcPc float64) {
	sinT, cosT := s.tilt()
	u := xPc - s.RKpc*1000
	return cosT*u + sinT*zPc, yPc, -sinT*u + cosT*zPc
}

// HelioFromGalactocentric inverts GalactocentricFromHelio.
func (s Sun) HelioFromGalactocentric(xGcPc, yGcPc, zGcPc float64) (xPc, yPc, zPc float64) {
	sinT, cosT := s.tilt()
	u := cosT*xGcPc - sinT*zGcPc
	return u + s.RKpc*1000, yGcPc, sinT*xGcPc + cosT*zGcPc
}

// Galactocentric converts Galactic (l, b in degrees, d in pc) to
// Galactocentric Cartesian coordinates in pc; see GalactocentricFromHelio
// for the convention.
func (s Sun) Galactocentric(lDeg, bDeg, dPc float64) (xGcPc, yGcPc, zGcPc float64) {
	return s.GalactocentricFromHelio(HelioCartesian(lDeg, bDeg, dPc))
}

// ZPc returns the height in pc above the Galactic midplane of a star at
// (l, b, d) in the common local approximation z = d sin b + z☉, which takes
// the plane b = 0 through the Sun as parallel to the midplane. It ignores
// the tilt θ = asin(z☉/R0) of astropy's Galactocentric z; the two differ
// by
//
//	Δz = z_h (cos θ − 1) − x_h sin θ,   |Δz| ≤ 2 d sin(θ/2) ≈ d z☉/R0,
//
// with (x_h, z_h) the heliocentric coordinates: at most 2.6 pc per kpc of
// distance for the default Sun (5.1 pc at 2 kpc), largest toward the
// Galactic centre and anticentre near the plane. Every vertical profile in
// this package uses ZPc, so the model is self-consistent; the difference
// only matters when comparing with heights computed in the tilted frame.
func ZPc(sun Sun, lDeg, bDeg, dPc float64) float64 {
	return dPc*math.Sin(bDeg*degToRad) + sun.ZPc
}

// RPc returns the Galactocentric cylindrical radius in pc of a star at
// (l, b, d) in the same local approximation as ZPc (planes parallel, Sun at
// in-plane radius R0):
//
//	R² = R0² − 2 R0 d cos b cos l + d² cos² b.
func RPc(sun Sun, lDeg, bDeg, dPc float64) float64 {
	x, y, _ := HelioCartesian(lDeg, bDeg, dPc)
	return math.Hypot(sun.RKpc*1000-x, y)
}
