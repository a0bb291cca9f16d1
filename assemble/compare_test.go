package assemble

import (
	"context"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
	"spinpop/model"
	"spinpop/scenarios"
)

// normalisation = "per-color-height" compares the period distribution
// within each color × height cell, which needs the heights compared: the
// likelihood options must ask for the 3-D comparison (before, every such
// scenario failed with "needs the 3-D comparison"). The others stay in
// the (color, period) plane.
func TestLikeOptionsUse3DOnlyPerColorHeight(t *testing.T) {
	r, err := scenarios.LoadExample("fit")
	require.NoError(t, err)
	s := r.Scenario
	for norm, want := range map[string]bool{compare.NormPerColorHeight: true, compare.NormPerColor: false, compare.NormFree: false} {
		s.Compare.Normalisation = norm
		o := LikeOptions(&s)
		assert.Equal(t, want, o.Use3D, norm)
		assert.Equal(t, norm, o.Normalisation)
	}
}

// The search completeness keys reach the observing population.
func TestSearchCompletenessAssembled(t *testing.T) {
	r, err := scenarios.LoadExample("fit")
	require.NoError(t, err)
	s := r.Scenario
	s.Survey.SearchHalfD, s.Survey.SearchTauPower, s.Survey.SearchSteepness = 25, 0.5, 8
	b, err := Build(&s)
	require.NoError(t, err)
	got := b.Population.Survey.Search
	assert.Equal(t, 25.0, got.HalfPeriodD)
	assert.Equal(t, 0.5, got.TurnoverPower)
	assert.Equal(t, 8.0, got.Steepness)
}

// Re-weighting a template run's stored stars by HeatingWeight gives what a
// run of the hotter disk gives: the counts per (age bin, height bin) of a
// run with σ(10 Gyr) = 30 km/s and β = 0.35 scatter about the re-weighted
// bank of a run with the example's 25 km/s and 0.45 as Poisson counts do
// (χ²/dof near 1, one overall scale free since the two runs' totals are
// normalised differently), while the bank without the weights is far off.
// Common practice, no source: a χ² test of counts against expectations.
func TestHeatingWeightMatchesARun(t *testing.T) {
	r, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	s := r.Scenario
	hot := s
	hot.Disk.Sigma10GyrKms, hot.Disk.HeatingBeta = 30, 0.35
	ctx := context.Background()
	run := func(sc *scenarios.Scenario, seed uint64, bank bool) (*compare.Templates, *Built, compare.Space) {
		b, err := Build(sc)
		require.NoError(t, err)
		sp, err := Space(sc)
		require.NoError(t, err)
		ints := make([]float64, len(b.AgeEdgesGyr)-1)
		for k := range ints {
			ints[k] = b.Sampler.BinIntegral(k)
		}
		opts := compare.TemplateOptions{Stars: 4_000_000, Seed: seed, Workers: 2}
		if bank {
			m := BankMargin(sc)
			opts.Bank = &m
		}
		tpl, err := compare.BuildTemplates(ctx, b.Population, ints, b.AgeEdgesGyr, sp, opts)
		require.NoError(t, err)
		return tpl, b, sp
	}
	base, b, sp := run(&s, 1, true)
	other, _, _ := run(&hot, 2, false)
	w, err := HeatingWeight(&s, &hot, b.AgeEdgesGyr)
	require.NoError(t, err)
	require.NotNil(t, w)
	none, err := HeatingWeight(&s, &s, b.AgeEdgesGyr)
	require.NoError(t, err)
	assert.Nil(t, none, "the same disk needs no weights")

	g := model.Grid{ColorEdges: sp.ColorEdges, LogPeriodEdges: sp.LogPeriodEdges, HeightEdgesPc: sp.HeightEdgesPc}
	nk, nb, nz := len(b.AgeEdgesGyr)-1, sp.NumBins(), sp.NumHeight()
	table := func(counts []float64) []float64 { // (age bin, height bin)
		out := make([]float64, nk*nz)
		for k := range nk {
			for i := range nb {
				out[k*nz+i%nz] += counts[k*nb+i]
			}
		}
		return out
	}
	chi2 := func(weight func(int, float64) float64) (float64, int) {
		exp, vars, err := base.Bank.Observe(ctx, b.Population, g, model.ObserveOptions{Weight: weight, BaseFractionScale: s.Stars.BinaryFractionScale})
		require.NoError(t, err)
		e, v, n := table(exp), table(vars), table(other.Counts)
		var se, sn float64
		for i := range e {
			se += e[i]
			sn += n[i]
		}
		a := sn / se
		var c float64
		dof := 0
		for i := range e {
			if e[i]*a < 20 {
				continue
			}
			d := n[i] - a*e[i]
			c += d * d / (a*e[i] + a*a*v[i])
			dof++
		}
		return c / float64(dof-1), dof
	}
	r1, dof := chi2(w)
	r0, _ := chi2(nil)
	t.Logf("χ²/dof re-weighted %.3f, not re-weighted %.3f, over %d (age, height) cells", r1, r0, dof)
	assert.Greater(t, dof, 100)
	assert.Less(t, r1, 1.3)
	assert.Greater(t, r0, 3.0)
}
