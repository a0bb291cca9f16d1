package disk

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The rejection in Draw is exact only if the height-grid brackets hold:
// hi at a node bounds ν/ν(0) at and beyond it, lo at and before it, and
// every block's class bound dominates the density at the block's nearest
// height to the midplane. Checked for mixtures, at every node and block,
// and at random heights between nodes.
func TestHeightClassBoundsDominate(t *testing.T) {
	avr := AVR{Sigma10Kms: 25, Tau1Gyr: 0.5, Beta: 0.45}
	var bins []Mixture
	for _, edges := range [][2]float64{{0, 0.1}, {1, 2}, {6, 10}} {
		m, err := avr.BinMixture(edges[0], edges[1], 4)
		require.NoError(t, err)
		bins = append(bins, m)
	}
	sun := DefaultSun()
	for name, f := range map[string]Field{
		"cone":   Cone{LDeg: 58, BDeg: 21, RadiusDeg: 11, DistMaxPc: 1500},
		"sphere": Sphere{RadiusPc: 800, DistMinPc: 30},
		"cones":  ConeList{{LDeg: 0, BDeg: -60, RadiusDeg: 5, DistMaxPc: 4000}, {LDeg: 200, BDeg: 3, RadiusDeg: 2, DistMinPc: 100, DistMaxPc: 700}},
	} {
		s, err := NewMixtureSampler(f, sun, Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}, DefaultRadial(), bins, SamplerOptions{})
		require.NoError(t, err, name)
		rng := rand.New(rand.NewPCG(1, 2))
		for k := range s.bins {
			tab := &s.bins[k]
			for i, bd := range tab.bounds {
				v := tab.prof.rel(float64(i) * s.zStepPc)
				require.True(t, float64(bd.hi) >= v && float64(bd.lo) <= v, "%s bin %d node %d", name, k, i)
			}
			for i := range 20000 {
				n := i % (len(tab.bounds) - 1)
				z := (float64(n) + rng.Float64()) * s.zStepPc
				if i%2 == 1 {
					z = -z
				}
				v := tab.prof.rel(z)
				require.True(t, float64(tab.bounds[n+1].lo) <= v && v <= float64(tab.bounds[n].hi), "%s bin %d z %v", name, k, z)
			}
			for c := range s.classVolPc3 {
				for bi := s.classStart[c]; bi < s.classStart[c+1]; bi++ {
					b := &s.blocks[bi]
					cell := &s.cells[b.cell]
					sh := &s.shells[b.shell]
					zNear, zFar := heightExtremes(sh.dLoPc, sh.dHiPc(), cell.sinBMin, cell.sinBMax, s.zSunPc)
					require.LessOrEqual(t, tab.prof.rel(zNear), float64(tab.bounds[c].hi), "%s bin %d block %d", name, k, bi)
					require.Less(t, math.Abs(zFar)*s.invZStepPc, float64(len(tab.bounds)-1), "grid covers the block")
				}
			}
		}
		// The classes partition the blocks and their volumes add up to the
		// field's.
		assert.Equal(t, int32(len(s.blocks)), s.classStart[len(s.classStart)-1], name)
		vol := 0.0
		for _, v := range s.classVolPc3 {
			vol += v
		}
		assert.InEpsilon(t, f.VolumePc3(), vol, 1e-9, name)
	}
}

// A shell draws distances uniform in volume, P(d ≤ x) = (x³ − lo³)/(hi³ − lo³),
// from its mixture of the largest of one, two or three uniforms: thick and
// thin shells, and one reaching the Sun. One-sample KS (see ksOneSample).
func TestShellDistanceUniformInVolume(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, shell := range [][2]float64{{0, 100}, {50, 60}, {1000, 1088}, {10, 2000}} {
		lo, hi := shell[0], shell[1]
		b := newShell(lo, hi)
		const n = 100000
		d := make([]float64, n)
		spareUsed := 0
		for i := range d {
			x := rng.Uint64()
			var unused bool
			d[i], unused = b.distance(x, uint32(rng.Uint64()), rng)
			if !unused {
				spareUsed++
			}
			require.True(t, d[i] >= lo && d[i] < hi)
		}
		_, p := ksOneSample(d, func(x float64) float64 { return (x*x*x - lo*lo*lo) / (hi*hi*hi - lo*lo*lo) })
		assert.Greater(t, p, 1e-3, "shell %v", shell)
		if lo == 0 {
			assert.Equal(t, n, spareUsed, "a shell from d = 0 is the cube law alone")
		}
	}
}

// sinCosSmall must match the library to rounding over its range, and the
// Taylor direction of narrow cells the generic one.
func TestSinCosSmall(t *testing.T) {
	for i := -1000; i <= 1000; i++ {
		x := smallAngleRad * float64(i) / 1000
		s, c := sinCosSmall(x)
		ws, wc := math.Sincos(x)
		require.InDelta(t, ws, s, 3e-17, "sin %v", x)
		require.InDelta(t, wc, c, 2.3e-16, "cos %v", x)
	}
	cone := Cone{LDeg: 58, BDeg: 21, RadiusDeg: 11, DistMaxPc: 1500}
	rng := rand.New(rand.NewPCG(5, 6))
	narrow := 0
	for _, c := range cone.Cells(10) {
		if c.halfPhi > smallAngleRad {
			continue
		}
		narrow++
		for range 20 {
			cr := c.cMin + rng.Float64()*(c.cMax-c.cMin)
			v := rng.Float64()
			got := c.drawDirection(cr, v)
			want := c.directionAt(cr, c.phi1+v*(c.phi2-c.phi1))
			require.InDelta(t, 0, got.add(want.scale(-1)).norm(), 1e-15)
		}
	}
	assert.Greater(t, narrow, 100)
}
