package disk

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// ksTwoSample returns the two-sample Kolmogorov–Smirnov statistic of a and b
// and its asymptotic p-value, Q_KS((√Nₑ + 0.12 + 0.11/√Nₑ) D) with
// Nₑ = n_a n_b/(n_a + n_b). Source: Press et al., Numerical Recipes (3rd ed.,
// 2007), §14.3.3.
func ksTwoSample(a, b []float64) (d, p float64) {
	x, y := slices.Clone(a), slices.Clone(b)
	slices.Sort(x)
	slices.Sort(y)
	i, j := 0, 0
	for i < len(x) && j < len(y) {
		v := math.Min(x[i], y[j])
		for i < len(x) && x[i] <= v {
			i++
		}
		for j < len(y) && y[j] <= v {
			j++
		}
		d = math.Max(d, math.Abs(float64(i)/float64(len(x))-float64(j)/float64(len(y))))
	}
	ne := float64(len(x)) * float64(len(y)) / float64(len(x)+len(y))
	sq := math.Sqrt(ne)
	lambda := (sq + 0.12 + 0.11/sq) * d
	if lambda < 0.2 {
		return d, 1
	}
	sign := 1.0
	for k := 1; k <= 100; k++ {
		term := sign * 2 * math.Exp(-2*float64(k*k)*lambda*lambda)
		p += term
		if math.Abs(term) < 1e-12 {
			break
		}
		sign = -sign
	}
	return d, math.Max(0, math.Min(1, p))
}

// The joint sampler's bin fractions and radial lean must follow
// W_k ∫ν_k w dV, by cylindrical quadrature about the Sun (see
// radialReference). Common practice, no source.
func TestJointSphereMatchesQuadrature(t *testing.T) {
	sun := DefaultSun()
	const R = 1000.0
	radial := DefaultRadial()
	sigmas := []float64{10, 30}
	weights := []float64{1, 2}
	s, err := NewSampler(Sphere{RadiusPc: R}, sun, testSheet, radial, sigmas, SamplerOptions{})
	require.NoError(t, err)
	j, err := s.Joint(weights)
	require.NoError(t, err)

	var ref, refInner [2]float64
	for k, sg := range sigmas {
		ref[k], refInner[k] = radialReference(sun, R, radial, func(z float64) float64 { return testSheet.TracerDensity(z, sg) })
	}
	want0 := weights[0] * ref[0] / (weights[0]*ref[0] + weights[1]*ref[1])

	rng := rand.New(rand.NewPCG(3, 4))
	const n = 200000
	var count, inner [2]int
	for range n {
		k, l, b, d, z := j.Draw(rng)
		require.InDelta(t, ZPc(sun, l, b, d), z, 1e-9)
		count[k]++
		if math.Cos(l*degToRad) > 0 {
			inner[k]++
		}
	}
	got0 := float64(count[0]) / n
	assert.InDelta(t, want0, got0, 4*math.Sqrt(want0*(1-want0)/n))
	for k := range sigmas {
		want := refInner[k] / ref[k]
		got := float64(inner[k]) / float64(count[k])
		assert.InDelta(t, want, got, 4*math.Sqrt(want*(1-want)/float64(count[k])), "bin %d", k)
	}
}

// drawBinThenPlace is the scheme a JointSampler replaces: a bin with
// probability ∝ W_k·BinIntegral(k), a position from Draw, and both redrawn
// when Draw rejects the point.
func drawBinThenPlace(s *Sampler, weights []float64, r *rand.Rand) (k int, l, b, d, z float64) {
	p := make([]float64, len(weights))
	for i, w := range weights {
		p[i] = w * s.BinIntegral(i)
	}
	tab := make([]aliasEntry, len(p))
	buildAlias(p, tab)
	for {
		k = pickAlias(r.Uint64(), tab)
		var ok bool
		if l, b, d, z, ok = s.Draw(k, r); ok {
			return k, l, b, d, z
		}
	}
}

// Against the bin-then-Draw scheme in a cone toward the inner Galaxy, where
// the radial weight varies by a factor 1.6: the same bin fractions (χ² with
// 2 degrees of freedom, 0.999 quantile 13.82, from standard tables) and the
// same distributions of height, distance and longitude within each bin
// (two-sample KS). Common practice, no source.
// DrawMany, which carries several proposals through each step together,
// must draw the same law: it is checked the same way, in batches of
// lengths that leave groups of proposals part-used.
func TestJointMatchesBinThenDraw(t *testing.T) {
	t.Run("Draw", func(t *testing.T) { testJointMatchesBinThenDraw(t, false) })
	t.Run("DrawMany", func(t *testing.T) { testJointMatchesBinThenDraw(t, true) })
}

