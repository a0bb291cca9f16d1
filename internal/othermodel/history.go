package othermodel

import (
	"math"
	"math/rand/v2"
)

// burstFraction is the share of mass in the box (0 without one).
func (h History) burstFraction() float64 {
	if h.Burst == nil {
		return 0
	}
	return h.Burst.Fraction
}

// smoothCDF is the normalised integral of 1 + s τ/T over [0, τ].
func (h History) smoothCDF(ageGyr float64) float64 {
	T, s := h.MaxAgeGyr, h.RampSlope
	a := math.Min(math.Max(ageGyr, 0), T)
	return (a + s*a*a/(2*T)) / (T * (1 + s/2))
}

// CDF is the share of all mass formed at lookback ages ≤ ageGyr.
func (h History) CDF(ageGyr float64) float64 {
	f := h.burstFraction()
	c := (1 - f) * h.smoothCDF(ageGyr)
	if f > 0 {
		b := h.Burst
		c += f * math.Min(math.Max((ageGyr-b.StartGyr)/(b.EndGyr-b.StartGyr), 0), 1)
	}
	return c
}

// SampleAgeGyr draws a lookback age of formation: from the box with
// probability Fraction, otherwise by the smooth ramp's inverse CDF (the root
// in [0, T] of s τ²/(2T) + τ − u T (1 + s/2) = 0).
func (h History) SampleAgeGyr(r *rand.Rand) float64 {
	if f := h.burstFraction(); f > 0 && r.Float64() < f {
		b := h.Burst
		return b.StartGyr + r.Float64()*(b.EndGyr-b.StartGyr)
	}
	T, s, u := h.MaxAgeGyr, h.RampSlope, r.Float64()
	if math.Abs(s) < 1e-12 {
		return u * T
	}
	qa, qc := s/(2*T), -u*T*(1+s/2)
	// Root 2c/(−1 − √(1 − 4ac)) avoids cancellation for small s.
	return 2 * qc / (-1 - math.Sqrt(1-4*qa*qc))
}
