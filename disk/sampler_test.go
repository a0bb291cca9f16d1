package disk

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A sheet with the round numbers of the Spitzer test: z0 = 592 pc.
var testSheet = Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 50}

var flat = Radial{ScaleLengthKpc: math.Inf(1)}

// sphereIntegral returns ∫ ν(z) dV over a sphere of radius R about the Sun
// by slices: ∫ ν(z☉ + h) π(R² − h²) dh. Common practice, no source.
func sphereIntegral(nu func(z float64) float64, sun Sun, radiusPc float64) float64 {
	return simpson(func(h float64) float64 {
		return nu(sun.ZPc+h) * math.Pi * (radiusPc*radiusPc - h*h)
	}, -radiusPc, radiusPc, 200000)
}

func TestBinIntegralSphere(t *testing.T) {
	sun := DefaultSun()
	sigmas := []float64{3, 8, 15, 25, 45}
	for _, f := range []Sphere{{RadiusPc: 1000}, {RadiusPc: 3000, DistMinPc: 200}, {RadiusPc: 40}} {
		s, err := NewSampler(f, sun, testSheet, flat, sigmas, SamplerOptions{})
		require.NoError(t, err)
		for k, sigma := range sigmas {
			nu := func(z float64) float64 { return testSheet.TracerDensity(z, sigma) }
			want := sphereIntegral(nu, sun, f.RadiusPc)
			if f.DistMinPc > 0 {
				want -= sphereIntegral(nu, sun, f.DistMinPc)
			}
			assert.InEpsilon(t, want, s.BinIntegral(k), 1e-7, "sphere %v σ %v", f, sigma)
			eff := s.ProposalEfficiency(k)
			assert.True(t, eff > 0 && eff <= 1, "efficiency %v", eff)
		}
	}
}

// boxMonteCarlo estimates ∫ ν dV over a cone by brute force: points uniform
// in volume in a box of (l, sin b, d³) around it, kept when the cone
// contains them. It returns the estimate and its standard error.
func boxMonteCarlo(c Cone, nu func(z float64) float64, sun Sun, n int, rng *rand.Rand) (float64, float64) {
	bLo := math.Max(c.BDeg-c.RadiusDeg, -90)
	bHi := math.Min(c.BDeg+c.RadiusDeg, 90)
	cosMin := math.Min(math.Cos(bLo*degToRad), math.Cos(bHi*degToRad))
	dl := 180.0
	if cosMin > 0 && c.RadiusDeg/cosMin < 180 {
		dl = math.Asin(math.Min(1, math.Sin(c.RadiusDeg*degToRad)/cosMin))*radToDeg + 1e-6
	}
	sLo, sHi := math.Sin(bLo*degToRad), math.Sin(bHi*degToRad)
	d3Lo, d3Hi := math.Pow(c.DistMinPc, 3), math.Pow(c.DistMaxPc, 3)
	vol := 2 * dl * degToRad * (sHi - sLo) * (d3Hi - d3Lo) / 3
	sum, sum2 := 0.0, 0.0
	for range n {
		l := c.LDeg - dl + 2*dl*rng.Float64()
		sb := sLo + (sHi-sLo)*rng.Float64()
		d := math.Cbrt(d3Lo + (d3Hi-d3Lo)*rng.Float64())
		b := math.Asin(sb) * radToDeg
		if !c.Contains(l, b, d) {
			continue
		}
		v := nu(d*sb + sun.ZPc)
		sum += v
		sum2 += v * v
	}
	mean := sum / float64(n)
	variance := sum2/float64(n) - mean*mean
	return vol * mean, vol * math.Sqrt(variance/float64(n))
}

