package spin

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// GyroLaw is an empirical gyrochronology relation
//
//	P = A (B−V − C)^B t^N,  t in Myr, P in days,
//
// fitted to the slow-rotator sequence of open clusters and the Sun. Such a
// fit says nothing about stars off the sequence or outside its calibration,
// so Period refuses colors and ages outside [MinBV, MaxBV] and
// [MinAgeGyr, MaxAgeGyr] instead of extrapolating.
//
// The fields are exported so a scenario can narrow or widen the ranges; the
// constructors give the published coefficients.
type GyroLaw struct {
	LawName    string
	A, B, C, N float64
	// Uncertainty holds the published 1σ uncertainties of the coefficients
	// (a symmetric average where they are asymmetric), the default widths
	// of their priors when they are fitted as nuisance parameters.
	Uncertainty          Coefficients
	MinBV, MaxBV         float64 // accepted Johnson B−V range (mag), inclusive
	MinAgeGyr, MaxAgeGyr float64 // accepted age range (Gyr), inclusive
	// Stall, when enabled, evaluates the relation at the stalled star's
	// effective age (see StallOptions) instead of its age: the same pause
	// as the torque law's, on the same relation as a burst is fitted
	// with, so that a burst and a stall can be compared with nothing else
	// changed. The calibrated age range still applies to the true age.
	Stall StallOptions
}

// Coefficients are the four numbers of an empirical law, or their
// uncertainties.
type Coefficients struct{ A, B, C, N float64 }

// Age range shared by the empirical laws. The youngest calibrating clusters
// are ~0.1 Gyr old, when the slow sequence of G dwarfs has formed
// [memory]; the upper end is the age of the Universe, since the laws are
// routinely applied beyond the solar age and the main-sequence lifetime cut
// is the population generator's job.
const (
	gyroMinAgeGyr = 0.1
	gyroMaxAgeGyr = 13.8
)

// Barnes2007 returns the relation of Barnes (2007, ApJ 669, 1167):
// a = 0.7725, b = 0.601, c = 0.4, n = 0.5189. Accepted colors
// 0.45 ≤ B−V ≤ 1.6, the late-F to early-M extent of the I sequence in
// young clusters [memory; edges uncertain by ~0.1 mag].
func Barnes2007() GyroLaw {
	return GyroLaw{
		LawName: "barnes2007",
		A:       0.7725, B: 0.601, C: 0.4, N: 0.5189,
		// a ± 0.011, b ± 0.024, n ± 0.0070 as published [memory]; c was
		// held at 0.4 in the fit, so its width is a judgement (0.02 mag,
		// the scatter of the color zero points of the calibrating
		// clusters).
		Uncertainty: Coefficients{A: 0.011, B: 0.024, C: 0.02, N: 0.0070},
		MinBV:       0.45, MaxBV: 1.6,
		MinAgeGyr: gyroMinAgeGyr, MaxAgeGyr: gyroMaxAgeGyr,
	}
}

// MamajekHillenbrand2008 returns the relation of Mamajek & Hillenbrand
// (2008, ApJ 687, 1264): a = 0.407, b = 0.325, c = 0.495, n = 0.566.
// Accepted colors 0.5 ≤ B−V ≤ 1.4 [memory: the fit's cluster stars span
// roughly F7 to mid-K; the lower edge sits just above c = 0.495, where the
// relation runs to zero period].
func MamajekHillenbrand2008() GyroLaw {
	return GyroLaw{
		LawName: "mamajek2008",
		A:       0.407, B: 0.325, C: 0.495, N: 0.566,
		// a ± 0.021, b ± 0.024, c ± 0.010, n ± 0.008 as published [memory].
		Uncertainty: Coefficients{A: 0.021, B: 0.024, C: 0.010, N: 0.008},
		MinBV:       0.5, MaxBV: 1.4,
		MinAgeGyr: gyroMinAgeGyr, MaxAgeGyr: gyroMaxAgeGyr,
	}
}

