package othermodel

import (
	"math"
	"math/rand/v2"
)

const deg = math.Pi / 180

// The Galactic frame in ICRS as adopted by the IAU for the astrometric
// catalogs of 1997 (ESA 1997, SP-1200, vol. 1, §1.5.3): north Galactic
// pole at α = 192.85948°, δ = +27.12825°, and the Galactic longitude of
// the ascending node of the Galactic plane on the equator l_Ω = 32.93192°.
const (
	galPoleRADeg  = 192.85948
	galPoleDecDeg = 27.12825
	galNodeLDeg   = 32.93192
)

// galToICRS holds the Galactic unit axes (x toward l = 0, y toward
// l = 90°, z toward the pole) as ICRS vectors: r_ICRS = Σ_i X_i axis_i.
var galToICRS = func() [3][3]float64 {
	a, d := galPoleRADeg*deg, galPoleDecDeg*deg
	z := [3]float64{math.Cos(d) * math.Cos(a), math.Cos(d) * math.Sin(a), math.Sin(d)}
	// Ascending node of the Galactic plane on the equator: α = α_pole + 90°.
	node := [3]float64{math.Cos(a + math.Pi/2), math.Sin(a + math.Pi/2), 0}
	perp := cross(z, node) // in the plane, 90° of longitude ahead of the node
	co, so := math.Cos(galNodeLDeg*deg), math.Sin(galNodeLDeg*deg)
	var x [3]float64
	for i := range x {
		x[i] = co*node[i] - so*perp[i]
	}
	return [3][3]float64{x, cross(z, x), z}
}()

func cross(a, b [3]float64) [3]float64 {
	return [3]float64{a[1]*b[2] - a[2]*b[1], a[2]*b[0] - a[0]*b[2], a[0]*b[1] - a[1]*b[0]}
}

func unitVector(lonDeg, latDeg float64) [3]float64 {
	l, b := lonDeg*deg, latDeg*deg
	return [3]float64{math.Cos(b) * math.Cos(l), math.Cos(b) * math.Sin(l), math.Sin(b)}
}

func angles(v [3]float64) (lonDeg, latDeg float64) {
	lon := math.Atan2(v[1], v[0]) / deg
	if lon < 0 {
		lon += 360
	}
	return lon, math.Asin(math.Max(-1, math.Min(1, v[2]))) / deg
}

// GalacticToICRS turns Galactic (l, b) into ICRS (RA, Dec), in degrees.
func GalacticToICRS(lDeg, bDeg float64) (raDeg, decDeg float64) {
	g := unitVector(lDeg, bDeg)
	var e [3]float64
	for i := range 3 {
		for j := range 3 {
			e[j] += g[i] * galToICRS[i][j]
		}
	}
	return angles(e)
}

// ICRSToGalactic is the inverse rotation (the transpose).
func ICRSToGalactic(raDeg, decDeg float64) (lDeg, bDeg float64) {
	e := unitVector(raDeg, decDeg)
	var g [3]float64
	for i := range 3 {
		for j := range 3 {
			g[i] += galToICRS[i][j] * e[j]
		}
	}
	return angles(g)
}

// AngularSeparationDeg is the great-circle distance between two directions.
func AngularSeparationDeg(l1, b1, l2, b2 float64) float64 {
	u, v := unitVector(l1, b1), unitVector(l2, b2)
	c := cross(u, v)
	sin := math.Sqrt(c[0]*c[0] + c[1]*c[1] + c[2]*c[2])
	return math.Atan2(sin, u[0]*v[0]+u[1]*v[1]+u[2]*v[2]) / deg
}

// cone draws directions uniformly in solid angle within a cone.
type cone struct {
	centre, e1, e2 [3]float64
	cosRadius      float64
}

func newCone(lDeg, bDeg, radiusDeg float64) cone {
	c := unitVector(lDeg, bDeg)
	e1 := unitVector(lDeg+90, 0) // horizontal, perpendicular to c
	return cone{centre: c, e1: e1, e2: cross(c, e1), cosRadius: math.Cos(radiusDeg * deg)}
}

// draw returns a unit vector (Galactic Cartesian: x toward l = 0, z toward
// the north Galactic pole) uniform in solid angle within the cone.
func (k cone) draw(r *rand.Rand) [3]float64 {
	ct := 1 - r.Float64()*(1-k.cosRadius)
	st := math.Sqrt(1 - ct*ct)
	sp, cp := math.Sincos(2 * math.Pi * r.Float64())
	var v [3]float64
	for i := range v {
		v[i] = ct*k.centre[i] + st*(cp*k.e1[i]+sp*k.e2[i])
	}
	return v
}