func TestBinIntegralConeMonteCarlo(t *testing.T) {
	sun := DefaultSun()
	rng := rand.New(rand.NewPCG(11, 12))
	list := ConeList{
		{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000},
		{LDeg: 250, BDeg: -3, RadiusDeg: 5, DistMaxPc: 1200},
		{LDeg: 10, BDeg: 88, RadiusDeg: 4, DistMinPc: 30, DistMaxPc: 2000},
	}
	sigmas := []float64{6, 20}
	sl, err := NewSampler(list, sun, testSheet, flat, sigmas, SamplerOptions{})
	require.NoError(t, err)
	for k, sigma := range sigmas {
		nu := func(z float64) float64 { return testSheet.TracerDensity(z, sigma) }
		total, totalVar := 0.0, 0.0
		sumCones := 0.0
		for _, c := range list {
			sc, err := NewSampler(c, sun, testSheet, flat, []float64{sigma}, SamplerOptions{})
			require.NoError(t, err)
			mc, se := boxMonteCarlo(c, nu, sun, 400000, rng)
			// Brute-force Monte Carlo; tolerance 4 standard errors.
			assert.InDelta(t, mc, sc.BinIntegral(0), 4*se, "cone %v σ %v", c, sigma)
			total += mc
			totalVar += se * se
			sumCones += sc.BinIntegral(0)
		}
		assert.InDelta(t, total, sl.BinIntegral(k), 4*math.Sqrt(totalVar))
		// The list's blocks are sized for the list, the single cones' for
		// each cone: the same integral by two quadratures, which agree to
		// ~1e−6 with the default block sizes.
		assert.InEpsilon(t, sumCones, sl.BinIntegral(k), 1e-5)
	}
}

func TestBinIntegralMixtureIsLinear(t *testing.T) {
	sun := DefaultSun()
	f := Cone{LDeg: 120, BDeg: 25, RadiusDeg: 10, DistMaxPc: 1500}
	s, err := NewMixtureSampler(f, sun, testSheet, flat, []Mixture{
		{{SigmaKms: 8, Weight: 1}},
		{{SigmaKms: 25, Weight: 1}},
		{{SigmaKms: 8, Weight: 1}, {SigmaKms: 25, Weight: 3}},
	}, SamplerOptions{})
	require.NoError(t, err)
	assert.InEpsilon(t, (s.BinIntegral(0)+3*s.BinIntegral(1))/4, s.BinIntegral(2), 1e-12)
}

// drawN draws n positions of bin k with the radial profile off.
func drawN(t *testing.T, s *Sampler, k, n int, rng *rand.Rand) (l, b, d, z []float64) {
	t.Helper()
	for range n {
		li, bi, di, zi, ok := s.Draw(k, rng)
		require.True(t, ok)
		l, b, d, z = append(l, li), append(b, bi), append(d, di), append(z, zi)
	}
	return l, b, d, z
}

func TestDrawHeightsPolarConesKS(t *testing.T) {
	// Two thin cones toward the Galactic poles. Thinning each draw with
	// probability (d_min/d)² removes the d² of the volume element, so the kept
	// heights follow the tracer density itself on z☉ ± [d_min, d_max]
	// (cos ρ ≥ 0.99996 shifts heights by < 0.12 pc). One-sample KS against
	// the analytic tracer CDF, p > 0.01 with a fixed seed; the same sample
	// against a 20 % hotter tracer must fail with p < 1e−4.
	// Source: Spitzer (1942) tracer profile; KS test per Stephens (1970).
	sun := DefaultSun()
	const dMin, dMax = 20.0, 3000.0
	field := ConeList{
		{LDeg: 0, BDeg: 90, RadiusDeg: 0.5, DistMinPc: dMin, DistMaxPc: dMax},
		{LDeg: 0, BDeg: -90, RadiusDeg: 0.5, DistMinPc: dMin, DistMaxPc: dMax},
	}
	const sigma = 15.0
	s, err := NewSampler(field, sun, testSheet, flat, []float64{sigma}, SamplerOptions{})
	require.NoError(t, err)
	rng := rand.New(rand.NewPCG(21, 22))
	var zs []float64
	for len(zs) < 6000 {
		_, _, d, z, ok := s.Draw(0, rng)
		require.True(t, ok)
		if rng.Float64() < (dMin/d)*(dMin/d) {
			zs = append(zs, z)
		}
	}
	cdfFor := func(sig float64) func(float64) float64 {
		lo1, hi1 := sun.ZPc-dMax, sun.ZPc-dMin
		lo2, hi2 := sun.ZPc+dMin, sun.ZPc+dMax
		F := func(z float64) float64 { return testSheet.TracerCDF(z, sig) }
		w1, w2 := F(hi1)-F(lo1), F(hi2)-F(lo2)
		return func(z float64) float64 {
			switch {
			case z <= lo1:
				return 0
			case z <= hi1:
				return (F(z) - F(lo1)) / (w1 + w2)
			case z <= lo2:
				return w1 / (w1 + w2)
			case z <= hi2:
				return (w1 + F(z) - F(lo2)) / (w1 + w2)
			}
			return 1
		}
	}
	_, p := ksOneSample(zs, cdfFor(sigma))
	assert.Greater(t, p, 0.01)
	_, pWrong := ksOneSample(zs, cdfFor(1.2*sigma))
	assert.Less(t, pWrong, 1e-4)
}

