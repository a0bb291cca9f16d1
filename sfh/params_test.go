package sfh_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

func TestParamsNamesAndRanges(t *testing.T) {
	h := mustNew(t, mix2())
	inf := math.Inf(1)
	want := []sfh.Param{
		{Name: "rising.weight", Value: 1, Min: 0, Max: inf},
		{Name: "rising.timescale_gyr", Value: -2, Min: -inf, Max: 0},
		{Name: "bins.weight", Value: 1, Min: 0, Max: inf},
		{Name: "bins.rate_0", Value: 3, Min: 0, Max: inf},
		{Name: "bins.rate_1", Value: 0, Min: 0, Max: inf},
		{Name: "bins.rate_2", Value: 1, Min: 0, Max: inf},
		{Name: "bins.rate_3", Value: 0.5, Min: 0, Max: inf},
		{Name: "old.age_gyr", Value: 10, Min: 0, Max: maxAge},
		{Name: "old.width_gyr", Value: 1, Min: 0, Max: inf},
		{Name: "old.mass_fraction", Value: 0.1, Min: 0, Max: 1},
		{Name: "quench.age_gyr", Value: 1.5, Min: 0, Max: maxAge},
		{Name: "quench.width_gyr", Value: 0.3, Min: 0, Max: inf},
		{Name: "quench.depth", Value: 1, Min: 0, Max: 1},
		{Name: "lull.age_gyr", Value: 8, Min: 0, Max: maxAge},
		{Name: "lull.width_gyr", Value: 2, Min: 0, Max: inf},
		{Name: "lull.depth", Value: 0.3, Min: 0, Max: 1},
	}
	assert.Equal(t, want, h.Params())
}

func TestWithParamsRoundTrip(t *testing.T) {
	for _, tc := range testHistories() {
		h := mustNew(t, tc.parts)
		values := map[string]float64{}
		for _, p := range h.Params() {
			values[p.Name] = p.Value
		}
		h2, err := h.WithParams(values)
		require.NoError(t, err, tc.name)
		assert.Equal(t, h.Params(), h2.Params(), tc.name)
		for _, a := range []float64{0.3, 2, 5, 9, 12.5} {
			assert.Equal(t, h.Rate(a), h2.Rate(a), tc.name)
		}
		assert.Equal(t, h.String(), h2.String())
	}
}

// WithParams changes only the named values and returns a copy.
func TestWithParamsChangesCopy(t *testing.T) {
	h := mustNew(t, mix2())
	h2, err := h.WithParams(map[string]float64{
		"old.age_gyr": 11, "bins.rate_2": 4, "rising.timescale_gyr": -3, "lull.depth": 0.5, "bins.weight": 2,
	})
	require.NoError(t, err)
	got := map[string]float64{}
	for _, p := range h2.Params() {
		got[p.Name] = p.Value
	}
	assert.Equal(t, 11.0, got["old.age_gyr"])
	assert.Equal(t, 4.0, got["bins.rate_2"])
	assert.Equal(t, -3.0, got["rising.timescale_gyr"])
	assert.Equal(t, 0.5, got["lull.depth"])
	assert.Equal(t, 2.0, got["bins.weight"])
	assert.Equal(t, 0.1, got["old.mass_fraction"])
	// The original is untouched.
	assert.Equal(t, 10.0, h.Params()[7].Value)
	assert.Equal(t, 1.0, h.Params()[5].Value)
	assert.NotEqual(t, h.CumulativeMass(9), h2.CumulativeMass(9))

	// The new history equals one built directly.
	direct := mix2()
	direct[0].Component = sfh.Exponential{TimescaleGyr: -3}
	direct[1].Weight = 2
	direct[1].Component.(sfh.Piecewise).Rates[2] = 4
	direct[2].Component = sfh.Burst{AgeGyr: 11, WidthGyr: 1, MassFraction: 0.1}
	direct[4].Component = sfh.Dip{AgeGyr: 8, WidthGyr: 2, Depth: 0.5}
	h3 := mustNew(t, direct)
	for _, a := range []float64{0.5, 2, 7, 11} {
		assert.Equal(t, h3.CumulativeMass(a), h2.CumulativeMass(a))
	}
}

func TestWithParamsErrors(t *testing.T) {
	h := mustNew(t, mix1())
	_, err := h.WithParams(map[string]float64{"burst.agegyr": 3, "nosuch.weight": 1})
	require.Error(t, err)
	assert.Contains(t, err.Error(), `unknown parameter(s) "burst.agegyr", "nosuch.weight"`)
	assert.Contains(t, err.Error(), "valid names are smooth.weight, declining.weight, declining.timescale_gyr, burst.age_gyr, burst.width_gyr, burst.mass_fraction, dip.age_gyr, dip.width_gyr, dip.depth")

	for _, bad := range []string{"burst", "smooth.timescale_gyr", "dip.weight", ".weight"} {
		_, err = h.WithParams(map[string]float64{bad: 1})
		assert.ErrorContainsf(t, err, "unknown parameter", "%q", bad)
	}
	hb := mustNew(t, mix2())
	for _, bad := range []string{"bins.rate_4", "bins.rate_01", "bins.rate_-1", "bins.rate_x"} {
		_, err = hb.WithParams(map[string]float64{bad: 1})
		assert.ErrorContainsf(t, err, "unknown parameter", "%q", bad)
	}

	// Out-of-range values fail as in New, naming the parameter.
	_, err = h.WithParams(map[string]float64{"burst.width_gyr": -1})
	assert.ErrorContains(t, err, `"burst.width_gyr"`)
	_, err = h.WithParams(map[string]float64{"declining.timescale_gyr": 0})
	assert.ErrorContains(t, err, `"declining.timescale_gyr"`)
}
