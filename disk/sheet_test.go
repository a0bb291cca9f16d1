package disk

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestSheetScaleHeight(t *testing.T) {
	s := Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 50}
	require.NoError(t, s.Validate())
	// Source: Spitzer (1942) isothermal sheet, z0 = σ²/(πGΣ) as in Binney &
	// Tremaine (2008); 20²/(π · 4.30091e−3 · 50) = 592.1 pc by hand.
	assert.InDelta(t, 592, s.Z0Pc(), 1)
	// Doubling Σ halves z0; doubling σ_s quadruples it (the formula's scaling).
	assert.InDelta(t, s.Z0Pc()/2, Sheet{20, 100}.Z0Pc(), 1e-9)
	assert.InDelta(t, 4*s.Z0Pc(), Sheet{40, 50}.Z0Pc(), 1e-9)
}

func TestCoshPowerIntegral(t *testing.T) {
	// Common practice, no source: ∫sech = π and ∫sech² = 2 over the real line.
	assert.InDelta(t, math.Pi, coshPowerIntegral(1), 1e-12)
	assert.InDelta(t, 2, coshPowerIntegral(2), 1e-12)
	for _, n := range []float64{0.3, 0.5, 1, 1.7, 3.2, 10, 57, 400} {
		// Integrate to where the tail, < 2·2ⁿ e^(−nL)/n, is below 1e−13.
		lim := (30 + n*math.Ln2 + math.Log(2/n)) / n
		lim = math.Max(lim, 40/math.Sqrt(n))
		num := simpson(func(x float64) float64 { return math.Exp(-n * logCosh(x)) }, -lim, lim, 400000)
		assert.InEpsilon(t, num, coshPowerIntegral(n), 1e-9, "n = %v", n)
	}
}

func TestTracerDensity(t *testing.T) {
	s := Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 50}
	for _, sigma := range []float64{3, 8, 15, 20, 30, 45} {
		norm := simpson(func(z float64) float64 { return s.TracerDensity(z, sigma) }, -60000, 60000, 600000)
		assert.InDelta(t, 1, norm, 1e-8, "σ = %v", sigma)
		assert.InDelta(t, s.TracerDensity(123, sigma), s.TracerDensity(-123, sigma), 1e-15)
	}
	// Cold limit: ln cosh x ≈ x²/2, so ν is Gaussian with dispersion z0/√n.
	// Common practice, no source (Taylor expansion).
	z0 := s.Z0Pc()
	n := s.Exponent(2)
	assert.InEpsilon(t, 1/(math.Sqrt(2*math.Pi)*z0/math.Sqrt(n)), s.TracerDensity(0, 2), 0.01)
	// Hot tracer far from the plane: cosh^(−n) → 2ⁿ e^(−n|z|/z0), an
	// exponential of scale height z0/n. Common practice, no source.
	n = s.Exponent(40)
	ratio := s.TracerDensity(8*z0+100, 40) / s.TracerDensity(8*z0, 40)
	assert.InEpsilon(t, math.Exp(-n*100/z0), ratio, 1e-6)
	// Same mass, hotter tracer: lower midplane density.
	assert.Greater(t, s.TracerDensity(0, 10), s.TracerDensity(0, 25))
}

func TestTracerCDF(t *testing.T) {
	s := Sheet{SheetSigmaKms: 18, SurfaceDensityMsunPc2: 60}
	for _, sigma := range []float64{5, 12, 25, 40} {
		assert.InDelta(t, 0.5, s.TracerCDF(0, sigma), 1e-14)
		for _, z := range []float64{-900, -250, -40, 15, 130, 700, 2500} {
			num := 0.5 + simpson(func(x float64) float64 { return s.TracerDensity(x, sigma) }, 0, z, 20000)
			if z < 0 {
				num = 0.5 - simpson(func(x float64) float64 { return s.TracerDensity(x, sigma) }, z, 0, 20000)
			}
			assert.InDelta(t, num, s.TracerCDF(z, sigma), 1e-9, "σ = %v, z = %v", sigma, z)
			assert.InDelta(t, 1, s.TracerCDF(z, sigma)+s.TracerCDF(-z, sigma), 1e-12)
		}
	}
}

func TestSheetValidate(t *testing.T) {
	assert.ErrorContains(t, Sheet{SheetSigmaKms: 0, SurfaceDensityMsunPc2: 50}.Validate(), "SheetSigmaKms")
	assert.ErrorContains(t, Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: -1}.Validate(), "SurfaceDensityMsunPc2")
	assert.ErrorContains(t, Sheet{SheetSigmaKms: math.NaN(), SurfaceDensityMsunPc2: 50}.Validate(), "SheetSigmaKms")
}

func BenchmarkTracerDensity(b *testing.B) {
	s := Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 50}
	z, sum := 0.0, 0.0
	for b.Loop() {
		sum += s.TracerDensity(z, 15)
		z += 0.37
	}
	_ = sum
}

// A mixture's density integrates to one over all z (Simpson's rule on a
// fine grid, common practice) and is the weighted mean of its components'
// tracer densities.
func TestMixtureDensity(t *testing.T) {
	s := Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}
	m := Mixture{{SigmaKms: 8, Weight: 1}, {SigmaKms: 25, Weight: 3}}
	d := m.Prepare(s)
	const h, zMax = 0.5, 20000.0
	n := int(2 * zMax / h)
	sum := d.At(-zMax) + d.At(zMax)
	for i := 1; i < n; i++ {
		c := 2.0
		if i%2 == 1 {
			c = 4
		}
		sum += c * d.At(-zMax+float64(i)*h)
	}
	assert.InDelta(t, 1, sum*h/3, 1e-6)
	for _, z := range []float64{0, 35, -170, 900, 5000} {
		want := (s.TracerDensity(z, 8) + 3*s.TracerDensity(z, 25)) / 4
		assert.InDelta(t, want, d.At(z), 1e-12*want, "density at %g pc", z)
	}
}
