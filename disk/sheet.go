package disk

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// GravConstPc is Newton's constant in pc M☉⁻¹ (km/s)².
const GravConstPc = 4.30091e-3

// Sheet is the isothermal self-gravitating sheet of Spitzer (1942)
// (Binney & Tremaine 2008): a plane-parallel slab of
// vertical dispersion SheetSigmaKms and total surface density
// SurfaceDensityMsunPc2 whose density is ρ(z) ∝ sech²(z/z0) with
// z0 = σ_s²/(πGΣ). It supplies the vertical potential
// Φ(z) = 2σ_s² ln cosh(z/z0) in which every age population moves.
//
// A tracer of vertical dispersion σ in that potential is isothermal with
// density ν(z) ∝ exp(−Φ/σ²) = cosh(z/z0)^(−n), n = 2σ_s²/σ². Cold tracers
// (σ < σ_s) are thinner than the sheet and nearly Gaussian near the plane;
// hot ones have exponential wings of scale height z0/n.
type Sheet struct {
	SheetSigmaKms         float64 // vertical dispersion of the mass that makes the potential, km/s
	SurfaceDensityMsunPc2 float64 // total surface density of the sheet, M☉ pc⁻²
}

// Validate reports whether the sheet has a positive dispersion and surface
// density.
func (s Sheet) Validate() error {
	if !(s.SheetSigmaKms > 0) || math.IsInf(s.SheetSigmaKms, 0) {
		return fmt.Errorf("disk: Sheet SheetSigmaKms = %v km/s; want a positive, finite velocity dispersion", s.SheetSigmaKms)
	}
	if !(s.SurfaceDensityMsunPc2 > 0) || math.IsInf(s.SurfaceDensityMsunPc2, 0) {
		return fmt.Errorf("disk: Sheet SurfaceDensityMsunPc2 = %v M☉/pc²; want a positive, finite surface density (solar neighbourhood: tens of M☉/pc²)", s.SurfaceDensityMsunPc2)
	}
	return nil
}

// Z0Pc returns the sheet's scale height z0 = σ_s²/(πGΣ) in pc.
func (s Sheet) Z0Pc() float64 {
	return s.SheetSigmaKms * s.SheetSigmaKms / (math.Pi * GravConstPc * s.SurfaceDensityMsunPc2)
}

// Exponent returns n = 2σ_s²/σ², the power of sech in the density of a
// tracer of vertical dispersion sigmaKms.
func (s Sheet) Exponent(sigmaKms float64) float64 {
	r := s.SheetSigmaKms / sigmaKms
	return 2 * r * r
}

// TracerDensity returns the vertical density ν(z) in pc⁻¹ of a tracer of
// dispersion sigmaKms at height zPc above the midplane, normalised to unit
// integral over all z:
//
//	ν(z) = cosh(z/z0)^(−n) / (z0 √π Γ(n/2)/Γ((n+1)/2)).
func (s Sheet) TracerDensity(zPc, sigmaKms float64) float64 {
	z0 := s.Z0Pc()
	n := s.Exponent(sigmaKms)
	return math.Exp(-n*logCosh(zPc/z0)) / (z0 * coshPowerIntegral(n))
}

// TracerCDF returns the fraction of a tracer of dispersion sigmaKms that
// lies below height zPc. With t = tanh²(z/z0),
//
//	∫₀^x cosh(u)^(−n) du = ½ B(t; ½, n/2),
//
// so the CDF is ½ ± ½ I_t(½, n/2), I the regularised incomplete beta
// function.
func (s Sheet) TracerCDF(zPc, sigmaKms float64) float64 {
	n := s.Exponent(sigmaKms)
	t := math.Tanh(zPc / s.Z0Pc())
	half := 0.5 * mathext.RegIncBeta(0.5, 0.5*n, t*t)
	if zPc < 0 {
		return 0.5 - half
	}
	return 0.5 + half
}

// coshPowerIntegral returns ∫ cosh(x)^(−n) dx over the real line,
// √π Γ(n/2)/Γ((n+1)/2), for n > 0. Log-gammas keep it finite for the large
// n of very cold tracers.
func coshPowerIntegral(n float64) float64 {
	a, _ := math.Lgamma(0.5 * n)
	b, _ := math.Lgamma(0.5 * (n + 1))
	return math.SqrtPi * math.Exp(a-b)
}

// logCosh returns ln cosh(x) without overflow for large |x|.
func logCosh(x float64) float64 {
	x = math.Abs(x)
	return x + math.Log1p(math.Exp(-2*x)) - math.Ln2
}
