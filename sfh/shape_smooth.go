package sfh

import "math"

// uniformShape is Constant: density 1/MaxAgeGyr.
type uniformShape struct{ maxAge float64 }

func (s *uniformShape) pdf(age float64) float64 {
	if age < 0 || age > s.maxAge {
		return 0
	}
	return 1 / s.maxAge
}

func (s *uniformShape) mass(lo, hi float64) float64 { return (hi - lo) / s.maxAge }

func (s *uniformShape) mean(lo, hi float64) float64 {
	if !(hi > lo) {
		return math.NaN()
	}
	return 0.5 * (lo + hi)
}

func (s *uniformShape) span(lo, hi float64) span {
	return span{kind: spanUniform, lo: lo, hi: hi, mass: s.mass(lo, hi)}
}

func (s *uniformShape) breaks(dst []float64) []float64 { return append(dst, 0, s.maxAge) }

// expShape is Exponential: density ∝ exp(age/TimescaleGyr) on [0, MaxAgeGyr].
// Everything is written in the distance r from the heavy end (MaxAgeGyr when
// the timescale is positive, 0 when negative), where the density is
// ∝ exp(−rate·r) with rate = 1/|TimescaleGyr|; expm1 and log1p then keep full
// precision from nearly flat (huge timescale) to nearly a spike (tiny one).
type expShape struct {
	maxAge    float64
	rate      float64 // 1/|TimescaleGyr|
	heavyHigh bool    // TimescaleGyr > 0: most mass at old ages
	norm      float64 // −expm1(−rate·maxAge) = rate·∫_0^maxAge exp(−rate·r) dr
}

func newExpShape(timescale, maxAge float64) *expShape {
	rate := 1 / math.Abs(timescale)
	return &expShape{
		maxAge:    maxAge,
		rate:      rate,
		heavyHigh: timescale > 0,
		norm:      -math.Expm1(-rate * maxAge),
	}
}

// dist returns the distance of age from the heavy end.
func (s *expShape) dist(age float64) float64 {
	if s.heavyHigh {
		return s.maxAge - age
	}
	return age
}

func (s *expShape) pdf(age float64) float64 {
	if age < 0 || age > s.maxAge {
		return 0
	}
	return s.rate * math.Exp(-s.rate*s.dist(age)) / s.norm
}

func (s *expShape) mass(lo, hi float64) float64 {
	near := s.dist(lo)
	if s.heavyHigh {
		near = s.dist(hi)
	}
	return math.Exp(-s.rate*near) * -math.Expm1(-s.rate*(hi-lo)) / s.norm
}

func (s *expShape) mean(lo, hi float64) float64 {
	w := hi - lo
	if !(w > 0) {
		return math.NaN()
	}
	// Mean distance from the range's heavy end, as a fraction of the width:
	// 1/y − 1/expm1(y) with y = rate·w, which tends to 1/2 − y/12 for small y.
	y := s.rate * w
	var f float64
	if y < 1e-3 {
		f = 0.5 - y/12 + y*y*y/720
	} else {
		f = 1/y - 1/math.Expm1(y)
	}
	if s.heavyHigh {
		return hi - w*f
	}
	return lo + w*f
}

func (s *expShape) span(lo, hi float64) span {
	return span{
		kind:      spanExp,
		lo:        lo,
		hi:        hi,
		mass:      s.mass(lo, hi),
		rate:      s.rate,
		heavyHigh: s.heavyHigh,
		em1:       math.Expm1(-s.rate * (hi - lo)),
	}
}

func (s *expShape) breaks(dst []float64) []float64 {
	dst = append(dst, 0, s.maxAge)
	for _, k := range []float64{0.5, 1, 2, 4, 8, 16, 32} {
		r := k / s.rate
		if s.heavyHigh {
			dst = append(dst, s.maxAge-r)
		} else {
			dst = append(dst, r)
		}
	}
	return dst
}
