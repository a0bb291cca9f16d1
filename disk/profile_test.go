package disk

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// The interpolated profile stays within the cubic Hermite bound of the
// exact one, relative error (h n)⁴ e^(h n)/384 ≈ 2e−9 (see lcTableStepN;
// the bound is common practice for Hermite interpolation), here checked at
// 5e−9 for single tracers cold and hot and for a mixture.
func TestProfileTableMatchesProfile(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 1))
	for _, m := range []Mixture{
		{{SigmaKms: 3, Weight: 1}},
		{{SigmaKms: 25, Weight: 1}},
		{{SigmaKms: 6, Weight: 1}, {SigmaKms: 12, Weight: 2}, {SigmaKms: 40, Weight: 0.5}},
	} {
		p := newProfile(testSheet, m)
		const lcMax = 6.0
		h, ok := lcTableStep(p.maxExponent(), lcMax)
		require.True(t, ok)
		tab := p.table(h, lcMax)
		for range 20000 {
			lc := lcMax * r.Float64()
			want := p.relLogCosh(lc)
			if want < 1e-250 {
				continue
			}
			require.InEpsilon(t, want, tab.at(lc), 5e-9, "mixture %v lc %v", m, lc)
		}
		require.InEpsilon(t, p.relLogCosh(lcMax), tab.at(lcMax), 5e-9, "at the end of the table")
	}
	// A grid that would be too fine is refused: the caller evaluates
	// profiles directly.
	_, ok := lcTableStep(1e6, 10)
	require.False(t, ok)
}

// Bin integrals from tabulated profiles agree with direct evaluation.
func TestBinIntegralTableAgreesWithDirect(t *testing.T) {
	s, err := NewSampler(Cone{LDeg: 40, BDeg: -30, RadiusDeg: 8, DistMaxPc: 2000}, DefaultSun(), testSheet, flat, []float64{4, 15, 35}, SamplerOptions{})
	require.NoError(t, err)
	lc, nodeW := s.nodes(1 / testSheet.Z0Pc())
	lcMax := 0.0
	for _, v := range lc {
		lcMax = math.Max(lcMax, v)
	}
	per := len(lc) / len(s.blocks)
	w := make([]float64, len(s.classVolPc3))
	for k := range s.bins {
		p := s.bins[k].prof
		h, ok := lcTableStep(p.maxExponent(), lcMax)
		require.True(t, ok)
		tab := s.buildBin(p, 1, lc, lcMax, h, nodeW, per, w)
		direct := s.buildBin(p, 1, lc, lcMax, 0, nodeW, per, w)
		require.InEpsilon(t, direct.integral, tab.integral, 1e-8, "bin %d", k)
	}
}