func testJointMatchesBinThenDraw(t *testing.T, many bool) {
	sun := DefaultSun()
	cone := Cone{LDeg: 30, BDeg: 12, RadiusDeg: 10, DistMaxPc: 1500}
	s, err := NewSampler(cone, sun, testSheet, DefaultRadial(), []float64{8, 15, 25}, SamplerOptions{})
	require.NoError(t, err)
	weights := []float64{1, 0.5, 2}
	j, err := s.Joint(weights)
	require.NoError(t, err)

	const n = 60000
	type sample struct{ z, d, l [3][]float64 }
	var a, b sample
	ra, rb := rand.New(rand.NewPCG(5, 6)), rand.New(rand.NewPCG(7, 8))
	var (
		ks   []int32
		dirs []Direction
		ds   []float64
		zs   []float64
	)
	for i := range n {
		var k int
		var l, d, z float64
		if many {
			if len(ks) == 0 {
				m := []int{1, 7, 999, 4096}[i%4]
				ks, dirs, ds, zs = make([]int32, m), make([]Direction, m), make([]float64, m), make([]float64, m)
				j.DrawMany(ra, ks, dirs, ds, zs)
			}
			k, d, z = int(ks[0]), ds[0], zs[0]
			l, _ = dirs[0].Angles()
			ks, dirs, ds, zs = ks[1:], dirs[1:], ds[1:], zs[1:]
		} else {
			k, l, _, d, z = j.Draw(ra)
		}
		require.True(t, cone.Contains(l, math.Asin((z-sun.ZPc)/d)*radToDeg, d))
		a.z[k], a.d[k], a.l[k] = append(a.z[k], z), append(a.d[k], d), append(a.l[k], math.Mod(l+180, 360))
		k, l, _, d, z = drawBinThenPlace(s, weights, rb)
		b.z[k], b.d[k], b.l[k] = append(b.z[k], z), append(b.d[k], d), append(b.l[k], math.Mod(l+180, 360))
	}
	chi2 := 0.0
	for k := range 3 {
		na, nb := float64(len(a.z[k])), float64(len(b.z[k]))
		chi2 += (na - nb) * (na - nb) / (na + nb)
	}
	assert.Less(t, chi2, 13.82)
	for k := range 3 {
		for name, pair := range map[string][2][]float64{"z": {a.z[k], b.z[k]}, "d": {a.d[k], b.d[k]}, "l": {a.l[k], b.l[k]}} {
			_, p := ksTwoSample(pair[0], pair[1])
			assert.Greater(t, p, 1e-3, "bin %d %s", k, name)
		}
	}
}

// Every point of a block lies at R ≥ the block's bound, which the joint
// envelope relies on; checked on proposals (kept or not) in a cone toward
// the centre, where R falls fastest, and in a sphere.
func TestJointBlockRadiusBound(t *testing.T) {
	sun := DefaultSun()
	for name, f := range map[string]Field{
		"cone":   Cone{LDeg: 5, BDeg: -3, RadiusDeg: 20, DistMaxPc: 3000},
		"sphere": Sphere{RadiusPc: 2000},
	} {
		s, err := NewSampler(f, sun, testSheet, DefaultRadial(), []float64{20}, SamplerOptions{MaxBlocks: 4000})
		require.NoError(t, err)
		j, err := s.Joint([]float64{1})
		require.NoError(t, err)
		rng := rand.New(rand.NewPCG(9, 10))
		worst := math.Inf(1)
		for range 100000 {
			var p proposal
			_, bi, _ := j.try(rng, &p)
			l, b := p.angles()
			worst = math.Min(worst, RPc(sun, l, b, p.dPc)-float64(j.rLoPc[bi]))
		}
		assert.GreaterOrEqual(t, worst, -1e-6, name)
		assert.Less(t, worst, 50.0, "%s: the bound is reasonably tight somewhere", name)
	}
}

func TestJointErrors(t *testing.T) {
	s, err := NewSampler(Sphere{RadiusPc: 300}, DefaultSun(), testSheet, DefaultRadial(), []float64{10, 20}, SamplerOptions{})
	require.NoError(t, err)
	_, err = s.Joint([]float64{1})
	assert.ErrorContains(t, err, "2 age bins")
	_, err = s.Joint([]float64{1, -1})
	assert.ErrorContains(t, err, "weight 1")
	_, err = s.Joint([]float64{0, 0})
	assert.ErrorContains(t, err, "positive weight")
	j, err := s.Joint([]float64{0, 1})
	require.NoError(t, err)
	r := rand.New(rand.NewPCG(1, 1))
	for range 1000 {
		k, _, _, _, _ := j.Draw(r)
		require.Equal(t, 1, k, "a bin of weight 0 is never drawn")
	}
	assert.Zero(t, testing.AllocsPerRun(100, func() { j.Draw(r) }))
}

func BenchmarkJointDrawCone(b *testing.B) {
	s := benchSampler(b, Cone{LDeg: 76, BDeg: 13.5, RadiusDeg: 8, DistMinPc: 100, DistMaxPc: 3000})
	w := make([]float64, s.NumBins())
	for k := range w {
		w[k] = 1
	}
	j, err := s.Joint(w)
	require.NoError(b, err)
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		j.Draw(r)
	}
}
