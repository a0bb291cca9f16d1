package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Fact of photometry (fluxes add, m = −2.5 log10 F + const): an
// equal-brightness unresolved pair is 2.5 log10 2 = 0.753 mag brighter.
func TestCombineMagsEqualPair(t *testing.T) {
	for _, m := range []float64{-1, 4.81, 15} {
		assert.InDelta(t, m-2.5*math.Log10(2), CombineMags(m, m), 1e-12)
		assert.InDelta(t, 0.753, m-CombineMags(m, m), 5e-4)
	}
}

// Fluxes add, order does not matter, and a dark source changes nothing.
// Common practice, no source.
func TestCombineMagsFluxSum(t *testing.T) {
	flux := func(m float64) float64 { return math.Pow(10, -0.4*m) }
	for _, c := range [][2]float64{{4, 6}, {10, 3}, {5, 25}, {-2, 0.5}} {
		got := CombineMags(c[0], c[1])
		assert.InEpsilon(t, flux(c[0])+flux(c[1]), flux(got), 1e-12)
		assert.Equal(t, got, CombineMags(c[1], c[0]))
		assert.LessOrEqual(t, got, math.Min(c[0], c[1]))
	}
	assert.Equal(t, 7.0, CombineMags(7, math.Inf(1)))
	assert.Equal(t, 7.0, CombineMags(math.Inf(1), 7))
}

// An equal-mass pair on the relations is 0.753 mag brighter than either
// star in every band while keeping its colors.
func TestEqualMassBinaryOnRelations(t *testing.T) {
	rel := dwarfs(t)
	p, ok := rel.At(0.8)
	require.True(t, ok)
	assert.InDelta(t, p.AbsMagV-0.7526, CombineMags(p.AbsMagV, p.AbsMagV), 1e-4)
	assert.InDelta(t, p.AbsMagKs-0.7526, CombineMags(p.AbsMagKs, p.AbsMagKs), 1e-4)
	bv := CombineMags(p.AbsMagV+p.BV, p.AbsMagV+p.BV) - CombineMags(p.AbsMagV, p.AbsMagV)
	assert.InDelta(t, p.BV, bv, 1e-12)
}

// From memory of Raghavan et al. (2010), ApJS 190, 1 (solar-type
// multiplicity ≈ 0.44) and Duchêne & Kraus (2013), ARA&A 51, 269 (M dwarfs
// ≈ 0.26, very-low-mass ≈ 0.22, 1.5–5 M☉ ≳ 0.5); tolerance 0.02 reflects
// that the published values carry ±0.02–0.03.
func TestBinaryFraction(t *testing.T) {
	assert.InDelta(t, 0.44, BinaryFraction(1.0), 0.02)
	assert.InDelta(t, 0.26, BinaryFraction(0.3), 0.02)
	assert.InDelta(t, 0.22, BinaryFraction(0.06), 0.02)
	assert.InDelta(t, 0.50, BinaryFraction(3), 0.02)
	prev := 0.0
	for m := 0.01; m < 10; m *= 1.05 {
		f := BinaryFraction(m)
		assert.GreaterOrEqual(t, f, prev, "non-decreasing at %g", m)
		assert.True(t, f > 0 && f < 1)
		prev = f
	}
}

// Companion: the share of primaries with a companion matches frac and
// q = m2/m1 is flat on [qMin, 1]. Binomial and uniform tolerances at 5σ.
func TestCompanionDistribution(t *testing.T) {
	const n = 200000
	const qMin, primary = 0.2, 0.9
	r := rand.New(rand.NewPCG(3, 4))
	frac := func(float64) float64 { return 0.4 }
	var has int
	var qs []float64
	for range n {
		m2, ok := Companion(primary, r, frac, qMin)
		if !ok {
			assert.Zero(t, m2)
			continue
		}
		has++
		q := m2 / primary
		require.True(t, q >= qMin && q <= 1, "q = %g", q)
		qs = append(qs, q)
	}
	assert.InDelta(t, 0.4, float64(has)/n, 5*math.Sqrt(0.4*0.6/n))
	// Uniform on [qMin, 1]: mean (1+qMin)/2, and a quarter of the draws in
	// each quarter of the range.
	mean := 0.0
	quarters := [4]float64{}
	for _, q := range qs {
		mean += q
		quarters[min(int((q-qMin)/(1-qMin)*4), 3)]++
	}
	mean /= float64(len(qs))
	sd := (1 - qMin) / math.Sqrt(12)
	assert.InDelta(t, (1+qMin)/2, mean, 5*sd/math.Sqrt(float64(len(qs))))
	for _, c := range quarters {
		share := c / float64(len(qs))
		assert.InDelta(t, 0.25, share, 5*math.Sqrt(0.25*0.75/float64(len(qs))))
	}
}

