package sfh_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// Normalisation: ∫_0^MaxAge Rate = 1, by independent quadrature.
func TestRateIsNormalised(t *testing.T) {
	for _, tc := range testHistories() {
		t.Run(tc.name, func(t *testing.T) {
			h := mustNew(t, tc.parts)
			got := integrate(h.Rate, 0, maxAge, tc.breaks)
			assert.InDelta(t, 1, got, 1e-10) // Common practice, no source
			assert.Zero(t, h.Rate(-0.1))
			assert.Zero(t, h.Rate(maxAge+0.1))
		})
	}
}

// CumulativeMass, MassInRange and MeanAgeInRange agree with quadrature of Rate.
func TestMassesMatchIntegralOfRate(t *testing.T) {
	ages := []float64{0.05, 0.5, 1, 1.7, 2, 2.3, 3.5, 4.8, 5, 6, 8.25, 11, 12.9}
	for _, tc := range testHistories() {
		t.Run(tc.name, func(t *testing.T) {
			h := mustNew(t, tc.parts)
			for _, a := range ages {
				want := integrate(h.Rate, 0, a, tc.breaks)
				assert.InDeltaf(t, want, h.CumulativeMass(a), 1e-10, "age %g", a)
			}
			assert.Zero(t, h.CumulativeMass(-1))
			assert.Zero(t, h.CumulativeMass(0))
			assert.InDelta(t, 1, h.CumulativeMass(maxAge), 1e-12)
			assert.InDelta(t, 1, h.CumulativeMass(50), 1e-12)

			for _, r := range [][2]float64{{0.2, 0.9}, {1.9, 2.1}, {4, 6}, {0, maxAge}, {12, 13}} {
				m := integrate(h.Rate, r[0], r[1], tc.breaks)
				assert.InDeltaf(t, m, h.MassInRange(r[0], r[1]), 1e-10, "range %v", r)
				if m > 1e-9 {
					mean := integrate(func(x float64) float64 { return x * h.Rate(x) }, r[0], r[1], tc.breaks) / m
					assert.InDeltaf(t, mean, h.MeanAgeInRange(r[0], r[1]), 1e-8, "mean age in %v", r)
				}
			}
			assert.Zero(t, h.MassInRange(3, 2), "inverted range")
			assert.True(t, math.IsNaN(h.MeanAgeInRange(14, 15)), "range outside the history")
		})
	}
}

func TestBinWeights(t *testing.T) {
	edges := make([]float64, 41)
	for i := range edges {
		edges[i] = maxAge * float64(i) / 40
	}
	for _, tc := range testHistories() {
		t.Run(tc.name, func(t *testing.T) {
			h := mustNew(t, tc.parts)
			w := h.BinWeights(edges)
			require.Len(t, w, 40)
			var sum float64
			for i, x := range w {
				assert.GreaterOrEqual(t, x, 0.0)
				assert.InDelta(t, h.MassInRange(edges[i], edges[i+1]), x, 1e-13)
				sum += x
			}
			assert.InDelta(t, 1, sum, 1e-12) // bins span [0, MaxAge]

			// Partial coverage: weights sum to the mass inside the outer
			// edges; bins beyond MaxAge are empty; an inverted bin is empty.
			part := []float64{2.5, 4, 7.5, 12, 14, 16}
			w = h.BinWeights(part)
			require.Len(t, w, 5)
			assert.InDelta(t, h.MassInRange(2.5, 16), w[0]+w[1]+w[2]+w[3]+w[4], 1e-13)
			assert.InDelta(t, h.MassInRange(12, 13), w[3], 1e-13)
			assert.Zero(t, w[4])
			w = h.BinWeights([]float64{1, 3, 2})
			assert.Zero(t, w[1])
			assert.Nil(t, h.BinWeights([]float64{1}))

			dst := make([]float64, 0, 40)
			got := h.BinWeightsTo(dst, edges)
			assert.Equal(t, h.BinWeights(edges), got)
			assert.Zero(t, testing.AllocsPerRun(20, func() { h.BinWeightsTo(dst, edges) }))
		})
	}
}

