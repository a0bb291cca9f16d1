package disk

import (
	"fmt"
	"math"
)

// Cone is a circular field of angular radius RadiusDeg about (LDeg, BDeg),
// observed between distances DistMinPc and DistMaxPc.
type Cone struct {
	LDeg, BDeg           float64
	RadiusDeg            float64
	DistMinPc, DistMaxPc float64
}

// LatitudeSpans implements Field: a cone about latitude b of radius r
// spans b − r to b + r (clipped at the poles, which it then covers).
func (c Cone) LatitudeSpans() []LatitudeSpan {
	return []LatitudeSpan{{math.Max(c.BDeg-c.RadiusDeg, -90), math.Min(c.BDeg+c.RadiusDeg, 90), c.DistMaxPc}}
}

// Validate reports whether the cone has a valid centre, a radius in
// (0, 180] degrees and distances 0 ≤ DistMinPc < DistMaxPc < ∞.
func (c Cone) Validate() error {
	if math.IsNaN(c.LDeg) || math.IsInf(c.LDeg, 0) {
		return fmt.Errorf("disk: Cone LDeg = %v; want a finite longitude in degrees", c.LDeg)
	}
	if !(c.BDeg >= -90 && c.BDeg <= 90) {
		return fmt.Errorf("disk: Cone BDeg = %v; want a latitude in [−90, 90] degrees", c.BDeg)
	}
	if !(c.RadiusDeg > 0 && c.RadiusDeg <= 180) {
		return fmt.Errorf("disk: Cone RadiusDeg = %v; want an angular radius in (0, 180] degrees", c.RadiusDeg)
	}
	if !(c.DistMaxPc > 0) || math.IsInf(c.DistMaxPc, 0) {
		return fmt.Errorf("disk: Cone DistMaxPc = %v pc; want a positive, finite distance", c.DistMaxPc)
	}
	if !(c.DistMinPc >= 0 && c.DistMinPc < c.DistMaxPc) {
		return fmt.Errorf("disk: Cone DistMinPc = %v pc with DistMaxPc = %v pc; want 0 ≤ DistMinPc < DistMaxPc", c.DistMinPc, c.DistMaxPc)
	}
	return nil
}

// SolidAngleSr returns 2π(1 − cos r).
func (c Cone) SolidAngleSr() float64 {
	return 2 * math.Pi * (1 - math.Cos(c.RadiusDeg*degToRad))
}

// VolumePc3 returns Ω (d_max³ − d_min³)/3.
func (c Cone) VolumePc3() float64 {
	return c.SolidAngleSr() * (c.DistMaxPc*c.DistMaxPc*c.DistMaxPc - c.DistMinPc*c.DistMinPc*c.DistMinPc) / 3
}

// Contains reports whether (l, b, d) lies within the cone's angular radius
// and distance range.
func (c Cone) Contains(lDeg, bDeg, dPc float64) bool {
	if dPc < c.DistMinPc || dPc > c.DistMaxPc {
		return false
	}
	return angleBetween(unitLB(c.LDeg, c.BDeg), unitLB(lDeg, bDeg)) <= c.RadiusDeg*degToRad
}

// frame returns the cone's axis and two unit vectors perpendicular to it
// (toward increasing b and increasing l at the centre).
func (c Cone) frame() (pole, e1, e2 vec3) {
	sl, cl := math.Sincos(c.LDeg * degToRad)
	sb, cb := math.Sincos(c.BDeg * degToRad)
	pole = vec3{cb * cl, cb * sl, sb}
	e1 = vec3{-sb * cl, -sb * sl, cb}
	e2 = pole.cross(e1)
	return pole, e1, e2
}

// Cells cuts the cone into rings about its axis, each split into sectors,
// with cells about cellDzPc/DistMaxPc radians across: a central cap, then
// rings of equal width whose sectors are about as long as the rings are
// wide (at least three per ring, so a sector spans less than π in azimuth).
func (c Cone) Cells(cellDzPc float64) []Cell {
	size := cellDzPc / c.DistMaxPc
	radius := c.RadiusDeg * degToRad
	nRings := max(int(math.Ceil(radius/size)), 1)
	dRho := radius / float64(nRings)
	pole, e1, e2 := c.frame()
	var cells []Cell
	for i := range nRings {
		rho1, rho2 := float64(i)*dRho, float64(i+1)*dRho
		if i == nRings-1 {
			rho2 = radius
		}
		nPhi := 1
		if i > 0 {
			widest := math.Max(math.Sin(rho1), math.Sin(rho2))
			if rho1 <= math.Pi/2 && rho2 >= math.Pi/2 {
				widest = 1
			}
			nPhi = max(3, int(math.Ceil(2*math.Pi*widest/size)))
		}
		for j := range nPhi {
			phi1 := 2 * math.Pi * float64(j) / float64(nPhi)
			phi2 := 2 * math.Pi * float64(j+1) / float64(nPhi)
			cells = append(cells, newCell(pole, e1, e2, rho1, rho2, phi1, phi2, c.DistMinPc, c.DistMaxPc, false))
		}
	}
	return cells
}

// ConeList is a field made of several cones, for a survey of separate
// pointings. Cones may share directions only if their distance ranges do
// not overlap, so no volume is counted twice.
type ConeList []Cone

// LatitudeSpans implements Field: each cone's span.
func (cl ConeList) LatitudeSpans() []LatitudeSpan {
	var out []LatitudeSpan
	for _, c := range cl {
		out = append(out, c.LatitudeSpans()...)
	}
	return out
}

// Validate reports whether the list is non-empty, every cone is valid and no
// two cones overlap in both direction and distance.
func (cl ConeList) Validate() error {
	if len(cl) == 0 {
		return fmt.Errorf("disk: ConeList is empty; want at least one cone")
	}
	for i, c := range cl {
		if err := c.Validate(); err != nil {
			return fmt.Errorf("cone %d: %w", i, err)
		}
	}
	for i := range cl {
		for j := i + 1; j < len(cl); j++ {
			a, b := cl[i], cl[j]
			sep := angleBetween(unitLB(a.LDeg, a.BDeg), unitLB(b.LDeg, b.BDeg)) * radToDeg
			if sep < a.RadiusDeg+b.RadiusDeg && a.DistMinPc < b.DistMaxPc && b.DistMinPc < a.DistMaxPc {
				return fmt.Errorf("disk: ConeList cones %d and %d overlap (centres %.4g° apart, radii %.4g° and %.4g°, distance ranges overlap); want disjoint cones so no volume is counted twice", i, j, sep, a.RadiusDeg, b.RadiusDeg)
			}
		}
	}
	return nil
}

// SolidAngleSr returns the summed solid angle of the cones.
func (cl ConeList) SolidAngleSr() float64 {
	s := 0.0
	for _, c := range cl {
		s += c.SolidAngleSr()
	}
	return s
}

// VolumePc3 returns the summed volume of the cones.
func (cl ConeList) VolumePc3() float64 {
	v := 0.0
	for _, c := range cl {
		v += c.VolumePc3()
	}
	return v
}

// Contains reports whether any cone contains the point.
func (cl ConeList) Contains(lDeg, bDeg, dPc float64) bool {
	for _, c := range cl {
		if c.Contains(lDeg, bDeg, dPc) {
			return true
		}
	}
	return false
}

// Cells returns the cells of all cones, each cut for its own largest
// distance.
func (cl ConeList) Cells(cellDzPc float64) []Cell {
	var cells []Cell
	for _, c := range cl {
		cells = append(cells, c.Cells(cellDzPc)...)
	}
	return cells
}
