package pipeline_test

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/pipeline"
	"spinpop/scenarios"
	"spinpop/tablewrite"
)

// The column table drives both writers: the tablewrite CSV of a run is the
// CatalogWriter's byte for byte, and FITS and Parquet files take the same
// rows.
func TestTableCatalogMatchesCatalogWriter(t *testing.T) {
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	res.Scenario.Run.StarsGenerated = 100_000
	dir := t.TempDir()
	var direct bytes.Buffer
	cw := pipeline.NewCatalogWriter(&direct)
	tables := map[string]tablewrite.Writer{}
	var writers []*pipeline.TableCatalog
	for _, format := range tablewrite.Formats {
		w, err := tablewrite.Create(filepath.Join(dir, "catalog"+tablewrite.FileExtension(format)), format, "CATALOG", pipeline.CatalogTableColumns())
		require.NoError(t, err)
		tables[format] = w
		writers = append(writers, pipeline.NewTableCatalog(w))
	}
	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{Visit: func(c *model.Chunk) error {
		for _, w := range writers {
			if err := w.Add(c); err != nil {
				return err
			}
		}
		return cw.Add(c)
	}})
	require.NoError(t, err)
	require.NoError(t, cw.Flush())
	for format, w := range tables {
		assert.Equal(t, sim.Tally.Selected(), w.Rows(), format)
		require.NoError(t, w.Close(), format)
	}
	csv, err := os.ReadFile(filepath.Join(dir, "catalog.csv"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(direct.Bytes(), csv), "the tablewrite CSV is the catalog writer's")
}
