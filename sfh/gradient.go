package sfh

import (
	"math"
	"strings"
)

// A fit moves a history's parameters and needs the bin weights' slopes
// in them at every step. Finite differences cost two histories and two
// passes over the bins a parameter; the closed forms below cost about one
// pass for all of them.
//
// With the parts' shares s_c (a burst's MassFraction f_b; a smooth
// component's rest·ω_c/W, rest = 1 − Σf_b, W = Σω) and their masses
// M_c(k) in bin k, the weights are w_k = Σ_c s_c M_c(k), so
//
//	∂w_k/∂f_b = M_b(k) − Σ_smooth (ω_c/W) M_c(k)
//	∂w_k/∂ω_j = (rest/W) (M_j(k) − Σ_smooth (ω_c/W) M_c(k))
//	∂w_k/∂θ_c = s_c ∂M_c(k)/∂θ_c     for a shape parameter θ_c of part c,
//
// and the shapes' own slopes are in massSlope.

// slopeShape is a shape whose bin masses have closed-form slopes in its
// parameters (keys as in Params).
type slopeShape interface {
	shape
	// massSlope returns ∂mass(lo, hi)/∂key, and false for a key it has
	// no closed form for.
	massSlope(lo, hi float64, key string) (float64, bool)
}

// BinWeightSlopes writes ∂BinWeights(edgesGyr)[k]/∂θ into dst[j][k] for
// each parameter names[j] (named as in Params), and reports whether it
// could: a history with dips, a parameter without a closed form (a
// Piecewise rate), shares held by the rounding slack of bursts that take
// all the mass, or an unknown name give false, and the caller falls back
// to differences of BinWeights. dst[j] must hold len(edgesGyr)−1 values.
func (h *History) BinWeightSlopes(edgesGyr []float64, names []string, dst [][]float64) bool {
	n := len(edgesGyr) - 1
	if n < 1 || h.quad != nil || len(dst) != len(names) {
		return false
	}
	var burstSum, weightSum float64
	for _, p := range h.parts {
		switch p.Component.role() {
		case Episode:
			burstSum += p.Component.(episode).fraction()
		case Smooth:
			weightSum += p.Weight
		}
	}
	rest := 1 - burstSum
	if !(rest > burstSumSlack) || !(weightSum > 0) {
		return false // the shares are not the smooth functions below
	}
	// Each component's mass in each bin, clipped to the history's range
	// as MassInRange clips.
	masses := make([][]float64, len(h.comps))
	smoothMix := make([]float64, n) // Σ_smooth (ω_c/W) M_c(k)
	for c := range h.comps {
		masses[c] = make([]float64, n)
		for k := range n {
			if a, b, ok := h.clip(edgesGyr[k], edgesGyr[k+1]); ok {
				masses[c][k] = h.comps[c].shape.mass(a, b)
			}
		}
	}
	compOf := make(map[string]int, len(h.comps))
	for c, cp := range h.comps {
		compOf[cp.name] = c
	}
	for _, p := range h.parts {
		if p.Component.role() == Smooth {
			c := compOf[p.Name]
			for k := range n {
				smoothMix[k] += p.Weight / weightSum * masses[c][k]
			}
		}
	}
	partOf := make(map[string]Part, len(h.parts))
	for _, p := range h.parts {
		partOf[p.Name] = p
	}
	for j, name := range names {
		partName, key, _ := strings.Cut(name, ".")
		p, ok := partOf[partName]
		if !ok || len(dst[j]) != n {
			return false
		}
		c, isComp := compOf[partName]
		out := dst[j]
		switch {
		case !isComp:
			return false // a dip
		case key == "weight" && p.Component.role() == Smooth:
			for k := range n {
				out[k] = rest / weightSum * (masses[c][k] - smoothMix[k])
			}
		case key == "mass_fraction" && p.Component.role() == Episode:
			for k := range n {
				out[k] = masses[c][k] - smoothMix[k]
			}
		default:
			ss, ok := h.comps[c].shape.(slopeShape)
			if !ok {
				return false
			}
			share := h.comps[c].share
			for k := range n {
				a, b, in := h.clip(edgesGyr[k], edgesGyr[k+1])
				if !in {
					out[k] = 0
					continue
				}
				d, ok := ss.massSlope(a, b, key)
				if !ok {
					return false
				}
				out[k] = share * d
			}
		}
	}
	return true
}

// massSlope of a burst: with z = (x − μ)/σ, the mass on [lo, hi] is
// P(lo, hi)/P(0, MaxAgeGyr), P(a, b) = Φ(z_b) − Φ(z_a), and
//
//	∂P/∂μ = (φ(z_a) − φ(z_b))/σ,   ∂P/∂σ = (z_a φ(z_a) − z_b φ(z_b))/σ,
//
// so ∂(P/N) = (∂P − (P/N) ∂N)/N.
func (s *normalShape) massSlope(lo, hi float64, key string) (float64, bool) {
	dP := func(a, b float64) float64 {
		za, zb := s.z(a), s.z(b)
		switch key {
		case "age_gyr":
			return (normPDF(za) - normPDF(zb)) / s.sigma
		default: // width_gyr
			return (za*normPDF(za) - zb*normPDF(zb)) / s.sigma
		}
	}
	if key != "age_gyr" && key != "width_gyr" {
		return 0, false
	}
	m := s.mass(lo, hi)
	return (dP(lo, hi) - m*dP(0, s.maxAge)) / s.norm, true
}

// massSlope of an exponential in its signed timescale τ: with rate
// r = 1/|τ|, near the distance of the range's heavy end from the history's
// and w its width, the mass is f/g with f = e^(−rn) − e^(−r(n+w)) and
// g = 1 − e^(−r·MaxAgeGyr); ∂(f/g)/∂r = (f′ − (f/g) g′)/g and
// ∂r/∂τ = −1/(τ|τ|).
func (s *expShape) massSlope(lo, hi float64, key string) (float64, bool) {
	if key != "timescale_gyr" {
		return 0, false
	}
	near := s.dist(lo)
	if s.heavyHigh {
		near = s.dist(hi)
	}
	w, r, mx := hi-lo, s.rate, s.maxAge
	df := -near*math.Exp(-r*near) + (near+w)*math.Exp(-r*(near+w))
	dg := mx * math.Exp(-r*mx)
	m := s.mass(lo, hi)
	dmdr := (df - m*dg) / s.norm
	tau := 1 / r
	if !s.heavyHigh {
		tau = -tau
	}
	return dmdr * (-1 / (tau * math.Abs(tau))), true
}
