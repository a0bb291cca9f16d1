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

// lcTable holds a profile's ν/ν(0) and its derivative on a uniform grid in
// lc = ln cosh(z/z0), for cubic Hermite interpolation. The block quadrature
// evaluates the profile at hundreds of thousands of nodes per age bin; an
// interpolation costs a few multiplications where the profile costs an
// exponential per component.
type lcTable struct {
	invStep float64
	f, df   []float64 // ν/ν(0) and step × its derivative in lc, at each node
}

// Grid of an lcTable: step × the largest exponent n. For a sum of
// e^(−n lc) terms the cubic Hermite remainder, max|f⁗| h⁴/384 (Burden &
// Faires, Numerical Analysis, §3.5) [memory], is at most
// (h n)⁴ e^(h n)/384 ≈ 2e−9 of the value at 0.03: far below the
// quadrature's own 1e−6.
const (
	lcTableStepN    = 0.03
	lcTableMaxNodes = 1 << 16
)

// lcTableStep returns the grid step in lc for tables of profiles whose
// largest sech exponent is nMax, on [0, lcMax]; ok is false when the grid
// would take more than lcTableMaxNodes nodes (a very cold bin in a tall
// field), and profiles are then evaluated directly. All bins of a sampler
// share one step, so that, like the profiles, the interpolated integrals
// are linear in a mixture's components.
func lcTableStep(nMax, lcMax float64) (h float64, ok bool) {
	h = lcTableStepN / math.Max(nMax, lcTableStepN)
	if !(lcMax >= 0) || lcMax/h > lcTableMaxNodes {
		return 0, false
	}
	return h, true
}

// maxExponent returns the largest of the profile's sech exponents.
func (p *profile) maxExponent() float64 {
	m := 0.0
	for _, n := range p.n {
		m = math.Max(m, n)
	}
	return m
}

// table tabulates the profile on [0, lcMax] with step h (see lcTableStep).
func (p *profile) table(h, lcMax float64) lcTable {
	nodes := int(math.Ceil(lcMax/h)) + 2
	t := lcTable{invStep: 1 / h, f: make([]float64, nodes), df: make([]float64, nodes)}
	for i := range nodes {
		x := float64(i) * h
		var f, d float64
		for j, n := range p.n {
			e := p.a[j] * math.Exp(-n*x)
			f += e
			d -= n * e
		}
		t.f[i], t.df[i] = f, d*h
	}
	return t
}

// at interpolates the table at lc in [0, lcMax].
func (t *lcTable) at(lc float64) float64 {
	u := lc * t.invStep
	i := int(u)
	s := u - float64(i)
	s2 := s * s
	s3 := s2 * s
	return (2*s3-3*s2+1)*t.f[i] + (s3-2*s2+s)*t.df[i] + (3*s2-2*s3)*t.f[i+1] + (s3-s2)*t.df[i+1]
}