func TestDrawSphereKS(t *testing.T) {
	// In a sphere about the Sun heights follow ν(z) π(R² − (z − z☉)²);
	// longitudes are uniform. Checked for a single tracer and a mixture bin,
	// with the default blocks and with blocks so coarse that a third of the
	// proposals are rejected: the draw must be exact either way.
	// Source: Spitzer (1942) tracer profile; KS per Stephens (1970).
	sun := DefaultSun()
	const R = 1500.0
	mix := Mixture{{SigmaKms: 7, Weight: 2}, {SigmaKms: 28, Weight: 1}}
	rng := rand.New(rand.NewPCG(31, 32))
	for _, opts := range []SamplerOptions{{}, {CellDzPc: 150, ShellPc: 400}} {
		s, err := NewMixtureSampler(Sphere{RadiusPc: R}, sun, testSheet, flat, []Mixture{{{SigmaKms: 10, Weight: 1}}, mix}, opts)
		require.NoError(t, err)
		for k, nu := range []func(float64) float64{
			func(z float64) float64 { return testSheet.TracerDensity(z, 10) },
			func(z float64) float64 {
				return (2*testSheet.TracerDensity(z, 7) + testSheet.TracerDensity(z, 28)) / 3
			},
		} {
			l, _, d, z := drawN(t, s, k, 20000, rng)
			for _, di := range d {
				require.LessOrEqual(t, di, R)
			}
			cdf := cumulativeTable(func(z float64) float64 {
				h := z - sun.ZPc
				return nu(z) * (R*R - h*h)
			}, sun.ZPc-R, sun.ZPc+R, 60000)
			_, p := ksOneSample(z, cdf)
			assert.Greater(t, p, 0.01, "bin %d, options %+v, efficiency %.2f", k, opts, s.ProposalEfficiency(k))
			_, p = ksOneSample(l, func(x float64) float64 { return x / 360 })
			assert.Greater(t, p, 0.01, "bin %d longitudes", k)
		}
	}
}

func TestDrawObliqueConeDistanceKS(t *testing.T) {
	// Distances in an oblique cone follow d² ∫_cone ν(d sin b + z☉) dΩ,
	// computed here on an independent midpoint grid over the cone.
	// Source: Spitzer (1942) tracer profile; KS per Stephens (1970).
	sun := DefaultSun()
	c := Cone{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000}
	const sigma = 12.0
	s, err := NewSampler(c, sun, testSheet, flat, []float64{sigma}, SamplerOptions{})
	require.NoError(t, err)

	pole, e1, e2 := c.frame()
	var sinB, w []float64
	const nr, np = 40, 80
	cr1 := math.Cos(c.RadiusDeg * degToRad)
	for i := range nr {
		cr := cr1 + (1-cr1)*(float64(i)+0.5)/nr
		sr := math.Sqrt(1 - cr*cr)
		for j := range np {
			sp, cp := math.Sincos(2 * math.Pi * (float64(j) + 0.5) / np)
			v := pole.scale(cr).add(e1.scale(sr * cp)).add(e2.scale(sr * sp))
			sinB = append(sinB, v.z)
			w = append(w, (1-cr1)/nr*2*math.Pi/np)
		}
	}
	density := func(d float64) float64 {
		sum := 0.0
		for i, sb := range sinB {
			sum += w[i] * testSheet.TracerDensity(d*sb+sun.ZPc, sigma)
		}
		return d * d * sum
	}
	// The same grid gives the cone's integral to about 1e−4.
	assert.InEpsilon(t, simpson(density, c.DistMinPc, c.DistMaxPc, 1000), s.BinIntegral(0), 1e-3)

	rng := rand.New(rand.NewPCG(41, 42))
	l, b, d, z := drawN(t, s, 0, 20000, rng)
	for i := range d {
		require.True(t, c.Contains(l[i], b[i], d[i]), "draw %d outside the cone", i)
		require.InDelta(t, ZPc(sun, l[i], b[i], d[i]), z[i], 1e-9)
	}
	_, p := ksOneSample(d, cumulativeTable(density, c.DistMinPc, c.DistMaxPc, 1500))
	assert.Greater(t, p, 0.01)
}

