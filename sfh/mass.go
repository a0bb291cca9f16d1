package sfh

import "math"

// clip intersects [lo, hi] with [0, MaxAgeGyr]; ok is false when the
// intersection is empty or an end is NaN.
func (h *History) clip(lo, hi float64) (a, b float64, ok bool) {
	a, b = math.Max(lo, 0), math.Min(hi, h.maxAge)
	return a, b, a < b
}

// CumulativeMass returns the fraction of all stars formed at lookback ages
// below ageGyr: 0 at or below age 0, 1 at or above MaxAgeGyr.
func (h *History) CumulativeMass(ageGyr float64) float64 {
	if math.IsNaN(ageGyr) {
		return math.NaN()
	}
	return h.MassInRange(0, ageGyr)
}

// MassInRange returns the fraction of all stars formed at lookback ages in
// [lo, hi]. The range is intersected with [0, MaxAgeGyr]; an empty or
// inverted range holds no mass. Without dips each component's share is a
// closed form evaluated directly on the range (not as a difference of
// cumulatives), so narrow bins in a burst's far tail keep their relative
// precision.
func (h *History) MassInRange(lo, hi float64) float64 {
	if math.IsNaN(lo) || math.IsNaN(hi) {
		return math.NaN()
	}
	a, b, ok := h.clip(lo, hi)
	if !ok {
		return 0
	}
	if h.quad != nil {
		m0, _ := h.quad.between(a, b)
		return m0 / h.norm
	}
	return h.undippedMass(a, b)
}

func (h *History) undippedMass(a, b float64) float64 {
	var m float64
	for i := range h.comps {
		c := &h.comps[i]
		if c.share > 0 {
			m += c.share * c.shape.mass(a, b)
		}
	}
	return m
}

// BinWeights returns the mass fraction formed in each age bin
// [edgesGyr[i], edgesGyr[i+1]]; with n edges it returns n−1 weights, which sum
// to the fraction inside the outer edges (1 when they span [0, MaxAgeGyr]).
// A bin whose upper edge does not exceed its lower edge gets weight 0.
func (h *History) BinWeights(edgesGyr []float64) []float64 {
	if len(edgesGyr) < 2 {
		return nil
	}
	return h.BinWeightsTo(make([]float64, len(edgesGyr)-1), edgesGyr)
}

// BinWeightsTo is BinWeights writing into dst, resliced to len(edgesGyr)−1
// (and reallocated only when its capacity is too small), so that fits that
// re-weight templates at every step allocate nothing. It returns the result.
func (h *History) BinWeightsTo(dst, edgesGyr []float64) []float64 {
	if len(edgesGyr) < 2 {
		return dst[:0]
	}
	if n := len(edgesGyr) - 1; cap(dst) < n {
		dst = make([]float64, n)
	} else {
		dst = dst[:n]
	}
	if h.quad == nil {
		for i := range dst {
			dst[i] = h.MassInRange(edgesGyr[i], edgesGyr[i+1])
		}
		return dst
	}
	// With dips, walk the edges once so that each edge's cumulative is
	// computed a single time.
	prev := h.dippedCum(edgesGyr[0])
	for i := range dst {
		next := h.dippedCum(edgesGyr[i+1])
		if edgesGyr[i+1] > edgesGyr[i] {
			dst[i] = math.Max(next-prev, 0) / h.norm
		} else {
			dst[i] = 0
		}
		prev = next
	}
	return dst
}

// dippedCum is the unnormalised dipped mass below age, clipped to the range.
func (h *History) dippedCum(age float64) float64 {
	m0, _ := h.quad.upTo(clamp(age, 0, h.maxAge))
	return m0
}

// MeanAgeInRange returns the mass-weighted mean lookback age of the stars
// formed in [lo, hi] (intersected with [0, MaxAgeGyr]), or NaN when that range
// holds no mass.
func (h *History) MeanAgeInRange(lo, hi float64) float64 {
	a, b, ok := h.clip(lo, hi)
	if !ok {
		return math.NaN()
	}
	if h.quad != nil {
		m0, m1 := h.quad.between(a, b)
		if !(m0 > 0) {
			return math.NaN()
		}
		return clamp(m1/m0, a, b)
	}
	var m0, m1 float64
	for i := range h.comps {
		c := &h.comps[i]
		if c.share <= 0 {
			continue
		}
		m := c.share * c.shape.mass(a, b)
		if m > 0 {
			m0 += m
			m1 += m * c.shape.mean(a, b)
		}
	}
	if !(m0 > 0) {
		return math.NaN()
	}
	return clamp(m1/m0, a, b)
}
