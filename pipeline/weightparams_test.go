package pipeline

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
)

// The parameters that only re-weight stored stars — the binary share, the
// spots' slope, saturated amplitude and scatter, the detection threshold
// and sharpness — freed in a scenario, get their
// derivatives from the templates' own pass through the whole chain (the
// scenario's keys, the observing population, the bank's closed forms):
// each equals the central differences of re-observations, first and
// second (a standard numerical check), and the binary share, linear, has
// no second. The spots' saturation is left to side points.
func TestWeightParamsThroughTheScenario(t *testing.T) {
	if testing.Short() {
		t.Skip("builds a template run")
	}
	ctx := context.Background()
	c := fitWithFree(t, "weights", `
[[compare.free]]
path = "stars.binary_fraction_scale"
min = 0.0
max = 2.0

[[compare.free]]
path = "spin.spots.slope"
min = 0.3
max = 4.0

[[compare.free]]
path = "survey.detection_snr"
min = 3.0
max = 30.0

[[compare.free]]
path = "spin.spots.amp_sat_ppm"
min = 2000
max = 30000

[[compare.free]]
path = "survey.detection_sharpness"
min = 1.0
max = 10.0

[[compare.free]]
path = "spin.spots.scatter_dex"
min = 0.05
max = 0.6

[[compare.free]]
path = "spin.spots.ro_sat"
min = 0.05
max = 0.5
`)
	names := c.Nuisance.Names()
	require.Equal(t, []string{"stars.binary_fraction_scale", "spin.spots.slope", "survey.detection_snr", "spin.spots.amp_sat_ppm", "survey.detection_sharpness", "spin.spots.scatter_dex", "spin.spots.ro_sat"}, names)
	so, ok := c.Nuisance.Source.(compare.SlopeObserver)
	require.True(t, ok, "the comparison's source gives derivatives")
	assert.False(t, so.Slopes(6), "no derivatives in the spots' saturation")
	for j, p := range c.Nuisance.Params {
		assert.Equal(t, j == 0, p.Linear, "%s: linear", p.Name)
	}
	at := []float64{1.2, 1.6, 11, 9000, 3.5, 0.27, 0.15}
	tpl, ds, err := so.ObserveSlopes(ctx, at, []int{0, 1, 2, 3, 4, 5})
	require.NoError(t, err)
	assert.Nil(t, ds[0].Second, "the binary share is linear")
	for j, h := range []float64{0.1, 0.01, 0.05, 20, 0.01, 0.002} {
		moved := func(d float64) []float64 {
			v := append([]float64(nil), at...)
			v[j] += d
			tp, err := so.Observe(ctx, v)
			require.NoError(t, err)
			return tp.Counts
		}
		up, down := moved(h), moved(-h)
		var size, worst, size2, worst2 float64
		for i, c0 := range tpl.Counts {
			size = math.Max(size, math.Abs(ds[j].First.Counts[i]))
			worst = math.Max(worst, math.Abs((up[i]-down[i])/(2*h)-ds[j].First.Counts[i]))
			second := 0.0
			if ds[j].Second != nil {
				second = ds[j].Second.Counts[i]
			}
			size2 = math.Max(size2, math.Abs(second))
			worst2 = math.Max(worst2, math.Abs((up[i]-2*c0+down[i])/(h*h)-second))
		}
		require.Positive(t, size, "%s moves the templates", names[j])
		if j == 0 {
			assert.Less(t, worst, 1e-9*size, "%s", names[j])
			assert.Less(t, worst2, 1e-6*size, "%s: straight", names[j])
			continue
		}
		assert.Less(t, worst, 2e-3*size, "%s: first derivative", names[j])
		assert.Less(t, worst2, 2e-2*size2, "%s: second derivative", names[j])
	}
}
