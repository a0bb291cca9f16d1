package othermodel

import (
	"fmt"
	"math"
)

// Stall pauses the gyrochronology law's clock for K dwarfs: a smooth
// history whose slow rotators still pile up at one period, without a
// burst. This model's own toy, not an integration of any torque: what is
// observed [memory] is that K dwarfs of a cluster of about 1 Gyr rotate at
// the periods of those of a cluster of about 0.65 Gyr while the G dwarfs
// have spun down as usual (Curtis et al. 2019, ApJ 879, 49), and that
// they spin down again later (Curtis et al. 2020, ApJ 904, 140). Here the
// law is evaluated at the age
//
//	τ = t − h(B−V) · min(max(t − Start, 0), Duration),
//
// so a fully stalled star keeps its period from Start to Start + Duration
// and then spins down again, Duration behind for good (no catch-up).
// h is 1 for intrinsic B−V in [FullMinBV, FullMaxBV] and falls linearly
// to 0 over TaperMag on either side (spinpop's stall is prescribed in
// mass, tapers as a half cosine and lets the stars catch up).
type Stall struct {
	StartGyr, DurationGyr float64
	FullMinBV, FullMaxBV  float64
	TaperMag              float64
}

// KDwarfStall is a pause from 0.6 Gyr for 0.5 Gyr, full for B−V 0.95–1.30
// (K dwarfs of roughly 4300–5000 K) and gone 0.15 mag beyond.
func KDwarfStall() Stall {
	return Stall{StartGyr: 0.6, DurationGyr: 0.5, FullMinBV: 0.95, FullMaxBV: 1.30, TaperMag: 0.15}
}

// strength is h(B−V).
func (s Stall) strength(bv float64) float64 {
	switch {
	case bv >= s.FullMinBV && bv <= s.FullMaxBV:
		return 1
	case s.TaperMag <= 0:
		return 0
	case bv < s.FullMinBV:
		return math.Max(0, 1-(s.FullMinBV-bv)/s.TaperMag)
	default:
		return math.Max(0, 1-(bv-s.FullMaxBV)/s.TaperMag)
	}
}

// LawAgeGyr is the age τ at which the law is evaluated for a star of
// intrinsic color bv and age ageGyr.
func (s Stall) LawAgeGyr(bv, ageGyr float64) float64 {
	lost := math.Min(math.Max(ageGyr-s.StartGyr, 0), s.DurationGyr)
	return ageGyr - s.strength(bv)*lost
}

// validate names the first field that would make the law's age wrong.
func (s Stall) validate() error {
	switch {
	case !(s.StartGyr > 0 && s.DurationGyr >= 0):
		return fmt.Errorf("othermodel: Stall needs StartGyr > 0 and DurationGyr ≥ 0 (have %g, %g)", s.StartGyr, s.DurationGyr)
	case !(s.FullMaxBV >= s.FullMinBV && s.TaperMag >= 0):
		return fmt.Errorf("othermodel: Stall needs FullMinBV ≤ FullMaxBV and TaperMag ≥ 0 (have %g, %g, %g)", s.FullMinBV, s.FullMaxBV, s.TaperMag)
	}
	return nil
}