// nil frac means BinaryFraction; every call draws exactly two numbers.
func TestCompanionDefaultsAndStream(t *testing.T) {
	const n = 100000
	r := rand.New(rand.NewPCG(5, 6))
	has := 0
	for range n {
		if _, ok := Companion(1, r, nil, 0.1); ok {
			has++
		}
	}
	f := BinaryFraction(1)
	assert.InDelta(t, f, float64(has)/n, 5*math.Sqrt(f*(1-f)/n))

	a := rand.New(rand.NewPCG(9, 9))
	b := rand.New(rand.NewPCG(9, 9))
	always := func(float64) float64 { return 1 }
	never := func(float64) float64 { return 0 }
	Companion(1, a, always, 0.1)
	Companion(1, b, never, 0.1)
	assert.Equal(t, a.Float64(), b.Float64(), "streams stay in step whatever the outcome")
}

// The generator decides companions with companionFrom and the fraction
// worked out only where u could depend on it; that must decide exactly as
// Companion's rule u < f with the full fraction. BinaryFraction with its
// precomputed node spacings must stay the log-linear interpolation.
func TestCompanionShortcut(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 13))
	for _, scale := range []float64{0.5, 1, 1.7, 3} {
		for i := range 200000 {
			m := 0.01 * math.Pow(5000, r.Float64())
			if i%2 == 0 {
				// Near a node, or on a cell edge of binaryFractionBounds.
				m = binaryFractionNodes[i/2%len(binaryFractionNodes)].massMsun
				if i%4 == 0 {
					m = math.Ldexp(1, fracCellLo+i/4%10) * (1 + float64(i/40%64)/64)
				}
				m = math.Nextafter(m, m+float64(i%3-1))
			}
			lo, hi := binaryFractionBounds(m)
			inCells := m >= math.Ldexp(1, fracCellLo) && m < math.Ldexp(1, fracCellLo+10)
			require.True(t, lo >= binaryFractionMin-1e-12 && hi <= binaryFractionMax+1e-12 && (!inCells || hi-lo < 0.01), "mass %v: bounds [%v, %v]", m, lo, hi)
			fLo, fHi := min(1, scale*lo), min(1, scale*hi)
			u, v := r.Float64(), r.Float64()
			if i%5 == 0 {
				u = fLo + (fHi-fLo)*v // where the fraction must be worked out
			}
			full := min(1, scale*BinaryFraction(m))
			require.True(t, full >= fLo && full <= fHi, "mass %v: %v outside [%v, %v]", m, full, fLo, fHi)
			f := fLo
			if u >= fLo && u < fHi {
				f = full
			}
			m1, h1 := companionFrom(m, u, v, f, 0.1)
			m2, h2 := companionFrom(m, u, v, full, 0.1)
			require.Equal(t, h2, h1, "scale %v mass %v u %v", scale, m, u)
			require.Equal(t, m2, m1)
		}
	}
	n := binaryFractionNodes
	for i := 1; i < len(n); i++ {
		m := math.Sqrt(n[i-1].massMsun * n[i].massMsun) // halfway in log mass
		assert.InDelta(t, 0.5*(n[i-1].frac+n[i].frac), BinaryFraction(m), 1e-15)
	}
}

func TestCheckQMin(t *testing.T) {
	assert.NoError(t, CheckQMin(0))
	assert.NoError(t, CheckQMin(0.1))
	assert.NoError(t, CheckQMin(1))
	for _, q := range []float64{-0.1, 1.5, math.NaN()} {
		err := CheckQMin(q)
		require.Error(t, err)
		assert.Contains(t, err.Error(), "[0, 1]")
	}
}

func BenchmarkCombineMags(b *testing.B) {
	s := 0.0
	x := 0.0
	for b.Loop() {
		s += CombineMags(5, 6+x)
		x += 1e-9
	}
	_ = s
}
