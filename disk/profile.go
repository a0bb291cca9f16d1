package disk

import "math"

// profile is an age bin's vertical density, a weighted mean of sheet
// tracers, evaluated relative to its midplane value so that it lies in
// (0, 1]. Every component decreases with |z|, so the mixture does too: its
// largest and smallest values over a height range sit at the heights
// nearest to and farthest from the midplane.
type profile struct {
	invZ0Pc float64   // 1/z0 of the sheet
	n       []float64 // sech exponents, one per component
	a       []float64 // weights over the midplane density, Σa = 1
	peakPc  float64   // midplane density ν(0), pc⁻¹
}

func newProfile(sheet Sheet, m Mixture) profile {
	z0 := sheet.Z0Pc()
	p := profile{invZ0Pc: 1 / z0, n: make([]float64, len(m)), a: make([]float64, len(m))}
	wsum := 0.0
	for _, c := range m {
		wsum += c.Weight
	}
	for j, c := range m {
		p.n[j] = sheet.Exponent(c.SigmaKms)
		// ν_j(0) = 1/(z0 C(n_j)); the bin's midplane density is Σ w_j ν_j(0).
		p.a[j] = c.Weight / wsum / (z0 * coshPowerIntegral(p.n[j]))
		p.peakPc += p.a[j]
	}
	for j := range p.a {
		p.a[j] /= p.peakPc
	}
	return p
}

// relLogCosh returns ν(z)/ν(0) given lc = ln cosh(z/z0).
func (p *profile) relLogCosh(lc float64) float64 {
	if len(p.n) == 1 {
		return math.Exp(-p.n[0] * lc)
	}
	s := 0.0
	for j, n := range p.n {
		s += p.a[j] * math.Exp(-n*lc)
	}
	return s
}

// rel returns ν(z)/ν(0) at height zPc above the midplane.
func (p *profile) rel(zPc float64) float64 {
	return p.relLogCosh(logCosh(zPc * p.invZ0Pc))
}
