package pipeline

import (
	"runtime"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/scenarios"
)

// The estimate's memory does not grow with the star count (chunks are
// streamed through a fixed ring) but does with the chunk size and the
// threads, by exactly the chunks' bytes; its time grows in proportion to
// the stars. These are properties of the formula and of the measurement,
// not timings: no assertion depends on this machine's speed.
func TestEstimateScales(t *testing.T) {
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	b, err := Build(&res.Scenario, "example:base")
	require.NoError(t, err)

	// The estimate counts the heap in use when it is made; collect first
	// so that garbage of other tests in this process does not count.
	runtime.GC()
	small := EstimateRun(b, 2e6, 65536, 2, false)
	runtime.GC()
	huge := EstimateRun(b, 1e12, 65536, 2, false)
	require.Greater(t, small.ProbeStars, 0)
	assert.Greater(t, small.Seconds, 0.0)
	// Heap in use differs a little between the two calls (the probe's
	// chunk, garbage); the chunks' part is the same.
	assert.InDelta(t, float64(small.PeakBytes), float64(huge.PeakBytes), 16<<20, "memory flat in the star count")
	// No machine of today makes 10¹² stars in a day on two threads (the
	// generator makes about 10⁶ per second per core): refused, with both
	// the reason and the override named.
	err = huge.Refusal("run.stars_generated", "pass --yes")
	require.Error(t, err)
	assert.True(t, IsInputError(err), "a refusal is bad input: exit status 2")
	assert.Contains(t, err.Error(), "refusing to start a run of 1e12 stars: it would take ≈")
	assert.Contains(t, err.Error(), "pass --yes to start it all the same")
	assert.NoError(t, small.Refusal("run.stars_generated", "pass --yes"))

	wide := EstimateRun(b, 2e6, 1<<20, 8, false)
	chunkBytes := float64(2 * 2 * 8 * (1 << 20) * model.ChunkBytesPerStar()) // ×2 GC headroom, 2 chunks per worker, 8 workers
	assert.InDelta(t, chunkBytes, float64(wide.PeakBytes-small.PeakBytes), 0.02*chunkBytes+32<<20)

	// About one generated star in twenty reaches the base example's
	// catalog (a run of it selects 4.5 %); the probe sees the same order.
	frac := small.CatalogStars / float64(small.Stars)
	assert.Greater(t, frac, 0.005)
	assert.Less(t, frac, 0.2)
}

// A run needing more memory than the machine has is refused, and the
// message says what to lower.
func TestEstimateRefusesMemory(t *testing.T) {
	e := Estimate{Stars: 2e6, Seconds: 1, PeakBytes: 40 << 30, AvailableBytes: 20 << 30}
	err := e.Refusal("run.stars_generated", "pass --yes")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "it would need ≈ 40 GiB of memory and 20 GiB is available (lower run.chunk_stars or --threads)")
	e.AvailableBytes = 0 // unknown: no refusal on memory
	assert.NoError(t, e.Refusal("run.stars_generated", "pass --yes"))
}

func TestHumanUnits(t *testing.T) {
	assert.Equal(t, "2,000,000", CountString(2e6))
	assert.Equal(t, "999", CountString(999))
	assert.Equal(t, "1e12", CountString(1e12))
	assert.Equal(t, "8 days", DurationString(8*86400))
	assert.Equal(t, "90 min", DurationString(5400))
	assert.Equal(t, "2.5 h", DurationString(9000))
	assert.Equal(t, "136 MiB", BytesString(136<<20))
}
