package assemble

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
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
