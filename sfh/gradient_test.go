package sfh_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// mixParams is a constant, an exponential and two bursts: the shape of the
// example scenarios' histories.
type mixParams struct {
	wConst, wExp, tau float64
	mu1, sig1, f1     float64
	mu2, sig2, f2     float64
}

func (m mixParams) parts() []sfh.Part {
	return []sfh.Part{
		{Name: "flat", Component: sfh.Constant{}, Weight: m.wConst},
		{Name: "decline", Component: sfh.Exponential{TimescaleGyr: m.tau}, Weight: m.wExp},
		{Name: "burst", Component: sfh.Burst{AgeGyr: m.mu1, WidthGyr: m.sig1, MassFraction: m.f1}},
		{Name: "old", Component: sfh.Burst{AgeGyr: m.mu2, WidthGyr: m.sig2, MassFraction: m.f2}},
	}
}

// weights is the mixture's mass in each bin from the components'
// definitions (sfh's doc comments), written out here with math.Erf and
// math.Exp and no sfh code: a constant's (b−a)/T, an exponential rate
// ∝ exp(age/τ) giving (e^(b/τ) − e^(a/τ))/(e^(T/τ) − 1), a Gaussian
// truncated to [0, T] and renormalised there; bursts take their
// fractions, the smooth parts share the rest by weight.
func (m mixParams) weights(edges []float64) []float64 {
	const T = maxAge
	phi := func(z float64) float64 { return 0.5 * (1 + math.Erf(z/math.Sqrt2)) }
	gauss := func(a, b, mu, sig float64) float64 {
		return (phi((b-mu)/sig) - phi((a-mu)/sig)) / (phi((T-mu)/sig) - phi(-mu/sig))
	}
	rest := 1 - m.f1 - m.f2
	W := m.wConst + m.wExp
	out := make([]float64, len(edges)-1)
	for k := range out {
		a, b := math.Max(edges[k], 0), math.Min(edges[k+1], T)
		if !(b > a) {
			continue
		}
		exp := (math.Exp(b/m.tau) - math.Exp(a/m.tau)) / (math.Exp(T/m.tau) - 1)
		out[k] = rest*(m.wConst/W*(b-a)/T+m.wExp/W*exp) + m.f1*gauss(a, b, m.mu1, m.sig1) + m.f2*gauss(a, b, m.mu2, m.sig2)
	}
	return out
}

// The closed-form slopes of the bin weights are the derivatives of the
// mixture's definition: central differences (steps of 1e-5, error
// ~1e-10) of the weights written out independently above, for every
// parameter, in histories with a declining and a rising exponential,
// a burst near age 0, and bins beyond the oldest age.
func TestBinWeightSlopesAreTheDerivatives(t *testing.T) {
	edges := []float64{0, 0.1, 0.3, 0.6, 0.9, 1.2, 1.6, 2, 3, 4.5, 6, 8, 10, 12, 13.5, 14}
	names := []string{"flat.weight", "decline.weight", "decline.timescale_gyr",
		"burst.age_gyr", "burst.width_gyr", "burst.mass_fraction", "old.age_gyr", "old.width_gyr", "old.mass_fraction"}
	cases := map[string]mixParams{
		"declining": {1, 2, 3, 0.8, 0.1, 0.15, 8, 2.5, 0.3},
		"rising":    {0.5, 1, -2.5, 0.05, 0.3, 0.1, 11, 1, 0.2},
		"flat-ish":  {1, 1, 40, 1.5, 0.6, 0.05, 6, 3, 0.4},
	}
	for name, m := range cases {
		t.Run(name, func(t *testing.T) {
			h := mustNew(t, m.parts())
			got := make([][]float64, len(names))
			for j := range got {
				got[j] = make([]float64, len(edges)-1)
			}
			require.True(t, h.BinWeightSlopes(edges, names, got))
			fields := []*float64{&m.wConst, &m.wExp, &m.tau, &m.mu1, &m.sig1, &m.f1, &m.mu2, &m.sig2, &m.f2}
			for j, f := range fields {
				v := *f
				step := 1e-5 * math.Max(1, math.Abs(v))
				*f = v + step
				up := m.weights(edges)
				*f = v - step
				dn := m.weights(edges)
				*f = v
				for k := range up {
					want := (up[k] - dn[k]) / (2 * step)
					assert.InDelta(t, want, got[j][k], 1e-7, "%s bin %d", names[j], k)
				}
			}
		})
	}
}

// Without a closed form the slopes are refused, and the caller takes
// differences: a history with dips, a Piecewise rate, a burst taking all
// the mass (its share is then held by the rounding slack), an unknown
// name.
func TestBinWeightSlopesRefused(t *testing.T) {
	edges := []float64{0, 1, 2, 13}
	dst := [][]float64{make([]float64, 3)}
	assert.False(t, mustNew(t, mix1()).BinWeightSlopes(edges, []string{"burst.age_gyr"}, dst), "dips")
	pw := []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{EdgesGyr: []float64{0, 1, 3, 13}, Rates: []float64{3, 1, 0.5}}}}
	assert.False(t, mustNew(t, pw).BinWeightSlopes(edges, []string{"bins.rate_1"}, dst), "a piecewise rate")
	solo := []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 0.3, MassFraction: 1}}}
	assert.False(t, mustNew(t, solo).BinWeightSlopes(edges, []string{"burst.age_gyr"}, dst), "a burst with all the mass")
	mix := mixParams{1, 2, 3, 0.8, 0.1, 0.15, 8, 2.5, 0.3}
	assert.False(t, mustNew(t, mix.parts()).BinWeightSlopes(edges, []string{"burst.depth"}, dst), "no such key")
	assert.True(t, mustNew(t, mix.parts()).BinWeightSlopes(edges, []string{"burst.age_gyr"}, dst))
}