func TestAgeMixWithHeight(t *testing.T) {
	// A hotter age bin puts a larger share of its stars above |z| = 300 pc;
	// each share matches the slice integral over the sphere within 4σ.
	sun := DefaultSun()
	const R = 1000.0
	sigmas := []float64{10, 30}
	s, err := NewSampler(Sphere{RadiusPc: R}, sun, testSheet, flat, sigmas, SamplerOptions{})
	require.NoError(t, err)
	rng := rand.New(rand.NewPCG(51, 52))
	const n = 40000
	var frac [2]float64
	for k, sigma := range sigmas {
		high := 0
		for range n {
			_, _, _, z, _ := s.Draw(k, rng)
			if math.Abs(z) > 300 {
				high++
			}
		}
		frac[k] = float64(high) / n
		nu := func(z float64) float64 {
			h := z - sun.ZPc
			return testSheet.TracerDensity(z, sigma) * math.Pi * (R*R - h*h)
		}
		lo, hi := sun.ZPc-R, sun.ZPc+R
		want := (simpson(nu, lo, -300, 100000) + simpson(nu, 300, hi, 100000)) / simpson(nu, lo, hi, 200000)
		assert.InDelta(t, want, frac[k], 4*math.Sqrt(want*(1-want)/n), "σ = %v", sigma)
	}
	assert.Greater(t, frac[1], frac[0]+0.1)
}

func TestDrawRadialRejection(t *testing.T) {
	// With the radial exponential on, the kept fraction must equal
	// ∫ν w dV / (RadialAcceptanceMax ∫ν dV), w = exp(−(R − R0)/h), and the
	// kept stars must lean toward the Galactic centre as ∫ν w over the inner
	// half-space says. Reference by cylindrical quadrature about the Sun.
	// Common practice, no source.
	sun := DefaultSun()
	const R = 1000.0
	radial := DefaultRadial()
	const sigma = 20.0
	s, err := NewSampler(Sphere{RadiusPc: R}, sun, testSheet, radial, []float64{sigma}, SamplerOptions{})
	require.NoError(t, err)
	assert.InEpsilon(t, math.Exp(R/(radial.ScaleLengthKpc*1000)), s.RadialAcceptanceMax(), 1e-12)

	nu := func(z float64) float64 { return testSheet.TracerDensity(z, sigma) }
	weighted, inner := radialReference(sun, R, radial, nu)
	wantAcc := weighted / (s.RadialAcceptanceMax() * s.BinIntegral(0))
	wantInner := inner / weighted

	rng := rand.New(rand.NewPCG(61, 62))
	const n = 200000
	kept, keptInner := 0, 0
	for range n {
		l, _, _, _, ok := s.Draw(0, rng)
		if ok {
			kept++
			if math.Cos(l*degToRad) > 0 {
				keptInner++
			}
		}
	}
	acc := float64(kept) / n
	assert.InDelta(t, wantAcc, acc, 4*math.Sqrt(wantAcc*(1-wantAcc)/n))
	fin := float64(keptInner) / float64(kept)
	assert.InDelta(t, wantInner, fin, 4*math.Sqrt(wantInner*(1-wantInner)/float64(kept)))
	assert.Greater(t, fin, 0.5)
}

