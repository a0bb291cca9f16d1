package sfh_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// Exact sampling: one-sample KS of 200k draws against CumulativeMass, for every
// component type and for sums with dips.
func TestSampleKS(t *testing.T) {
	for i, tc := range testHistories() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel() // each subtest has its own history and stream
			h := mustNew(t, tc.parts)
			r := newRand(uint64(100 + i))
			requireKS(t, func() float64 { return h.Sample(r) }, h.CumulativeMass, 0, maxAge)
		})
	}
}

// The test is able to fail: a sampler for a neighbouring history (burst moved
// by a fifth of its width) is rejected.
func TestSampleKSDetectsWrongHistory(t *testing.T) {
	h := mustNew(t, []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 2, WidthGyr: 0.3, MassFraction: 1}}})
	wrong := mustNew(t, []sfh.Part{{Name: "burst", Component: sfh.Burst{AgeGyr: 2.06, WidthGyr: 0.3, MassFraction: 1}}})
	r := newRand(7)
	s := make([]float64, ksSamples)
	for i := range s {
		s[i] = wrong.Sample(r)
	}
	d := ksStatistic(s, h.CumulativeMass)
	assert.Less(t, kolmogorovSF(math.Sqrt(ksSamples)*d), ksAlpha)
}

type rangeCase struct {
	history string
	lo, hi  float64
}

// Ranges inside a dip, straddling a burst, in a burst's far tail (5–6.7σ),
// straddling a piecewise edge with an empty bin, and clipped at MaxAge.
var rangeCases = []rangeCase{
	{"mix-dip", 4.5, 5.5},
	{"mix-dip", 1.8, 2.9},
	{"burst", 3.5, 4.0},
	{"edge-burst", 0, 0.05},
	{"mix-two-dips", 0.8, 3.3},
	{"mix-two-dips", 1.2, 1.8},
	{"steep", 12.5, 20},
	{"rising", 0, 0.1},
	// Narrow ranges of an exponential (rate × width ≤ 0.25): drawn by
	// rejection from the uniform, heavy end low and high.
	{"declining", 2.0, 2.6},
	{"rising", 5.0, 5.4},
}

func historyByName(t *testing.T, name string) *sfh.History {
	for _, tc := range testHistories() {
		if tc.name == name {
			return mustNew(t, tc.parts)
		}
	}
	t.Fatalf("no test history %q", name)
	return nil
}

// SampleInRange and RangeSampler stay inside the range and follow the
// conditional CDF MassInRange(lo, x)/MassInRange(lo, hi).
func TestSampleInRangeKS(t *testing.T) {
	for i, rc := range rangeCases {
		h := historyByName(t, rc.history)
		hi := math.Min(rc.hi, maxAge)
		cdf := func(x float64) float64 { return h.MassInRange(rc.lo, x) / h.MassInRange(rc.lo, hi) }
		label := fmt.Sprintf("%s[%g,%g]", rc.history, rc.lo, rc.hi)
		t.Run(label+"/SampleInRange", func(t *testing.T) {
			t.Parallel() // History is immutable; each subtest has its own stream
			r := newRand(uint64(200 + i))
			requireKS(t, func() float64 { return h.SampleInRange(r, rc.lo, rc.hi) }, cdf, rc.lo, hi)
		})
		t.Run(label+"/RangeSampler", func(t *testing.T) {
			t.Parallel()
			s, err := h.RangeSampler(rc.lo, rc.hi)
			require.NoError(t, err)
			lo, shi := s.Range()
			assert.Equal(t, rc.lo, lo)
			assert.Equal(t, hi, shi)
			assert.InDelta(t, h.MassInRange(rc.lo, rc.hi), s.Mass(), 1e-15)
			r := newRand(uint64(300 + i))
			requireKS(t, func() float64 { return s.Sample(r) }, cdf, rc.lo, hi)
		})
	}
}

// SampleInRange and RangeSampler implement the same draw: from equal seeds
// they return identical sequences.
func TestSampleInRangeMatchesRangeSampler(t *testing.T) {
	for _, rc := range rangeCases {
		h := historyByName(t, rc.history)
		s, err := h.RangeSampler(rc.lo, rc.hi)
		require.NoError(t, err)
		r1, r2 := newRand(9), newRand(9)
		for i := 0; i < 1000; i++ {
			require.Equal(t, s.Sample(r1), h.SampleInRange(r2, rc.lo, rc.hi))
		}
	}
}

// Same seed, same numbers.
func TestSampleDeterministic(t *testing.T) {
	h := mustNew(t, mix2())
	a, b := newRand(42), newRand(42)
	for i := 0; i < 1000; i++ {
		require.Equal(t, h.Sample(a), h.Sample(b))
	}
}

// The hot path allocates nothing.
func TestSampleAllocatesNothing(t *testing.T) {
	h := mustNew(t, mix2())
	s, err := h.RangeSampler(2, 4)
	require.NoError(t, err)
	r := newRand(1)
	assert.Zero(t, testing.AllocsPerRun(1000, func() { h.Sample(r) }))
	assert.Zero(t, testing.AllocsPerRun(1000, func() { s.Sample(r) }))
	assert.Zero(t, testing.AllocsPerRun(1000, func() { h.SampleInRange(r, 2, 4) }))
}

// Ranges that form no stars are errors for RangeSampler and NaN for
// SampleInRange.
func TestRangeWithoutStars(t *testing.T) {
	h := mustNew(t, []sfh.Part{{Name: "bins", Weight: 1, Component: sfh.Piecewise{
		EdgesGyr: []float64{0, 1, 3, 13}, Rates: []float64{1, 0, 1}}}})
	r := newRand(3)
	for _, rg := range [][2]float64{{1.2, 2.8}, {14, 15}, {-2, -1}, {5, 5}, {6, 4}, {math.NaN(), 3}} {
		_, err := h.RangeSampler(rg[0], rg[1])
		assert.Errorf(t, err, "range %v", rg)
		assert.Truef(t, math.IsNaN(h.SampleInRange(r, rg[0], rg[1])), "range %v", rg)
	}
	_, err := h.RangeSampler(1.2, 2.8)
	assert.ErrorContains(t, err, "no stars form in the age range [1.2, 2.8]")
	_, err = h.RangeSampler(14, 15)
	assert.ErrorContains(t, err, "does not overlap")
}
