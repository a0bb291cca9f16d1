package disk

// Field is the volume a survey observes: a set of directions, each with a
// distance range. A Sampler cuts it into Cells and tabulates the density of
// every age bin over them.
type Field interface {
	// Validate reports whether the field describes a non-empty volume.
	Validate() error
	// SolidAngleSr returns the solid angle the field covers, in steradians.
	SolidAngleSr() float64
	// VolumePc3 returns the volume the field covers, in pc³.
	VolumePc3() float64
	// Contains reports whether the point (l, b in degrees, d in pc) lies in
	// the field.
	Contains(lDeg, bDeg, dPc float64) bool
	// Cells cuts the field into solid-angle cells small enough that, at a
	// cell's largest distance, the height z = d sin b varies by about
	// cellDzPc across it. The cells tile the field without overlap.
	Cells(cellDzPc float64) []Cell
	// LatitudeSpans returns the range of Galactic latitudes each part of
	// the field covers, with its far distance limit.
	LatitudeSpans() []LatitudeSpan
}

// LatitudeSpan is a range of Galactic latitudes (degrees) a field covers
// out to a distance (pc).
type LatitudeSpan struct{ LoDeg, HiDeg, MaxDistPc float64 }
