package pipeline

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

func TestBurstAgeBins(t *testing.T) {
	edges := scenarios.DefaultAgeBinEdges(10)
	free := func(lo, hi float64) []scenarios.FreeParam {
		return []scenarios.FreeParam{{Path: "history.decline.weight", Min: 0, Max: 2}, {Path: "history.burst.age_gyr", Min: lo, Max: hi}}
	}
	// example:fit's range: every bin 0.05 Gyr wide.
	b := burstAgeBins(edges, free(0.1, 3), "burst")
	require.NotNil(t, b)
	assert.InDelta(t, 0.05, b.NarrowestGyr, 1e-12)
	assert.InDelta(t, 0.05, b.WidestGyr, 1e-12)
	assert.Equal(t, "age bins over the burst's free ages (0.1–3 Gyr): 0.05 Gyr wide; a fitted burst age is no finer than its bin (disk.age_bin_edges_gyr)", b.Line())

	// Up to 5 Gyr the last bin overlapped is 3·(10/3)^(4/11) to
	// 3·(10/3)^(5/11) Gyr (the log bins' definition): 4.647924 to 5.185533.
	b = burstAgeBins(edges, free(0.5, 5), "burst")
	require.NotNil(t, b)
	assert.InDelta(t, 0.05, b.NarrowestGyr, 1e-12)
	assert.InDelta(t, 5.185533-4.647924, b.WidestGyr, 1e-9)
	assert.Contains(t, b.Line(), "0.05–0.538 Gyr wide")

	// A range ending on an edge does not reach into the next bin.
	b = burstAgeBins(edges, free(1, 3), "burst")
	assert.InDelta(t, 0.05, b.WidestGyr, 1e-12)

	// Another part's name, or no free age: nothing to say.
	assert.Nil(t, burstAgeBins(edges, free(0.1, 3), "event"))
	assert.Nil(t, burstAgeBins(edges, nil, "burst"))
	assert.Equal(t, "", (*BurstAgeBins)(nil).Line())
}
