package disk

import "math"

// ICRS → Galactic rotation.
//
// The matrix is built the way astropy 5.2 builds its ICRS → Galactic
// transform (read from astropy/coordinates/builtin_frames/galactic.py,
// galactic_transforms.py and icrs_fk5_transforms.py). First the frame bias
// from ICRS to the FK5 J2000 frame, the B-matrix with η₀ = −19.9 mas,
// ξ₀ = 9.1 mas, dα₀ = −22.9 mas (values from the astropy source; they are
// those of Kaplan 2005 [memory for the attribution]). Then the FK5 J2000 →
// Galactic rotation fixed by the north Galactic pole at
// (α, δ) = (192.8594812065348°, 27.12825118085622°) and the Galactic
// longitude of the north celestial pole, 122.9319185680026°. The frame
// bias moves positions by ~20 mas, far below any catalog's astrometric
// error, but including it makes the result agree with astropy to rounding,
// which the tests check against testdata/icrs_galactic_reference.csv.

var icrsToGalactic = buildICRSToGalactic()

// rotation returns astropy's rotation_matrix(angleDeg, axis): a rotation of
// the coordinate frame about axis 0 (x), 1 (y) or 2 (z).
func rotation(angleDeg float64, axis int) [3][3]float64 {
	rad := angleDeg * math.Pi / 180
	s, c := math.Sin(rad), math.Cos(rad)
	a1, a2 := (axis+1)%3, (axis+2)%3
	var r [3][3]float64
	r[axis][axis] = 1
	r[a1][a1] = c
	r[a1][a2] = s
	r[a2][a1] = -s
	r[a2][a2] = c
	return r
}

func mul3(a, b [3][3]float64) [3][3]float64 {
	var c [3][3]float64
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			for k := 0; k < 3; k++ {
				c[i][j] += a[i][k] * b[k][j]
			}
		}
	}
	return c
}

func buildICRSToGalactic() [3][3]float64 {
	const mas = 1.0 / 3600000 // degrees
	eta0, xi0, da0 := -19.9*mas, 9.1*mas, -22.9*mas
	bias := mul3(mul3(rotation(-eta0, 0), rotation(xi0, 1)), rotation(da0, 2))
	const raNGP, decNGP, lonNCP = 192.8594812065348, 27.12825118085622, 122.9319185680026
	gal := mul3(mul3(rotation(180-lonNCP, 2), rotation(90-decNGP, 1)), rotation(raNGP, 2))
	return mul3(gal, bias)
}

// ICRSToGalactic converts ICRS right ascension and declination (degrees)
// to Galactic longitude l ∈ [0, 360) and latitude b ∈ [−90, 90] (degrees).
func ICRSToGalactic(raDeg, decDeg float64) (lDeg, bDeg float64) {
	ra, dec := raDeg*math.Pi/180, decDeg*math.Pi/180
	cd := math.Cos(dec)
	v := [3]float64{cd * math.Cos(ra), cd * math.Sin(ra), math.Sin(dec)}
	var g [3]float64
	for i := range g {
		g[i] = icrsToGalactic[i][0]*v[0] + icrsToGalactic[i][1]*v[1] + icrsToGalactic[i][2]*v[2]
	}
	lDeg = math.Atan2(g[1], g[0]) * 180 / math.Pi
	if lDeg < 0 {
		lDeg += 360
	}
	if lDeg >= 360 {
		lDeg -= 360
	}
	bDeg = math.Atan2(g[2], math.Hypot(g[0], g[1])) * 180 / math.Pi
	return lDeg, bDeg
}

// GalacticToICRS is the inverse of ICRSToGalactic: the transpose of the
// same rotation. Used to give simulated and mock catalogs sky positions.
func GalacticToICRS(lDeg, bDeg float64) (raDeg, decDeg float64) {
	l, b := lDeg*math.Pi/180, bDeg*math.Pi/180
	cb := math.Cos(b)
	g := [3]float64{cb * math.Cos(l), cb * math.Sin(l), math.Sin(b)}
	var v [3]float64
	for i := range v {
		v[i] = icrsToGalactic[0][i]*g[0] + icrsToGalactic[1][i]*g[1] + icrsToGalactic[2][i]*g[2]
	}
	raDeg = math.Atan2(v[1], v[0]) * 180 / math.Pi
	if raDeg < 0 {
		raDeg += 360
	}
	if raDeg >= 360 {
		raDeg -= 360
	}
	decDeg = math.Atan2(v[2], math.Hypot(v[0], v[1])) * 180 / math.Pi
	return raDeg, decDeg
}
