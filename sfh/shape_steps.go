package sfh

import "math"

// stepShape is Piecewise: constant density on each bin, zero outside the edges.
type stepShape struct {
	edges []float64
	dens  []float64 // normalised density per bin
	cum   []float64 // cumulative mass at each edge; cum[0] = 0, cum[n] = 1
}

func newStepShape(edges, rates []float64) *stepShape {
	n := len(rates)
	s := &stepShape{
		edges: append([]float64(nil), edges...),
		dens:  make([]float64, n),
		cum:   make([]float64, n+1),
	}
	var total float64
	for i, r := range rates {
		total += r * (edges[i+1] - edges[i])
	}
	for i, r := range rates {
		s.dens[i] = r / total
		s.cum[i+1] = s.cum[i] + s.dens[i]*(edges[i+1]-edges[i])
	}
	// Pin the last edge so that rounding cannot leave mass above 1.
	s.cum[n] = 1
	return s
}

// bin returns the index i with edges[i] ≤ age < edges[i+1], or −1 outside.
// The last bin includes its upper edge.
func (s *stepShape) bin(age float64) int {
	n := len(s.dens)
	if age < s.edges[0] || age > s.edges[n] {
		return -1
	}
	lo, hi := 0, n // invariant: edges[lo] ≤ age, answer < hi
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if s.edges[mid] <= age {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

func (s *stepShape) pdf(age float64) float64 {
	i := s.bin(age)
	if i < 0 {
		return 0
	}
	return s.dens[i]
}

// cdf returns the mass below age.
func (s *stepShape) cdf(age float64) float64 {
	n := len(s.dens)
	if age <= s.edges[0] {
		return 0
	}
	if age >= s.edges[n] {
		return 1
	}
	i := s.bin(age)
	return s.cum[i] + s.dens[i]*(age-s.edges[i])
}

func (s *stepShape) mass(lo, hi float64) float64 { return math.Max(s.cdf(hi)-s.cdf(lo), 0) }

func (s *stepShape) mean(lo, hi float64) float64 {
	var m0, m1 float64
	for i, d := range s.dens {
		a, b := math.Max(lo, s.edges[i]), math.Min(hi, s.edges[i+1])
		if b <= a || d == 0 {
			continue
		}
		m := d * (b - a)
		m0 += m
		m1 += m * 0.5 * (a + b)
	}
	if m0 <= 0 {
		return math.NaN()
	}
	return clamp(m1/m0, lo, hi)
}

// quantile inverts the cumulative: the age at which the mass below is c.
func (s *stepShape) quantile(c float64) float64 {
	n := len(s.dens)
	// Largest i with cum[i] ≤ c. Empty bins have cum[i] == cum[i+1], so the
	// search steps past them and never lands in one unless c reaches 1.
	lo, hi := 0, n+1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if s.cum[mid] <= c {
			lo = mid
		} else {
			hi = mid
		}
	}
	if lo >= n || s.dens[lo] == 0 {
		return s.edges[lo]
	}
	return math.Min(s.edges[lo]+(c-s.cum[lo])/s.dens[lo], s.edges[lo+1])
}

func (s *stepShape) span(lo, hi float64) span {
	cl, ch := s.cdf(lo), s.cdf(hi)
	return span{
		kind:  spanSteps,
		lo:    lo,
		hi:    hi,
		mass:  math.Max(ch-cl, 0),
		steps: s,
		cumLo: cl,
		cumHi: ch,
	}
}

func (s *stepShape) breaks(dst []float64) []float64 { return append(dst, s.edges...) }
