package sfh

import (
	"math"
	"math/rand/v2"
)

// shape is a component's age distribution, normalised to unit mass on
// [0, MaxAgeGyr], with closed forms for everything the History needs.
// Callers pass 0 ≤ lo ≤ hi ≤ MaxAgeGyr.
type shape interface {
	// pdf is the density at age, zero outside [0, MaxAgeGyr].
	pdf(age float64) float64
	// mass is the probability of [lo, hi].
	mass(lo, hi float64) float64
	// mean is the mean age on [lo, hi]; NaN when that range has no mass.
	mean(lo, hi float64) float64
	// span precomputes the inverse CDF restricted to [lo, hi].
	span(lo, hi float64) span
	// breaks appends ages where the density changes character (edges,
	// centres, a few widths out) so quadrature panels can start there.
	breaks(dst []float64) []float64
}

// spanKind selects the inverse CDF a span evaluates.
type spanKind uint8

const (
	spanUniform spanKind = iota
	spanExp
	spanNormal
	spanSteps
)

// span holds the constants of one component's inverse CDF restricted to
// [lo, hi]. It is a plain value with a switch instead of an interface so that
// drawing through it never allocates.
type span struct {
	kind   spanKind
	lo, hi float64
	mass   float64 // the component's probability of [lo, hi]

	// Exponential: density ∝ exp(−rate·r), r measured from the heavy end.
	rate      float64
	heavyHigh bool    // the density is largest at hi
	em1       float64 // expm1(−rate·(hi−lo))

	// Burst: age = mu + sigma·z with z from tn.
	mu, sigma float64
	tn        truncNormal

	// Piecewise: invert the cumulative between cumLo and cumHi.
	steps        *stepShape
	cumLo, cumHi float64
}

// quantile maps u in [0, 1) to an age in [lo, hi] distributed as the component
// restricted to that range.
func (s *span) quantile(u float64) float64 {
	var age float64
	switch s.kind {
	case spanUniform:
		age = s.lo + u*(s.hi-s.lo)
	case spanExp:
		// Distance from the heavy end at which the mass beyond it is v:
		// r = −log1p(v·expm1(−rate·w))/rate. With the heavy end at hi the
		// mass below the age is 1 − v, so v = 1 − u keeps u ↦ age increasing.
		if s.heavyHigh {
			age = s.hi + math.Log1p((1-u)*s.em1)/s.rate
		} else {
			age = s.lo - math.Log1p(u*s.em1)/s.rate
		}
	case spanNormal:
		age = s.mu + s.sigma*s.tn.quantile(u)
	case spanSteps:
		age = s.steps.quantile(s.cumLo + u*(s.cumHi-s.cumLo))
	}
	return clamp(age, s.lo, s.hi)
}

// flatExpMax is the largest decay rate × width for which sample draws an
// exponential span by rejection from the uniform: at most 1 + 0.25/2
// trials on average, and no logarithm.
const flatExpMax = 0.25

// sample draws an age from the span, exactly: the inverse CDF at a uniform
// number, except for an exponential that changes little across the span
// (a narrow age bin), drawn uniformly and kept with probability
// exp(−rate·r), r the distance from the heavy end. The Taylor bounds
// 1 − x + x²/2 − x³/6 ≤ e^(−x) ≤ 1 − x + x²/2 decide almost every trial
// without an exponential.
func (s *span) sample(r *rand.Rand) float64 {
	if s.kind != spanExp || !(s.rate*(s.hi-s.lo) <= flatExpMax) {
		return s.quantile(r.Float64())
	}
	w := s.hi - s.lo
	for {
		t, u := r.Float64(), r.Float64()
		x := s.rate * w * t
		upper := 1 - x + 0.5*x*x
		if u >= upper || (u >= upper-x*x*x*(1.0/6) && u >= math.Exp(-x)) {
			continue
		}
		if s.heavyHigh {
			return clamp(s.hi-t*w, s.lo, s.hi)
		}
		return clamp(s.lo+t*w, s.lo, s.hi)
	}
}

// newShape builds the shape of a validated smooth component or burst.
func newShape(c Component, maxAge float64) shape { return c.newShape(maxAge) }
