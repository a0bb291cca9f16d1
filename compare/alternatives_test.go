package compare

import (
	"context"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// altSetup returns two explanations of a catalog that differ in their
// physics — the intrinsic period scatter of the spin-down (0.04 and 0.12
// dex), a stand-in for "plain" and "stalled" spin-down — each with a
// constant history plus a burst of free mass fraction at 2.5 Gyr.
func altSetup(t testing.TB, scatterA, scatterB float64) (tplA, tplB *Templates, hist HistoryModel) {
	edges := make([]float64, 11)
	for i := range edges {
		edges[i] = float64(i)
	}
	tplA = gyroTemplates(t, edges, 10, 24, 1e4, scatterA)
	tplB = gyroTemplates(t, edges, 10, 24, 1e4, scatterB)
	h, err := sfh.New(10, []sfh.Part{
		{Name: "smooth", Component: sfh.Constant{}, Weight: 1},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 2.5, WidthGyr: 0.4, MassFraction: 0.1}},
	})
	require.NoError(t, err)
	hist = HistoryModel{Base: h, AgeEdgesGyr: edges, Free: []FreeParam{{Name: "burst.mass_fraction", Min: 0, Max: 0.5}}}
	return tplA, tplB, hist
}

func altRun(t *testing.T, data []float64, tplA, tplB *Templates, hist HistoryModel) *AltResult {
	t.Helper()
	return altCompare(t, data, AltOptions{Replicates: 99, Seed: 4, Workers: 2},
		altSpec{"narrow", tplA, hist}, altSpec{"wide", tplB, hist})
}

// altSpec is one explanation of a test: its name, templates and history.
type altSpec struct {
	name string
	tpl  *Templates
	hist HistoryModel
}

// altCompare compares the explanations on data, each with its own
// likelihood (template noise ignored).
func altCompare(t *testing.T, data []float64, opts AltOptions, specs ...altSpec) *AltResult {
	t.Helper()
	alts := make([]Alternative, len(specs))
	for i, sp := range specs {
		l, err := NewLikelihood(sp.tpl, data, LikeOptions{TemplateNoise: NoiseIgnore})
		require.NoError(t, err)
		alts[i] = Alternative{Name: sp.name, Like: l, History: sp.hist}
	}
	res, err := CompareAlternatives(context.Background(), alts, opts)
	require.NoError(t, err)
	t.Log(res.Verdict)
	return res
}

// Data made by one explanation: the comparison prefers it, finds it
// adequate and rejects the other. Data made by neither (a scatter half
// way between): neither describes them. Common practice, no source: the
// bootstrap form of Cox's test of non-nested models.
func TestCompareAlternatives(t *testing.T) {
	tplA, tplB, hist := altSetup(t, 0.04, 0.12)
	w, err := hist.Weights([]float64{0.15})
	require.NoError(t, err)
	nA := poissonData(tplA, w, 20000/tplA.totalStars(w), 3)
	res := altRun(t, nA, tplA, tplB, hist)
	assert.Equal(t, "prefers", res.Outcome)
	assert.Equal(t, "narrow", res.Best)
	assert.True(t, res.Fits[0].Adequacy.Adequate(AdequacyLevel), "the true explanation describes its own data")
	assert.False(t, res.Fits[1].Adequacy.Adequate(AdequacyLevel))
	require.Len(t, res.Pairs, 1)
	assert.Less(t, res.Pairs[0].PUnderB, 0.02, "wide is rejected in favour of narrow")
	assert.Greater(t, res.Pairs[0].PUnderA, 0.05, "narrow is not rejected")
	assert.InDelta(t, 0.15, res.Fits[0].Fit.Theta[0], 0.03)

	tplM, _, _ := altSetup(t, 0.08, 0.08)
	nM := poissonData(tplM, w, 20000/tplM.totalStars(w), 5)
	res = altRun(t, nM, tplA, tplB, hist)
	assert.Equal(t, "neither-fits", res.Outcome)
	assert.Empty(t, res.Best)
	assert.Contains(t, res.Verdict, "Neither explanation fits")
}