// A burst's MassFraction is its share of the total, the smooth components
// share the rest by Weight. Expected values are written out with math.Erf.
func TestBurstFractionAndWeights(t *testing.T) {
	const (
		mu, sigma, frac = 10.0, 0.4, 0.3
	)
	h := mustNew(t, []sfh.Part{
		{Name: "flat", Component: sfh.Constant{}, Weight: 1},
		{Name: "early", Component: sfh.Piecewise{EdgesGyr: []float64{0, 1}, Rates: []float64{5}}, Weight: 3},
		{Name: "burst", Component: sfh.Burst{AgeGyr: mu, WidthGyr: sigma, MassFraction: frac}},
	})
	phi := func(x float64) float64 { return 0.5 * (1 + math.Erf((x-mu)/(sigma*math.Sqrt2))) }
	burstIn := func(lo, hi float64) float64 { return frac * (phi(hi) - phi(lo)) / (phi(maxAge) - phi(0)) }
	flat := (1 - frac) * 1 / 4
	early := (1 - frac) * 3 / 4

	assert.InDelta(t, early+flat/maxAge+burstIn(0, 1), h.MassInRange(0, 1), 1e-13)
	assert.InDelta(t, flat*3/maxAge+burstIn(9, 12), h.MassInRange(9, 12), 1e-13)
	// Nearly all the burst lies within ±5σ.
	assert.InDelta(t, frac+flat*4/maxAge, h.MassInRange(mu-2, mu+2), 2e-7)
	assert.Contains(t, h.String(), "Gaussian burst at 10 Gyr")
	assert.Contains(t, h.String(), "early = piecewise-constant rate in 1 bins, 0.525 of mass")
}

// Exponential over lookback age: rate ∝ exp(τ/T), so the CDF is
// (exp(τ/T) − 1)/(exp(MaxAge/T) − 1) for either sign of T.
func TestExponentialClosedForm(t *testing.T) {
	for _, ts := range []float64{3, -2, 50, -0.7} {
		h := mustNew(t, []sfh.Part{{Name: "smooth", Component: sfh.Exponential{TimescaleGyr: ts}, Weight: 1}})
		for _, a := range []float64{0.3, 2, 6.5, 10, 12.99} {
			want := (math.Exp(a/ts) - 1) / (math.Exp(maxAge/ts) - 1)
			assert.InDeltaf(t, want, h.CumulativeMass(a), 1e-12, "T=%g age %g", ts, a)
		}
		// Positive timescale: declining in cosmic time, so more old stars.
		if ts > 0 {
			assert.Less(t, h.CumulativeMass(maxAge/2), 0.5)
			assert.Greater(t, h.Rate(12), h.Rate(1))
		} else {
			assert.Greater(t, h.CumulativeMass(maxAge/2), 0.5)
			assert.Less(t, h.Rate(12), h.Rate(1))
		}
	}
}

// A dip multiplies the rate by 1 − Depth·exp(−z²/2): the ratio of the rate at
// the dip centre to the rate far away follows from the definition.
func TestDipDefinition(t *testing.T) {
	const depth, mu, w = 0.6, 5.0, 0.5
	h := mustNew(t, []sfh.Part{
		{Name: "smooth", Component: sfh.Constant{}, Weight: 1},
		{Name: "dip", Component: sfh.Dip{AgeGyr: mu, WidthGyr: w, Depth: depth}},
	})
	zFar := (1.0 - mu) / w
	want := (1 - depth) / (1 - depth*math.Exp(-0.5*zFar*zFar))
	assert.InDelta(t, want, h.Rate(mu)/h.Rate(1), 1e-13)
	// Renormalised: the removed mass √(2π)·w·depth/MaxAge (the Gaussian lies
	// well inside the range) raises the rate far away to 1/(MaxAge − removed).
	removed := math.Sqrt(2*math.Pi) * w * depth
	assert.InDelta(t, 1/(maxAge-removed), h.Rate(12.5), 1e-10)
	assert.Contains(t, h.String(), "dip = dip at 5 Gyr")
}

// Bursts whose fractions sum to one need no smooth component.
func TestBurstsAlone(t *testing.T) {
	h := mustNew(t, []sfh.Part{
		{Name: "a", Component: sfh.Burst{AgeGyr: 1, WidthGyr: 0.2, MassFraction: 0.1}},
		{Name: "b", Component: sfh.Burst{AgeGyr: 5, WidthGyr: 0.2, MassFraction: 0.2}},
		{Name: "c", Component: sfh.Burst{AgeGyr: 9, WidthGyr: 0.2, MassFraction: 0.7}},
	})
	assert.InDelta(t, 0.1, h.MassInRange(0, 3), 1e-12)
	assert.InDelta(t, 0.2, h.MassInRange(3, 7), 1e-12)
	assert.InDelta(t, 0.7, h.MassInRange(7, 13), 1e-12)
}

// Far-tail bins keep relative precision: the mass of a bin 8–9σ above a
// burst centre is Φ(−8) − Φ(−9) of the burst, about 6.2e-16.
func TestFarTailBinMass(t *testing.T) {
	h := mustNew(t, []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 1, WidthGyr: 0.1, MassFraction: 1}}})
	want := 0.5 * (math.Erfc(8/math.Sqrt2) - math.Erfc(9/math.Sqrt2))
	assert.InEpsilon(t, want, h.MassInRange(1.8, 1.9), 1e-12)
}