// radialReference returns ∫ν w dV over a sphere of radius R about the Sun,
// w = exp(−(R_gc − R0)/h), and the part of it on the inner half-space
// (toward the Galactic centre), by cylindrical quadrature about the Sun:
// G(ρ) = ∫₀^ρ ρ' dρ' ∫ dφ w over all φ and over the inner half (cos φ > 0),
// then Simpson in height. Common practice, no source.
func radialReference(sun Sun, R float64, radial Radial, nu func(z float64) float64) (weighted, inner float64) {
	h := radial.ScaleLengthKpc * 1000
	r0 := sun.RKpc * 1000
	const nRho, nPhi = 2000, 720
	gAll := make([]float64, nRho+1)
	gIn := make([]float64, nRho+1)
	dr := R / nRho
	ring := func(rho float64) (all, in float64) {
		for j := range nPhi {
			phi := 2 * math.Pi * (float64(j) + 0.5) / nPhi
			x := rho * math.Cos(phi)
			w := math.Exp(-(math.Hypot(r0-x, rho*math.Sin(phi)) - r0) / h)
			all += w
			if x > 0 {
				in += w
			}
		}
		return all * 2 * math.Pi / nPhi * rho, in * 2 * math.Pi / nPhi * rho
	}
	pa, pi := ring(0)
	for i := 1; i <= nRho; i++ {
		ca, ci := ring(float64(i) * dr)
		gAll[i] = gAll[i-1] + 0.5*dr*(pa+ca)
		gIn[i] = gIn[i-1] + 0.5*dr*(pi+ci)
		pa, pi = ca, ci
	}
	interp := func(g []float64, rho float64) float64 {
		x := rho / dr
		i := min(int(x), nRho-1)
		return g[i] + (x-float64(i))*(g[i+1]-g[i])
	}
	weighted = simpson(func(hz float64) float64 {
		return nu(sun.ZPc+hz) * interp(gAll, math.Sqrt(math.Max(0, R*R-hz*hz)))
	}, -R, R, 4000)
	inner = simpson(func(hz float64) float64 {
		return nu(sun.ZPc+hz) * interp(gIn, math.Sqrt(math.Max(0, R*R-hz*hz)))
	}, -R, R, 4000)
	return weighted, inner
}

func TestRadialAcceptanceMaxCone(t *testing.T) {
	// A cone looking away from the centre never gets closer than R0; one
	// looking at it gets within d_max cos(angle to the centre − radius).
	sun := DefaultSun()
	radial := DefaultRadial()
	away, err := NewSampler(Cone{LDeg: 180, BDeg: 0, RadiusDeg: 10, DistMaxPc: 2000}, sun, testSheet, radial, []float64{20}, SamplerOptions{})
	require.NoError(t, err)
	assert.Equal(t, 1.0, away.RadialAcceptanceMax())
	toward, err := NewSampler(Cone{LDeg: 30, BDeg: 0, RadiusDeg: 10, DistMaxPc: 2000}, sun, testSheet, radial, []float64{20}, SamplerOptions{})
	require.NoError(t, err)
	want := math.Exp(2000 * math.Cos(20*degToRad) / 2600)
	assert.InEpsilon(t, want, toward.RadialAcceptanceMax(), 1e-3)
	assert.GreaterOrEqual(t, toward.RadialAcceptanceMax(), want)
	// Every proposal's acceptance probability stays ≤ 1: R ≥ R_min. Draw
	// gives no angles for rejected points, so look at the proposals.
	rng := rand.New(rand.NewPCG(1, 1))
	for range 20000 {
		p := toward.propose(0, rng)
		l, b := p.angles()
		w := radial.Weight(RPc(sun, l, b, p.dPc)/1000, sun.RKpc)
		assert.LessOrEqual(t, w, toward.RadialAcceptanceMax()*(1+1e-12))
		assert.InEpsilon(t, w/toward.RadialAcceptanceMax(), math.Exp(-toward.radialExcess(&p)), 1e-9)
	}
}

func TestDrawDeterministic(t *testing.T) {
	s, err := NewSampler(Sphere{RadiusPc: 500}, DefaultSun(), testSheet, DefaultRadial(), []float64{5, 20}, SamplerOptions{})
	require.NoError(t, err)
	a := rand.New(rand.NewPCG(7, 7))
	b := rand.New(rand.NewPCG(7, 7))
	for range 1000 {
		l1, b1, d1, z1, ok1 := s.Draw(1, a)
		l2, b2, d2, z2, ok2 := s.Draw(1, b)
		require.Equal(t, ok1, ok2)
		require.Equal(t, [2]float64{d1, z1}, [2]float64{d2, z2})
		if ok1 {
			require.Equal(t, [2]float64{l1, b1}, [2]float64{l2, b2})
		} else {
			require.True(t, math.IsNaN(l1) && math.IsNaN(b1) && math.IsNaN(l2) && math.IsNaN(b2), "rejected points have no angles")
		}
	}
}

