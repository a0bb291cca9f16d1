package spin

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Scattered adds intrinsic star-to-star scatter to a law: the period is
// the law's times 10^(Dex·z), z a standard normal deviate. Stars of one
// mass and age do not all spin alike — the slow sequences of open clusters
// have a width of order 10 % in period, and the empirical laws fit their
// middle [memory of the cluster sequences the laws were fitted to]; a law
// without scatter draws every coeval star onto one ridge, which makes a
// burst look sharper than nature can.
//
// The deviate is drawn after the law's own draws and whether or not the
// law gives a period, so a stream is consumed alike for every star and
// every Dex.
type Scattered struct {
	Law
	Dex float64 // lognormal scatter, dex (≥ 0)
	// Scale multiplies every period (0 is read as 1): a shift of the
	// law's zero point, the same for every law, so that one comparison
	// scenario can fit it whichever law a sweep chooses.
	Scale float64
}

// Period implements Law.
func (s Scattered) Period(st Star, r *rand.Rand) (periodD float64, ok bool) {
	p, ok := s.Law.Period(st, r)
	z := r.NormFloat64()
	if !ok {
		return p, false
	}
	if s.Scale != 0 {
		p *= s.Scale
	}
	return p * math.Exp(math.Ln10*s.Dex*z), true
}

// Unwrap returns the law without scatter, whose period is the median of
// the scattered one (gyrochrones are drawn from it).
func (s Scattered) Unwrap() Law { return s.Law }

// Validate reports a negative or infinite scatter or scale.
func (s Scattered) Validate() error {
	if !(s.Dex >= 0) || math.IsInf(s.Dex, 1) {
		return fmt.Errorf("spin: intrinsic period scatter %g dex: want a finite value ≥ 0", s.Dex)
	}
	if !(s.Scale >= 0) || math.IsInf(s.Scale, 1) {
		return fmt.Errorf("spin: period scale %g: want a finite value > 0", s.Scale)
	}
	return nil
}
