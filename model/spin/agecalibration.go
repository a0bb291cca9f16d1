package spin

import "math"

// AgeCalibration returns the 1σ uncertainty of ln(age) that the
// uncertainties of the law's coefficients carry into an age read off the
// law at color bv, for a star of age ageGyr: the calibration error of a
// gyrochronological age, which no catalog of field stars can reduce (a
// field has no ages of its own to calibrate the law with). Inverting
// P = A (x − C)^B t^N at fixed period,
//
//	ln t = (ln P − ln A − B ln(x − C)) / N,
//
// and propagating the coefficients' uncertainties as independent to first
// order (common practice for gyrochronology ages; the published fits give
// one uncertainty per coefficient, not their covariance):
//
//	σ²(ln t) = (σ_A/(N A))² + (σ_B ln(x−C)/N)² + (σ_C B/(N (x−C)))² + (σ_N ln t/N)²,
//
// t in Myr as the law is written. ok is false for a law without published
// uncertainties (the torque law) or a color or age the law refuses.
// Scattered laws are unwrapped.
func AgeCalibration(law Law, bv, ageGyr float64) (sigmaLn float64, ok bool) {
	for {
		u, wrapped := law.(interface{ Unwrap() Law })
		if !wrapped {
			break
		}
		law = u.Unwrap()
	}
	g, isGyro := law.(GyroLaw)
	if !isGyro || g.Uncertainty == (Coefficients{}) {
		return math.NaN(), false
	}
	if _, inRange := g.PeriodAt(bv, ageGyr); !inRange {
		return math.NaN(), false
	}
	u := g.Uncertainty
	lx := math.Log(bv - g.C)
	lt := math.Log(1000 * ageGyr)
	terms := [4]float64{
		u.A / (g.N * g.A),
		u.B * lx / g.N,
		u.C * g.B / (g.N * (bv - g.C)),
		u.N * lt / g.N,
	}
	var s2 float64
	for _, t := range terms {
		s2 += t * t
	}
	return math.Sqrt(s2), true
}
