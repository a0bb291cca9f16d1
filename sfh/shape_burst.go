package sfh

import "math"

// normalShape is Burst: a Gaussian of centre mu and width sigma truncated to
// [0, MaxAgeGyr] and renormalised there.
type normalShape struct {
	maxAge    float64
	mu, sigma float64
	norm      float64 // Φ((maxAge−mu)/sigma) − Φ(−mu/sigma)
}

func newNormalShape(mu, sigma, maxAge float64) *normalShape {
	tn := newTruncNormal(-mu/sigma, (maxAge-mu)/sigma)
	return &normalShape{maxAge: maxAge, mu: mu, sigma: sigma, norm: tn.mass()}
}

func (s *normalShape) z(age float64) float64 { return (age - s.mu) / s.sigma }

func (s *normalShape) pdf(age float64) float64 {
	if age < 0 || age > s.maxAge {
		return 0
	}
	return normPDF(s.z(age)) / (s.sigma * s.norm)
}

func (s *normalShape) mass(lo, hi float64) float64 {
	tn := newTruncNormal(s.z(lo), s.z(hi))
	return tn.mass() / s.norm
}

func (s *normalShape) mean(lo, hi float64) float64 {
	tn := newTruncNormal(s.z(lo), s.z(hi))
	m := tn.mean()
	if math.IsNaN(m) {
		return m
	}
	return clamp(s.mu+s.sigma*m, lo, hi)
}

func (s *normalShape) span(lo, hi float64) span {
	tn := newTruncNormal(s.z(lo), s.z(hi))
	return span{
		kind:  spanNormal,
		lo:    lo,
		hi:    hi,
		mass:  tn.mass() / s.norm,
		mu:    s.mu,
		sigma: s.sigma,
		tn:    tn,
	}
}

func (s *normalShape) breaks(dst []float64) []float64 {
	dst = append(dst, s.mu)
	for _, k := range []float64{0.5, 1, 1.5, 2, 3, 4, 6, 8, 12} {
		dst = append(dst, s.mu-k*s.sigma, s.mu+k*s.sigma)
	}
	return dst
}