func TestProposalEfficiencyRisesWithFinerBlocks(t *testing.T) {
	f := Sphere{RadiusPc: 1000}
	coarse, err := NewSampler(f, DefaultSun(), testSheet, flat, []float64{5}, SamplerOptions{CellDzPc: 40, ShellPc: 100})
	require.NoError(t, err)
	fine, err := NewSampler(f, DefaultSun(), testSheet, flat, []float64{5}, SamplerOptions{CellDzPc: 4, ShellPc: 10})
	require.NoError(t, err)
	assert.Greater(t, fine.ProposalEfficiency(0), coarse.ProposalEfficiency(0))
	// Both describe the same integral.
	assert.InEpsilon(t, fine.BinIntegral(0), coarse.BinIntegral(0), 1e-6)
	capped, err := NewSampler(f, DefaultSun(), testSheet, flat, []float64{5}, SamplerOptions{MaxBlocks: 1000})
	require.NoError(t, err)
	assert.LessOrEqual(t, capped.NumBlocks(), 1000)
	dz, shell := capped.BlockSizePc()
	assert.Greater(t, dz, 5.0)
	assert.Greater(t, shell, 20.0)
}

func TestNewSamplerErrors(t *testing.T) {
	sun, f := DefaultSun(), Sphere{RadiusPc: 100}
	for _, c := range []struct {
		name string
		err  func() error
		want string
	}{
		{"nil field", func() error { _, e := NewSampler(nil, sun, testSheet, flat, []float64{10}, SamplerOptions{}); return e }, "nil field"},
		{"bad field", func() error {
			_, e := NewSampler(Sphere{RadiusPc: -1}, sun, testSheet, flat, []float64{10}, SamplerOptions{})
			return e
		}, "RadiusPc"},
		{"bad sun", func() error { _, e := NewSampler(f, Sun{}, testSheet, flat, []float64{10}, SamplerOptions{}); return e }, "RKpc"},
		{"bad sheet", func() error { _, e := NewSampler(f, sun, Sheet{}, flat, []float64{10}, SamplerOptions{}); return e }, "SheetSigmaKms"},
		{"bad radial", func() error {
			_, e := NewSampler(f, sun, testSheet, Radial{}, []float64{10}, SamplerOptions{})
			return e
		}, "ScaleLengthKpc"},
		{"no bins", func() error { _, e := NewSampler(f, sun, testSheet, flat, nil, SamplerOptions{}); return e }, "no age bins"},
		{"zero sigma", func() error {
			_, e := NewSampler(f, sun, testSheet, flat, []float64{10, 0}, SamplerOptions{})
			return e
		}, "age bin 1"},
		{"bad options", func() error {
			_, e := NewSampler(f, sun, testSheet, flat, []float64{10}, SamplerOptions{CellDzPc: -1})
			return e
		}, "CellDzPc"},
		{"empty bin", func() error {
			_, e := NewSampler(Cone{LDeg: 0, BDeg: 90, RadiusDeg: 1, DistMinPc: 2000, DistMaxPc: 3000}, sun, testSheet, flat, []float64{20, 0.5}, SamplerOptions{})
			return e
		}, "age bin 1 has no density"},
	} {
		assert.ErrorContains(t, c.err(), c.want, c.name)
	}
}

func benchSampler(b *testing.B, f Field) *Sampler {
	sigmas := make([]float64, 40)
	for k := range sigmas {
		sigmas[k] = testAVR.SigmaKms(0.05 + 0.25*float64(k))
	}
	s, err := NewSampler(f, DefaultSun(), testSheet, DefaultRadial(), sigmas, SamplerOptions{})
	if err != nil {
		b.Fatal(err)
	}
	return s
}

func BenchmarkSamplerDrawSphere(b *testing.B) {
	s := benchSampler(b, Sphere{RadiusPc: 1000})
	r := rand.New(rand.NewPCG(1, 2))
	k := 0
	for b.Loop() {
		s.Draw(k, r)
		k++
		if k == 40 {
			k = 0
		}
	}
}

// BenchmarkSamplerDrawSphereOneBin draws from one bin only, as a generator
// that groups its draws by age bin would: the bin's table stays in cache.
func BenchmarkSamplerDrawSphereOneBin(b *testing.B) {
	s := benchSampler(b, Sphere{RadiusPc: 1000})
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		s.Draw(20, r)
	}
}

func BenchmarkSamplerDrawCone(b *testing.B) {
	s := benchSampler(b, Cone{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000})
	r := rand.New(rand.NewPCG(1, 2))
	k := 0
	for b.Loop() {
		s.Draw(k, r)
		k++
		if k == 40 {
			k = 0
		}
	}
}

func BenchmarkNewSampler40BinsSphere1kpc(b *testing.B) {
	for b.Loop() {
		benchSampler(b, Sphere{RadiusPc: 1000})
	}
}
