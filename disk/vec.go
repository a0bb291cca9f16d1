package disk

import "math"

// vec3 is a Cartesian vector in the heliocentric Galactic frame.
type vec3 struct{ x, y, z float64 }

func (a vec3) add(b vec3) vec3      { return vec3{a.x + b.x, a.y + b.y, a.z + b.z} }
func (a vec3) scale(s float64) vec3 { return vec3{s * a.x, s * a.y, s * a.z} }
func (a vec3) dot(b vec3) float64   { return a.x*b.x + a.y*b.y + a.z*b.z }
func (a vec3) cross(b vec3) vec3 {
	return vec3{a.y*b.z - a.z*b.y, a.z*b.x - a.x*b.z, a.x*b.y - a.y*b.x}
}
func (a vec3) norm() float64 { return math.Sqrt(a.dot(a)) }

// unitLB returns the unit vector toward Galactic (l, b) in degrees.
func unitLB(lDeg, bDeg float64) vec3 {
	x, y, z := HelioCartesian(lDeg, bDeg, 1)
	return vec3{x, y, z}
}

// angleBetween returns the angle between a and b in radians, accurate for
// small and large angles alike.
func angleBetween(a, b vec3) float64 { return math.Atan2(a.cross(b).norm(), a.dot(b)) }

// latitudeOf returns the Galactic latitude of the unit vector v in radians.
func latitudeOf(v vec3) float64 { return math.Asin(clamp(v.z, -1, 1)) }

func clamp(x, lo, hi float64) float64 { return math.Max(lo, math.Min(hi, x)) }

// nonNeg returns x, or 0 if x < 0; for the hot path, where math.Max is a
// call (it sorts out NaN and signed zeros, which cannot occur there).
func nonNeg(x float64) float64 {
	if x < 0 {
		return 0
	}
	return x
}

// clampUnit returns x clamped to [−1, 1]; for the hot path, like nonNeg.
func clampUnit(x float64) float64 {
	if x > 1 {
		return 1
	}
	if x < -1 {
		return -1
	}
	return x
}