// Angus2015 returns the relation of Angus et al. (2015, MNRAS 450, 1787):
// a = 0.40, b = 0.31, c = 0.45, n = 0.55 [memory]. Accepted colors
// 0.5 ≤ B−V ≤ 1.4 [memory: the calibration rests on asteroseismic F/G
// dwarfs and cluster G/K dwarfs; the lower edge keeps clear of c = 0.45].
func Angus2015() GyroLaw {
	return GyroLaw{
		LawName: "angus2015",
		A:       0.40, B: 0.31, C: 0.45, N: 0.55,
		// a +0.3/−0.05, b +0.05/−0.02, n +0.02/−0.09 as published
		// [memory], averaged to symmetric widths; c was held fixed, its
		// width a judgement as for Barnes (2007).
		Uncertainty: Coefficients{A: 0.175, B: 0.035, C: 0.02, N: 0.055},
		MinBV:       0.5, MaxBV: 1.4,
		MinAgeGyr: gyroMinAgeGyr, MaxAgeGyr: gyroMaxAgeGyr,
	}
}

// Name implements Law.
func (g GyroLaw) Name() string { return g.LawName }

// Period implements Law. It reads s.BV and s.AgeGyr (and s.MassMsun with
// a stall) and draws nothing from r: an empirical law is deterministic.
func (g GyroLaw) Period(s Star, _ *rand.Rand) (periodD float64, ok bool) {
	if !g.inRange(s.BV, s.AgeGyr) {
		return math.NaN(), false
	}
	age := s.AgeGyr
	if g.Stall.Enabled {
		age = g.Stall.effectiveAge(s.MassMsun, age)
	}
	return g.relation(s.BV, age), true
}

// PeriodAt evaluates the relation at a color and an age in Gyr (no stall).
func (g GyroLaw) PeriodAt(bv, ageGyr float64) (periodD float64, ok bool) {
	if !g.inRange(bv, ageGyr) {
		return math.NaN(), false
	}
	return g.relation(bv, ageGyr), true
}

// inRange reports whether a color and an age lie in the calibrated range.
func (g GyroLaw) inRange(bv, ageGyr float64) bool {
	return bv >= g.MinBV && bv <= g.MaxBV && ageGyr >= g.MinAgeGyr && ageGyr <= g.MaxAgeGyr
}

// relation is A (B−V − C)^B (1000 t)^N: one exp of a sum of logs instead
// of two Pow calls, the same to rounding at half the cost.
func (g GyroLaw) relation(bv, ageGyr float64) float64 {
	return g.A * math.Exp(g.B*math.Log(bv-g.C)+g.N*math.Log(1000*ageGyr))
}

// Validate reports coefficients or ranges that cannot describe a
// spin-down law.
func (g GyroLaw) Validate() error {
	switch {
	case g.LawName == "":
		return fmt.Errorf("spin: gyrochronology law has no name")
	case !(g.A > 0) || !(g.B > 0) || !(g.N > 0):
		return fmt.Errorf("spin: law %q: a, b and n must be positive, got a=%g b=%g n=%g", g.LawName, g.A, g.B, g.N)
	case !(g.MinBV > g.C) || !(g.MaxBV > g.MinBV):
		return fmt.Errorf("spin: law %q: need c < MinBV < MaxBV, got c=%g MinBV=%g MaxBV=%g", g.LawName, g.C, g.MinBV, g.MaxBV)
	case !(g.MinAgeGyr > 0) || !(g.MaxAgeGyr > g.MinAgeGyr):
		return fmt.Errorf("spin: law %q: need 0 < MinAgeGyr < MaxAgeGyr, got %g and %g", g.LawName, g.MinAgeGyr, g.MaxAgeGyr)
	}
	return g.Stall.Validate()
}

// CalibratedColors returns the intrinsic B−V range law accepts, for the
// laws that have one (the empirical ones; also through the intrinsic
// scatter a scenario may add), and false for the others.
func CalibratedColors(law Law) (minBV, maxBV float64, ok bool) {
	if s, scattered := law.(Scattered); scattered {
		law = s.Law
	}
	if g, gyro := law.(GyroLaw); gyro {
		return g.MinBV, g.MaxBV, true
	}
	return 0, 0, false
}
