package pipeline

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
	"spinpop/scenarios"
)

// The search loss's nodes and shares, freed in a scenario, reach the
// templates through the whole chain — the scenario's keys, Survey.SearchBands
// in the observing population, scenarios.SearchGradient and the bank's
// per-node derivatives: the derivative the comparison's source gives in
// each equals the difference quotient of two re-observations (exact, as
// the templates are linear in each share and node, the others held).
func TestSearchSharesThroughTheScenario(t *testing.T) {
	if testing.Short() {
		t.Skip("builds a template run")
	}
	ctx := context.Background()
	c := fitWithFree(t, "shares", `
[[compare.free]]
path = "survey.search_falloff.kept_24d"
min = 0.0
max = 1.0

[[compare.free]]
path = "survey.search_falloff.kept_48d"
min = 0.0
max = 1.0

[[compare.free]]
path = "survey.search_by_rossby.efficiency_24d"
min = 0.0
max = 1.0
`)
	require.Equal(t, []string{"survey.search_falloff.kept_24d", "survey.search_falloff.kept_48d", "survey.search_by_rossby.efficiency_24d"}, c.Nuisance.Names())
	so, ok := c.Nuisance.Source.(compare.SlopeObserver)
	require.True(t, ok, "the comparison's source gives derivatives")
	at := []float64{0.6, 0.5, 0.7}
	tpl, ds, err := so.ObserveSlopes(ctx, at, []int{0, 1, 2})
	require.NoError(t, err)
	for j := range at {
		moved := append([]float64(nil), at...)
		moved[j] -= 0.2
		t2, err := so.Observe(ctx, moved)
		require.NoError(t, err)
		var worst, scale float64
		for i := range tpl.Counts {
			fd := (tpl.Counts[i] - t2.Counts[i]) / 0.2
			worst = math.Max(worst, math.Abs(fd-ds[j].First.Counts[i]))
			scale = math.Max(scale, math.Abs(fd))
		}
		require.Positive(t, scale, "%s moves the templates", c.Nuisance.Names()[j])
		assert.Less(t, worst, 1e-9*scale, "%s", c.Nuisance.Names()[j])
	}
}

// fitWithFree sets up the comparison of a scenario named name that
// extends example:fit with small templates (300,000 stars), the burst's
// age free and the free entries given after it (TOML).
func fitWithFree(t *testing.T, name, free string) *Comparison {
	t.Helper()
	scen := filepath.Join(t.TempDir(), name+".toml")
	text := `extends = "example:fit"
name = "` + name + `"

[compare]
template_stars = 300_000

[[compare.free]]
path = "history.burst.age_gyr"
min = 0.2
max = 2.0
` + free
	require.NoError(t, os.WriteFile(scen, []byte(text), 0o644))
	res, err := scenarios.Resolve(scen)
	require.NoError(t, err)
	c, err := SetupComparison(context.Background(), res, ComparisonOptions{Source: scen, TemplateDir: "none"})
	require.NoError(t, err)
	return c
}
