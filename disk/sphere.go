package disk

import (
	"fmt"
	"math"
)

// Sphere is an all-sky field: every direction, distances DistMinPc to
// RadiusPc. It stands for a volume-limited sample around the Sun.
type Sphere struct {
	RadiusPc  float64
	DistMinPc float64
}

// LatitudeSpans implements Field: every latitude.
func (s Sphere) LatitudeSpans() []LatitudeSpan { return []LatitudeSpan{{-90, 90, s.RadiusPc}} }

// Validate reports whether 0 ≤ DistMinPc < RadiusPc < ∞.
func (s Sphere) Validate() error {
	if !(s.RadiusPc > 0) || math.IsInf(s.RadiusPc, 0) {
		return fmt.Errorf("disk: Sphere RadiusPc = %v pc; want a positive, finite radius", s.RadiusPc)
	}
	if !(s.DistMinPc >= 0 && s.DistMinPc < s.RadiusPc) {
		return fmt.Errorf("disk: Sphere DistMinPc = %v pc with RadiusPc = %v pc; want 0 ≤ DistMinPc < RadiusPc", s.DistMinPc, s.RadiusPc)
	}
	return nil
}

// SolidAngleSr returns 4π.
func (s Sphere) SolidAngleSr() float64 { return 4 * math.Pi }

// VolumePc3 returns the volume of the spherical shell in pc³.
func (s Sphere) VolumePc3() float64 {
	return 4 * math.Pi / 3 * (s.RadiusPc*s.RadiusPc*s.RadiusPc - s.DistMinPc*s.DistMinPc*s.DistMinPc)
}

// Contains reports whether DistMinPc ≤ dPc ≤ RadiusPc.
func (s Sphere) Contains(lDeg, bDeg, dPc float64) bool {
	return dPc >= s.DistMinPc && dPc <= s.RadiusPc
}

// Cells cuts the sphere into strips of equal width in sin b (equal solid
// angle), each spanning all longitudes: the density depends on direction
// only through b, so strips lose nothing. A strip's width is cellDzPc/R in
// sin b, so heights at the outer radius R vary by cellDzPc across it.
func (s Sphere) Cells(cellDzPc float64) []Cell {
	n := int(math.Ceil(2 * s.RadiusPc / cellDzPc))
	n = max(n, 1)
	pole, e1, e2 := vec3{0, 0, 1}, vec3{1, 0, 0}, vec3{0, 1, 0}
	cells := make([]Cell, n)
	for i := range cells {
		// Strip i covers sin b in [−1 + iΔ, −1 + (i+1)Δ]; ρ is the colatitude.
		lo := -1 + 2*float64(i)/float64(n)
		hi := -1 + 2*float64(i+1)/float64(n)
		if i == n-1 {
			hi = 1
		}
		cells[i] = newCell(pole, e1, e2, math.Acos(hi), math.Acos(lo), 0, 2*math.Pi, s.DistMinPc, s.RadiusPc, true)
		cells[i].sinBMin, cells[i].sinBMax = lo, hi
		cells[i].cMin, cells[i].cMax = lo, hi
	}
	return cells
}
