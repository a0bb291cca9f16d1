package pipeline_test

import (
	"bytes"
	"context"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/pipeline"
	"spinpop/scenarios"
)

// The catalog kept in memory holds exactly the stars the tally counts as
// selected and that a CatalogWriter streams, row for row.
func TestSimulateCatalogInMemoryMatchesStream(t *testing.T) {
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	res.Scenario.Run.StarsGenerated = 150_000
	var streamed bytes.Buffer
	cw := pipeline.NewCatalogWriter(&streamed)
	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{KeepCatalog: true, Workers: 2, Visit: cw.Add})
	require.NoError(t, err)
	require.NoError(t, cw.Flush())
	require.NotNil(t, sim.Catalog)
	assert.Equal(t, sim.Tally.Selected(), int64(sim.Catalog.N))
	assert.Equal(t, sim.Manifest.CatalogStars, int64(sim.Catalog.N))
	assert.Greater(t, sim.Catalog.N, 1000)

	var fromMemory bytes.Buffer
	mw := pipeline.NewCatalogWriter(&fromMemory)
	require.NoError(t, mw.Add(sim.Catalog))
	require.NoError(t, mw.Flush())
	assert.Equal(t, streamed.String(), fromMemory.String())
	for i := 0; i < sim.Catalog.N; i++ {
		require.True(t, sim.Catalog.Flags[i].Selected())
	}
}

// A catalog larger than output.catalog_max_stars is not kept, and the
// manifest says so.
func TestSimulateCatalogLimit(t *testing.T) {
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	res.Scenario.Run.StarsGenerated = 100_000
	res.Scenario.Output.CatalogMaxStars = 10
	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{KeepCatalog: true})
	require.NoError(t, err)
	assert.True(t, sim.CatalogTooLarge)
	assert.Nil(t, sim.Catalog)
	assert.True(t, strings.Contains(strings.Join(sim.Manifest.Warnings, "\n"), "catalog_max_stars"))
	require.Len(t, sim.Manifest.Counts, len(model.Steps))
}
