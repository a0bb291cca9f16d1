package sfh_test

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/integrate/quad"

	"spinpop/sfh"
)

const maxAge = 13.0

// named is a test history with the ages where its rate has a kink or jump,
// so that the independent quadrature below can split there.
type named struct {
	name   string
	parts  []sfh.Part
	breaks []float64
}

// testHistories covers every component type alone and two sums with dips.
func testHistories() []named {
	return []named{
		{name: "constant", parts: []sfh.Part{{Name: "smooth", Component: sfh.Constant{}, Weight: 1}}},
		{name: "declining", parts: []sfh.Part{{Name: "smooth", Component: sfh.Exponential{TimescaleGyr: 3}, Weight: 1}}},
		{name: "rising", parts: []sfh.Part{{Name: "smooth", Component: sfh.Exponential{TimescaleGyr: -2}, Weight: 1}}},
		{name: "steep", parts: []sfh.Part{{Name: "smooth", Component: sfh.Exponential{TimescaleGyr: 0.2}, Weight: 1}}},
		{name: "burst", parts: []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 0.3, MassFraction: 1}}}},
		{name: "edge-burst", parts: []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 0.1, WidthGyr: 0.5, MassFraction: 1}}}},
		{
			name: "piecewise",
			parts: []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
				EdgesGyr: []float64{0, 1, 3, 6, 13}, Rates: []float64{3, 0, 1, 0.5}}}},
			breaks: []float64{1, 3, 6},
		},
		{name: "mix-dip", parts: mix1()},
		{name: "mix-two-dips", parts: mix2(), breaks: []float64{1, 3, 6}},
	}
}

// mix1 and mix2 are the two histories of testdata/reference.py.
func mix1() []sfh.Part {
	return []sfh.Part{
		{Name: "smooth", Component: sfh.Constant{}, Weight: 1},
		{Name: "declining", Component: sfh.Exponential{TimescaleGyr: 3}, Weight: 2},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 0.3, MassFraction: 0.2}},
		{Name: "dip", Component: sfh.Dip{AgeGyr: 5, WidthGyr: 0.5, Depth: 0.6}},
	}
}

func mix2() []sfh.Part {
	return []sfh.Part{
		{Name: "rising", Component: sfh.Exponential{TimescaleGyr: -2}, Weight: 1},
		{Name: "bins", Weight: 1, Component: sfh.Piecewise{
			EdgesGyr: []float64{0, 1, 3, 6, 13}, Rates: []float64{3, 0, 1, 0.5}}},
		{Name: "old", Component: sfh.Burst{AgeGyr: 10, WidthGyr: 1, MassFraction: 0.1}},
		{Name: "quench", Component: sfh.Dip{AgeGyr: 1.5, WidthGyr: 0.3, Depth: 1}},
		{Name: "lull", Component: sfh.Dip{AgeGyr: 8, WidthGyr: 2, Depth: 0.3}},
	}
}

func mustNew(t testing.TB, parts []sfh.Part) *sfh.History {
	t.Helper()
	h, err := sfh.New(maxAge, parts)
	require.NoError(t, err)
	return h
}

// integrate is an independent numerical integral of f over [a, b]: split at
// the given breaks, then into panels no wider than 0.02 Gyr, each with
// gonum's 20-point Gauss–Legendre rule. Every test history's features are at
// least 0.2 Gyr wide, ten panels or more.
func integrate(f func(float64) float64, a, b float64, breaks []float64) float64 {
	pts := []float64{a}
	for _, x := range breaks {
		if x > a && x < b {
			pts = append(pts, x)
		}
	}
	pts = append(pts, b)
	sort.Float64s(pts)
	var sum float64
	for i := 1; i < len(pts); i++ {
		lo, hi := pts[i-1], pts[i]
		n := int(math.Ceil((hi - lo) / 0.02))
		for k := 0; k < n; k++ {
			x0 := lo + (hi-lo)*float64(k)/float64(n)
			x1 := lo + (hi-lo)*float64(k+1)/float64(n)
			sum += quad.Fixed(f, x0, x1, 20, quad.Legendre{}, 0)
		}
	}
	return sum
}

// ksStatistic returns the one-sample Kolmogorov–Smirnov statistic
// D = sup |F_n(x) − F(x)| of the samples against the CDF (samples are sorted
// in place).
func ksStatistic(samples []float64, cdf func(float64) float64) float64 {
	sort.Float64s(samples)
	n := float64(len(samples))
	var d float64
	for i, x := range samples {
		f := cdf(x)
		d = math.Max(d, math.Max(float64(i+1)/n-f, f-float64(i)/n))
	}
	return d
}

// kolmogorovSF is the asymptotic Kolmogorov distribution's survival function,
// P(√n D > x) → 2 Σ_{k≥1} (−1)^{k−1} exp(−2k²x²) (Kolmogorov 1933).
func kolmogorovSF(x float64) float64 {
	if x < 0.2 {
		return 1
	}
	var s float64
	for k := 1; k <= 100; k++ {
		term := math.Exp(-2 * float64(k*k) * x * x)
		if k%2 == 0 {
			s -= term
		} else {
			s += term
		}
		if term < 1e-18 {
			break
		}
	}
	return math.Min(2*s, 1)
}

// ksAlpha is the significance level of every KS test here: with fixed seeds
// each test is deterministic, and a correct sampler fails it for one seed in
// a thousand. The matching critical value of √n·D is 1.9495 (checked against
// SciPy in TestKolmogorovDistribution).
const ksAlpha = 1e-3

const ksSamples = 200_000

// requireKS draws ksSamples values and asserts the KS p-value exceeds ksAlpha.
func requireKS(t *testing.T, draw func() float64, cdf func(float64) float64, lo, hi float64) {
	t.Helper()
	s := make([]float64, ksSamples)
	for i := range s {
		s[i] = draw()
		require.Truef(t, s[i] >= lo && s[i] <= hi, "sample %d = %g outside [%g, %g]", i, s[i], lo, hi)
	}
	d := ksStatistic(s, cdf)
	p := kolmogorovSF(math.Sqrt(ksSamples) * d)
	t.Logf("KS D = %.5f, √n·D = %.3f, p = %.3g", d, math.Sqrt(ksSamples)*d, p)
	require.Greaterf(t, p, ksAlpha, "KS test rejects the sampler: D = %g", d)
}

func newRand(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 0x5f3759df)) }
