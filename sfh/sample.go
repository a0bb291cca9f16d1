package sfh

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// RangeSampler draws exact lookback ages from a History restricted to one age
// range. It holds the per-range constants of every component's inverse CDF,
// so Sample costs one uniform to pick a component, one to invert its CDF
// (or two per trial where a narrow exponential is drawn by rejection, see
// span.sample) and, with dips, one for the acceptance test, and allocates
// nothing. A RangeSampler is immutable and may be shared; the *rand.Rand
// may not.
type RangeSampler struct {
	h      *History
	lo, hi float64
	spans  []span
	cum    []float64 // cumulative undipped mass over components
	last   int       // last component with positive mass in range
	dipMax float64   // upper bound of the dip factor on [lo, hi]
	mass   float64   // normalised (dipped) mass in range
}

// RangeSampler prepares exact sampling on [lo, hi] intersected with
// [0, MaxAgeGyr]. It fails when that intersection is empty or forms no stars.
func (h *History) RangeSampler(lo, hi float64) (*RangeSampler, error) {
	a, b, ok := h.clip(lo, hi)
	if !ok {
		return nil, fmt.Errorf("sfh: age range [%g, %g] Gyr does not overlap (0, %g); give lo < hi with some of it inside [0, MaxAgeGyr]",
			lo, hi, h.maxAge)
	}
	s := &RangeSampler{
		h:      h,
		lo:     a,
		hi:     b,
		spans:  make([]span, len(h.comps)),
		cum:    make([]float64, len(h.comps)),
		last:   -1,
		dipMax: h.dipMax(a, b),
	}
	var total float64
	for i := range h.comps {
		c := &h.comps[i]
		s.spans[i] = c.shape.span(a, b)
		if c.share > 0 && s.spans[i].mass > 0 {
			total += c.share * s.spans[i].mass
			s.last = i
		}
		s.cum[i] = total
	}
	s.mass = h.MassInRange(a, b)
	if s.last < 0 || !(s.mass > 0) || !(s.dipMax > 0) {
		return nil, fmt.Errorf("sfh: no stars form in the age range [%g, %g] Gyr; choose a range where the history's rate is positive", a, b)
	}
	return s, nil
}

// Range returns the age range the sampler draws from, after clipping to
// [0, MaxAgeGyr].
func (s *RangeSampler) Range() (lo, hi float64) { return s.lo, s.hi }

// Mass returns the fraction of the history's total mass in the range.
func (s *RangeSampler) Mass() float64 { return s.mass }

// Sample draws one lookback age in Gyr, distributed as the history's rate
// restricted to the range.
func (s *RangeSampler) Sample(r *rand.Rand) float64 {
	h := s.h
	total := s.cum[len(s.cum)-1]
	for {
		u := r.Float64() * total
		k := s.last
		for i, c := range s.cum[:s.last] {
			if u < c {
				k = i
				break
			}
		}
		age := s.spans[k].sample(r)
		if len(h.dips) == 0 || r.Float64()*s.dipMax < h.dipFactor(age) {
			return age
		}
	}
}

// Sample draws one lookback age in Gyr from the whole history, exactly: a
// component is chosen in proportion to its mass, its inverse CDF is evaluated
// at a uniform number, and with dips the age is accepted with probability
// proportional to the dip factor (otherwise the draw starts over).
func (h *History) Sample(r *rand.Rand) float64 { return h.full.Sample(r) }

// SampleInRange draws one lookback age from the history restricted to
// [lo, hi] ∩ [0, MaxAgeGyr], exactly and without allocating. It recomputes the
// range's constants on every call; to draw many ages from one range, build a
// RangeSampler once. It returns NaN when the range forms no stars.
func (h *History) SampleInRange(r *rand.Rand, lo, hi float64) float64 {
	a, b, ok := h.clip(lo, hi)
	if !ok {
		return math.NaN()
	}
	var total float64
	for i := range h.comps {
		c := &h.comps[i]
		if c.share > 0 {
			total += c.share * c.shape.mass(a, b)
		}
	}
	dmax := h.dipMax(a, b)
	if !(total > 0) || !(dmax > 0) {
		return math.NaN()
	}
	for {
		// Walk the components again instead of storing their masses, which
		// would need a slice per call.
		u := r.Float64() * total
		var sp span
		var acc float64
		for i := range h.comps {
			c := &h.comps[i]
			if c.share <= 0 {
				continue
			}
			cand := c.shape.span(a, b)
			if cand.mass <= 0 {
				continue
			}
			sp = cand
			acc += c.share * sp.mass
			if u < acc {
				break
			}
		}
		age := sp.sample(r)
		if len(h.dips) == 0 || r.Float64()*dmax < h.dipFactor(age) {
			return age
		}
	}
}
