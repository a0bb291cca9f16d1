package model

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var splineX = []float64{0, 0.3, 0.45, 1, 1.2, 2, 2.1, 3}
var splineY = []float64{1, 2.5, 2.2, 4, 3.1, 5, 5.5, 4.2}

// With λ = 0 the smoothing spline is the natural interpolating cubic
// spline (Green & Silverman 1994, §2.3): through every point, with no
// curvature at the ends, and C² at the knots.
func TestSmoothingSplineInterpolatesAtZeroLambda(t *testing.T) {
	s, err := newSmoothingSpline(splineX, splineY, nil, 0)
	require.NoError(t, err)
	for i, x := range splineX {
		assert.InDelta(t, splineY[i], s.at(x), 1e-12, "knot %d", i)
	}
	assert.Zero(t, s.gamma[0])
	assert.Zero(t, s.gamma[len(s.gamma)-1])
	// Continuous first derivative across an interior knot.
	const e = 1e-6
	for _, x := range splineX[1 : len(splineX)-1] {
		left := (s.at(x) - s.at(x-e)) / e
		right := (s.at(x+e) - s.at(x)) / e
		assert.InDelta(t, left, right, 1e-4, "slope at %g", x)
	}
}

// A straight line costs no curvature, so every λ returns it unchanged; as
// λ grows the fit tends to the weighted least-squares straight line
// (Green & Silverman 1994, §2.3).
func TestSmoothingSplineLimits(t *testing.T) {
	line := make([]float64, len(splineX))
	for i, x := range splineX {
		line[i] = 2 - 0.7*x
	}
	for _, lambda := range []float64{0, 0.1, 1e3} {
		s, err := newSmoothingSpline(splineX, line, nil, lambda)
		require.NoError(t, err)
		for _, x := range []float64{-1, 0.2, 1.7, 2.9, 4} {
			assert.InDelta(t, 2-0.7*x, s.at(x), 1e-9, "λ %g at %g", lambda, x)
		}
	}
	w := []float64{1, 2, 1, 3, 1, 0.5, 2, 1}
	var sw, sx, sy, sxx, sxy float64
	for i, x := range splineX {
		sw += w[i]
		sx += w[i] * x
		sy += w[i] * splineY[i]
		sxx += w[i] * x * x
		sxy += w[i] * x * splineY[i]
	}
	slope := (sw*sxy - sx*sy) / (sw*sxx - sx*sx)
	icpt := (sy - slope*sx) / sw
	s, err := newSmoothingSpline(splineX, splineY, w, 1e9)
	require.NoError(t, err)
	for _, x := range []float64{0, 1.5, 3} {
		assert.InDelta(t, icpt+slope*x, s.at(x), 1e-6, "at %g", x)
	}
	// A heavy weight pins the fit to its point.
	w[3] = 1e8
	s, err = newSmoothingSpline(splineX, splineY, w, 1)
	require.NoError(t, err)
	assert.InDelta(t, splineY[3], s.at(splineX[3]), 1e-6)
}

func TestSmoothingSplineErrors(t *testing.T) {
	for name, c := range map[string]struct {
		x, y, w []float64
		lambda  float64
	}{
		"points":     {[]float64{0, 1}, []float64{0, 1}, nil, 1},
		"increasing": {[]float64{0, 1, 1}, []float64{0, 1, 2}, nil, 1},
		"weight":     {[]float64{0, 1, 2}, []float64{0, 1, 2}, []float64{1, 0, 1}, 1},
		"λ":          {[]float64{0, 1, 2}, []float64{0, 1, 2}, nil, math.NaN()},
		"length":     {[]float64{0, 1, 2}, []float64{0, 1}, nil, 1},
	} {
		_, err := newSmoothingSpline(c.x, c.y, c.w, c.lambda)
		assert.Error(t, err, name)
	}
}
