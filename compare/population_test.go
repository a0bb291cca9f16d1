package compare

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"spinpop/disk"
	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/model/spots"
	"spinpop/sfh"
)

// testWorld is a small real population, built by hand the way
// assemble.Build builds one (base example's survey and disk, a
// narrower and nearer cone so that a few hundred thousand stars suffice).
type testWorld struct {
	pop     *model.Population
	sampler *disk.Sampler
	edges   []float64
	hist    *sfh.History
	rel     *model.Relations
	law     spin.Law
}

func (w *testWorld) binIntegrals() []float64 {
	out := make([]float64, len(w.edges)-1)
	for k := range out {
		out[k] = w.sampler.BinIntegral(k)
	}
	return out
}

// newTestWorld builds the population with the history's own bin
// probabilities (mass × line-of-sight integral) and exact ages in each bin,
// as assemble.Build does.
func newTestWorld(t testing.TB, hist *sfh.History, edges []float64) *testWorld {
	t.Helper()
	rel, err := model.DwarfSequence()
	require.NoError(t, err)
	imf, err := model.NewIMF("kroupa2001", 0.2, 1.4)
	require.NoError(t, err)
	turn, err := spin.TurnoverByName("wright2018")
	require.NoError(t, err)
	law := spin.Barnes2007()
	sun := disk.Sun{RKpc: 8.122, ZPc: 20.8}
	avr := disk.AVR{Sigma10Kms: 25, Tau1Gyr: 0.5, Beta: 0.45}
	mixes := make([]disk.Mixture, len(edges)-1)
	for k := range mixes {
		mixes[k], err = avr.BinMixture(edges[k], edges[k+1], 4)
		require.NoError(t, err)
	}
	field := disk.Cone{LDeg: 197, BDeg: -34, RadiusDeg: 8, DistMinPc: 0, DistMaxPc: 600}
	smp, err := disk.NewMixtureSampler(field, sun, disk.Sheet{SheetSigmaKms: 20, SurfaceDensityMsunPc2: 70}, disk.Radial{ScaleLengthKpc: 2.6}, mixes, disk.SamplerOptions{})
	require.NoError(t, err)
	nb := len(edges) - 1
	mass := hist.BinWeights(edges)
	prob := make([]float64, nb)
	samplers := make([]*sfh.RangeSampler, nb)
	for k := range nb {
		prob[k] = mass[k] * smp.BinIntegral(k)
		if mass[k] > 0 {
			samplers[k], err = hist.RangeSampler(edges[k], edges[k+1])
			require.NoError(t, err)
		}
	}
	det := spots.Detection{
		Noise:     spots.NoiseModel{FloorPpm: 60, RefMag: 12, PpmAtRefMag: 250},
		BaselineD: 1000, CadenceD: 0.03125, ThresholdSNR: 10, Sharpness: 4, MinCycles: 3,
	}
	amp := &spots.AmplitudeModel{RoSat: 0.15, AmpSatPpm: 10000, Slope: 1, ScatterDex: 0.3}
	pop := &model.Population{
		BinProb:   prob,
		Age:       func(k int, r *rand.Rand) float64 { return samplers[k].Sample(r) },
		Place:     smp,
		IMF:       imf,
		Relations: rel,
		Law:       law,
		Turnover:  turn,
		Spots:     amp,
		Evolved:   true,
		Binaries:  model.Binaries{FractionScale: 1, MassRatioMin: 0.1, TidalLockMaxD: 7},
		Survey: model.Survey{Band: model.BandV, BrightLimitMag: 10, FaintLimitMag: 16.5, Detect: det,
			Recovery: spots.RecoveryOptions{RelScatter: 0.03, HalfProb: 0.02, DoubleProb: 0.01}},
		Cuts: model.Cuts{BVMin: 0.45, BVMax: 1.6, MSBandBrightMag: 0.4, MSBandFaintMag: 0.4, PeriodMinD: 0.0625, PeriodMaxD: 333.33},
	}
	require.NoError(t, pop.Prepare())
	return &testWorld{pop: pop, sampler: smp, edges: edges, hist: hist, rel: rel, law: law}
}
