package spin

import (
	"fmt"
	"math"
)

// StallOptions parameterise a temporary stall of the observed spin-down, the
// idea of Spada & Lanzafame (2020, A&A 636, A76): in a core–envelope
// picture, angular momentum resurfacing from a decoupled radiative core
// offsets the wind torque on the envelope for a while, and the coupling
// time grows toward low mass. Here that is not integrated; its outcome is
// prescribed. Braking of the envelope pauses from StartGyr(m) for
// DurationGyr(m) and then resumes where it stopped:
//
//	StartGyr(m)    = StartGyrAtPivot    (m/PivotMsun)^(−StartMassSlope)
//	DurationGyr(m) = DurationGyrAtPivot (m/PivotMsun)^(−DurationMassSlope) × f(m)
//
// with f = 1 for m ≤ PivotMsun, falling linearly to 0 at CutoffMsun and 0
// above: G dwarfs keep spinning down while K dwarfs pause, which piles K
// dwarfs up at one period over an age range and can open a gap in the
// period–color plane.
//
// With CatchUpFraction = c > 0 the pause is followed by a catch-up of
// length c·DurationGyr(m) during which the effective age runs (1 + 1/c)
// times faster than the age, so the star rejoins the unpaused track: a
// fast transit in period, the prescribed counterpart of the rapid spin-down
// that follows recoupling in two-zone models. A pile-up during the pause
// and a sparse band during the catch-up together open a gap above the
// stalled sequence.
//
// Because the pause multiplies the braking by a factor that depends on time
// only, the spin evolution stays separable: a paused star is exactly the
// unpaused star at the effective age τ(t) = t − (time spent paused by t).
// The law therefore evaluates the stall in closed form at that effective
// age; no grid is needed and no interpolation error is made.
type StallOptions struct {
	Enabled            bool
	PivotMsun          float64 // mass at which the two scales are quoted (M☉)
	StartGyrAtPivot    float64 // age the pause begins at the pivot mass (Gyr)
	DurationGyrAtPivot float64 // length of the pause at the pivot mass (Gyr)
	StartMassSlope     float64 // start ∝ m^(−slope); ≥ 0 so it grows toward low mass
	DurationMassSlope  float64 // duration ∝ m^(−slope); ≥ 0 so it grows toward low mass
	CutoffMsun         float64 // no pause at or above this mass (M☉)
	// CatchUpFraction, when > 0, makes the star regain the lost time after
	// the pause: over CatchUpFraction × DurationGyr(m) its effective age
	// runs faster than its age, until it rejoins the unpaused track. 0 means
	// the star stays behind by the pause length for good.
	CatchUpFraction float64
}

// DefaultStallOptions returns a stall (disabled) whose window at 0.75–0.8 M☉
// spans roughly 0.5–1.2 Gyr, which is where K dwarfs of a ~650 Myr and a
// ~1 Gyr open cluster share one sequence [memory of the cluster literature
// after 2019; the numbers are a starting point for fits, not a result].
func DefaultStallOptions() StallOptions {
	return StallOptions{
		Enabled:            false,
		PivotMsun:          0.8,
		StartGyrAtPivot:    0.5,
		DurationGyrAtPivot: 0.6,
		StartMassSlope:     2,
		DurationMassSlope:  2,
		CutoffMsun:         1.0,
	}
}

// Validate reports parameters that cannot describe a stall. Disabled
// options are not checked.
func (o StallOptions) Validate() error {
	if !o.Enabled {
		return nil
	}
	switch {
	case !(o.PivotMsun > 0):
		return fmt.Errorf("spin: stall PivotMsun must be positive, got %g", o.PivotMsun)
	case !(o.CutoffMsun > o.PivotMsun):
		return fmt.Errorf("spin: stall CutoffMsun must exceed PivotMsun (%g), got %g", o.PivotMsun, o.CutoffMsun)
	case !(o.StartGyrAtPivot >= 0) || math.IsInf(o.StartGyrAtPivot, 1):
		return fmt.Errorf("spin: stall StartGyrAtPivot must be finite and ≥ 0, got %g", o.StartGyrAtPivot)
	case !(o.DurationGyrAtPivot >= 0) || math.IsInf(o.DurationGyrAtPivot, 1):
		return fmt.Errorf("spin: stall DurationGyrAtPivot must be finite and ≥ 0, got %g", o.DurationGyrAtPivot)
	case !(o.StartMassSlope >= 0) || math.IsInf(o.StartMassSlope, 1):
		return fmt.Errorf("spin: stall StartMassSlope must be finite and ≥ 0 (the pause starts later at low mass), got %g", o.StartMassSlope)
	case !(o.DurationMassSlope >= 0) || math.IsInf(o.DurationMassSlope, 1):
		return fmt.Errorf("spin: stall DurationMassSlope must be finite and ≥ 0 (the pause lasts longer at low mass), got %g", o.DurationMassSlope)
	case !(o.CatchUpFraction >= 0) || math.IsInf(o.CatchUpFraction, 1):
		return fmt.Errorf("spin: stall CatchUpFraction must be finite and ≥ 0, got %g", o.CatchUpFraction)
	}
	return nil
}

// StartGyr returns the age (Gyr) at which braking pauses for mass m.
func (o StallOptions) StartGyr(massMsun float64) float64 {
	return o.StartGyrAtPivot * math.Exp(-o.StartMassSlope*math.Log(massMsun/o.PivotMsun))
}

// DurationGyr returns how long (Gyr) braking pauses for mass m; zero when
// the stall is disabled or m ≥ CutoffMsun.
func (o StallOptions) DurationGyr(massMsun float64) float64 {
	if !o.Enabled || massMsun >= o.CutoffMsun {
		return 0
	}
	return o.duration(massMsun, math.Log(massMsun/o.PivotMsun))
}

// duration is DurationGyr for an enabled stall below the cutoff, given
// lnM = ln(m/PivotMsun).
func (o StallOptions) duration(massMsun, lnM float64) float64 {
	d := o.DurationGyrAtPivot * math.Exp(-o.DurationMassSlope*lnM)
	if massMsun > o.PivotMsun {
		d *= (o.CutoffMsun - massMsun) / (o.CutoffMsun - o.PivotMsun)
	}
	return d
}

// effectiveAge maps age t to the age an unpaused star would need to reach
// the same spin: t before the pause, the start age during it, t minus the
// duration after it.
func (o StallOptions) effectiveAge(massMsun, ageGyr float64) float64 {
	if !o.Enabled || massMsun >= o.CutoffMsun {
		return ageGyr
	}
	lnM := math.Log(massMsun / o.PivotMsun)
	start := o.StartGyrAtPivot * math.Exp(-o.StartMassSlope*lnM)
	if ageGyr <= start {
		return ageGyr
	}
	d := o.duration(massMsun, lnM)
	if ageGyr <= start+d {
		return start
	}
	if c := o.CatchUpFraction * d; c > 0 {
		if ageGyr <= start+d+c {
			return start + (ageGyr-start-d)*(d+c)/c
		}
		return ageGyr
	}
	return ageGyr - d
}