// With few replicates, a likelihood ratio far beyond every replicate is
// not stuck at the counting floor 1/(1 + B): the p-value follows the
// replicates' normal tail, so "rejected at 1 %" does not need 100
// replicates when the data are thousands of units of 2 ln L away.
func TestPairPValueBeyondEveryReplicate(t *testing.T) {
	tplA, tplB, hist := altSetup(t, 0.04, 0.12)
	w, err := hist.Weights([]float64{0.15})
	require.NoError(t, err)
	nA := poissonData(tplA, w, 20000/tplA.totalStars(w), 3)
	res := altCompare(t, nA, AltOptions{Replicates: 19, Seed: 4, Workers: 2, NoEvidence: true},
		altSpec{"narrow", tplA, hist}, altSpec{"wide", tplB, hist})
	require.Len(t, res.Pairs, 1)
	assert.Less(t, res.Pairs[0].PUnderB, 1.0/20, "beyond the counting floor of 19 replicates")
	assert.Equal(t, "narrow", res.Best)
}

// The normal tail against a printed table: P(Z ≥ 1.96) = 0.0249979 and
// P(Z ≥ 3) = 0.0013499 (Abramowitz & Stegun 1964, Table 26.1).
func TestNormalUpperTail(t *testing.T) {
	assert.InDelta(t, 0.0249979, normalUpperTail(1.96, 0, 1), 1e-7)
	assert.InDelta(t, 0.0013499, normalUpperTail(10+3*2, 10, 2), 1e-7)
	assert.Equal(t, 0.0, normalUpperTail(5, 4, 0))
	assert.Equal(t, 1.0, normalUpperTail(3, 4, 0))
}

// A preferred explanation whose burst age sits on an edge of its range
// says so first: data with a burst at 2.5 Gyr, explained by a constant
// history or by one with a burst free only from 3 to 8 Gyr. The burst
// alternative wins with its age pushed to 3 Gyr, the range's answer; with
// the range opened to 1–8 Gyr it wins inside the range and no caution is
// given.
func TestAlternativesCautionBurstOnRangeEdge(t *testing.T) {
	tpl, _, hist := altSetup(t, 0.06, 0.06)
	w, err := hist.Weights([]float64{0.3})
	require.NoError(t, err)
	data := poissonData(tpl, w, 20000/tpl.totalStars(w), 7)
	flat, err := sfh.New(10, []sfh.Part{{Name: "smooth", Component: sfh.Constant{}, Weight: 1}})
	require.NoError(t, err)
	smooth := HistoryModel{Base: flat, AgeEdgesGyr: hist.AgeEdgesGyr}
	run := func(minAge float64) *AltResult {
		burst := hist
		burst.Free = []FreeParam{{Name: "burst.age_gyr", Min: minAge, Max: 8}, {Name: "burst.mass_fraction", Min: 0, Max: 0.5}}
		return altCompare(t, data, AltOptions{Replicates: 19, Seed: 2, Workers: 2, NoEvidence: true},
			altSpec{"smooth", tpl, smooth}, altSpec{"burst", tpl, burst})
	}
	res := run(3)
	require.Equal(t, "burst", res.Best)
	require.Len(t, res.Fits[1].AgesOnEdge, 1)
	assert.Equal(t, "burst.age_gyr at the youngest age its range allows (3 Gyr)", res.Fits[1].AgesOnEdge[0])
	assert.True(t, strings.HasPrefix(res.Verdict, `Caution: the fit of "burst" puts burst.age_gyr at the youngest age its range allows (3 Gyr)`), res.Verdict)

	res = run(1)
	require.Equal(t, "burst", res.Best)
	assert.Empty(t, res.Fits[1].AgesOnEdge)
	assert.NotContains(t, res.Verdict, "Caution")
}
