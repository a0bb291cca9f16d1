package othermodel

import "math"

// Solar constants, IAU 2015 Resolution B3 (nominal T_eff) and B2 (M_bol).
const (
	solarTeffK  = 5772.0
	solarMbol   = 4.74
	msLifeSunGy = 10.0 // main-sequence lifetime of the Sun (common practice)
)

// LuminosityLsun is the textbook piecewise mass–luminosity power law:
// L = 0.23 M^2.3 below 0.43 M☉, L = M^4 from 0.43 to 2 M☉, L = 1.4 M^3.5
// above. Source: Duric (2004), Advanced Astrophysics, CUP, §1.5 (from
// memory; the widely quoted form).
func LuminosityLsun(massMsun float64) float64 {
	switch {
	case massMsun < 0.43:
		return 0.23 * math.Pow(massMsun, 2.3)
	case massMsun < 2:
		return math.Pow(massMsun, 4)
	default:
		return 1.4 * math.Pow(massMsun, 3.5)
	}
}

// RadiusRsun is the lower-main-sequence mass–radius approximation
// R = M^0.8 (R☉, M☉). Source: the common textbook power law, e.g. Carroll
// & Ostlie (2007), An Introduction to Modern Astrophysics, ch. 10 (from
// memory); it holds roughly for 0.1–1.4 M☉, the range used here.
func RadiusRsun(massMsun float64) float64 {
	return math.Pow(massMsun, 0.8)
}

// TeffK is the effective temperature from L = 4πR²σT⁴ in solar units:
// T = T☉ (L/R²)^¼.
func TeffK(lumLsun, radiusRsun float64) float64 {
	return solarTeffK * math.Pow(lumLsun/(radiusRsun*radiusRsun), 0.25)
}

// BVFromTeff inverts the relation of Ballesteros (2012), EPL 97, 34008:
// T = 4600 K [1/(0.92 x + 1.7) + 1/(0.92 x + 0.62)], x = B−V. With
// t = T/4600 K and y = 0.92 x this is t y² + (2.32 t − 2) y + (1.054 t − 2.32) = 0,
// whose larger root is the physical one.
func BVFromTeff(teffK float64) float64 {
	t := teffK / 4600
	b, c := 2.32*t-2, 1.054*t-2.32
	y := (-b + math.Sqrt(b*b-4*t*c)) / (2 * t)
	return y / 0.92
}

// BolometricCorrectionV is the polynomial in log T_eff of Flower (1996),
// ApJ 469, 355, with the coefficients as corrected by Torres (2010), AJ 140,
// 1158, Table 1.
func BolometricCorrectionV(teffK float64) float64 {
	lt := math.Log10(teffK)
	var c []float64
	switch {
	case lt < 3.70:
		c = []float64{-0.190537291496456e5, 0.155144866764412e5, -0.421278819301717e4, 0.381476328422343e3}
	case lt < 3.90:
		c = []float64{-0.370510203809015e5, 0.385672629965804e5, -0.150651486316025e5, 0.261724637119416e4, -0.170623810323864e3}
	default:
		c = []float64{-0.118115450538963e6, 0.137145973583929e6, -0.636233812100225e5, 0.147412923562646e5, -0.170587278406872e4, 0.788731721804990e2}
	}
	bc := 0.0
	for i := len(c) - 1; i >= 0; i-- { // Horner
		bc = bc*lt + c[i]
	}
	return bc
}

// AbsMagV is M_V = M_bol − BC_V with M_bol = 4.74 − 2.5 log10 L (IAU 2015
// Resolution B2 zero point).
func AbsMagV(lumLsun, teffK float64) float64 {
	return solarMbol - 2.5*math.Log10(lumLsun) - BolometricCorrectionV(teffK)
}

// MSLifetimeGyr scales the nuclear timescale, t ∝ M/L, to 10 Gyr for the
// Sun (common practice, no source).
func MSLifetimeGyr(massMsun float64) float64 {
	return msLifeSunGy * massMsun / LuminosityLsun(massMsun)
}

// Dwarf is what the relations give for one mass.
type Dwarf struct {
	LumLsun, RadiusRsun, TeffK, BV, AbsMagV float64
}

// DwarfOfMass chains the relations: mass → L, R → T_eff → B−V, M_V.
func DwarfOfMass(massMsun float64) Dwarf {
	l, r := LuminosityLsun(massMsun), RadiusRsun(massMsun)
	t := TeffK(l, r)
	return Dwarf{LumLsun: l, RadiusRsun: r, TeffK: t, BV: BVFromTeff(t), AbsMagV: AbsMagV(l, t)}
}
