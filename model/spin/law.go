// Package spin holds spin-down laws: how a star's rotation period depends on
// its mass, color and age. Every law satisfies Law, so the population
// generator does not care whether a period comes from an empirical
// gyrochronology fit or from integrating a wind torque.
package spin

import "math/rand/v2"

// Star is what a spin-down law may know about one star.
type Star struct {
	MassMsun float64 // stellar mass in solar masses
	AgeGyr   float64 // age in Gyr
	BV       float64 // Johnson B−V color (mag)
	TeffK    float64 // effective temperature (K)
}

// Law assigns a rotation period to a star.
type Law interface {
	// Name is the scenario's name for the law (e.g. "barnes2007").
	Name() string
	// Period returns the rotation period in days. Laws that need random
	// initial conditions draw them from r, and only from r, so a chunk's
	// stream fixes the result. ok is false when the star lies outside the
	// range the law was calibrated on; the period is then NaN and the star
	// is flagged rather than silently given a number.
	Period(s Star, r *rand.Rand) (periodD float64, ok bool)
}
