package main

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
	"spinpop/internal/figure"
	"spinpop/pipeline"
)

// The burst-age profile's zoom spans the profile's own 95 % interval, not
// the one the law's calibration widens ten times: across that, the fine
// grid would draw the profile as a spike. The whole-range panel shades
// the calibrated interval instead.
func TestProfilePanelsZoomOnTheProfile(t *testing.T) {
	// A parabola of curvature 1/(2σ²) about 0.75 with σ = 0.005: the
	// profile's 95 % interval is 0.75 ± 1.96σ.
	parabola := func(lo, hi float64, n int) []compare.ProfilePoint {
		var out []compare.ProfilePoint
		for i := range n {
			x := lo + (hi-lo)*float64(i)/float64(n-1)
			out = append(out, compare.ProfilePoint{Value: x, LogL: -math.Pow((x-0.75)/0.005, 2) / 2})
		}
		return out
	}
	prof := compare.Interval{Best: 0.75, Lo68: 0.745, Hi68: 0.755, Lo95: 0.7402, Hi95: 0.7598}
	cal := compare.Interval{Best: 0.75, Lo68: 0.67, Hi68: 0.84, Lo95: 0.60, Hi95: 0.94}
	zlo, zhi, ok := pipeline.ProfileZoomRange(prof, 0.1, 3)
	require.True(t, ok)
	g, err := profilePanels("history.burst.age_gyr", parabola(0.1, 3, 61), parabola(zlo, zhi, 41), prof, cal, 1, 0.1, 3, false, nil)
	require.NoError(t, err)
	require.Len(t, g, 1)
	require.Len(t, g[0], 2, "the zoom and the whole range")
	zoom, whole := g[0][0].Plot, g[0][1].Plot
	assert.InDelta(t, prof.Lo95-(prof.Hi95-prof.Lo95)/3, zoom.X.Min, 1e-12)
	assert.InDelta(t, prof.Hi95+(prof.Hi95-prof.Lo95)/3, zoom.X.Max, 1e-12)
	assert.Less(t, zoom.X.Max-zoom.X.Min, (cal.Hi95-cal.Lo95)/5, "narrower than the calibrated interval")
	assert.Equal(t, 0.1, whole.X.Min)
	assert.Equal(t, 3.0, whole.X.Max)
	assert.Contains(t, zoom.Title.Text, "The profile alone")
	assert.Contains(t, whole.Title.Text, "law's calibration")
}

// When the curves hold the nuisance parameters at the best fit and the
// quoted interval refits them, the zoom says so and shades that interval
// (the curve alone would read narrower).
func TestProfilePanelsNuisanceHeld(t *testing.T) {
	pts := func(lo, hi float64) []compare.ProfilePoint {
		var out []compare.ProfilePoint
		for i := range 41 {
			x := lo + (hi-lo)*float64(i)/40
			out = append(out, compare.ProfilePoint{Value: x, LogL: -math.Pow((x-0.75)/0.003, 2) / 2})
		}
		return out
	}
	prof := compare.Interval{Best: 0.75, Lo68: 0.74, Hi68: 0.76, Lo95: 0.73, Hi95: 0.77}
	zlo, zhi, _ := pipeline.ProfileZoomRange(prof, 0.1, 3)
	refits := []float64{0.745, 0.75, math.NaN(), 0.755, 2.0}
	g, err := profilePanels("history.burst.age_gyr", pts(0.1, 3), pts(zlo, zhi), prof, prof, 1, 0.1, 3, true, refits)
	require.NoError(t, err)
	zoom := g[0][0].Plot
	assert.Contains(t, zoom.Title.Text, "95 % 0.73–0.77")
	in, n, err := addRug(figure.New("", "", ""), refits, zlo, zhi, 0.1)
	require.NoError(t, err)
	assert.Equal(t, 3, in, "the refits inside the zoom")
	assert.Equal(t, 4, n, "the failed refit (NaN) left out")
}
