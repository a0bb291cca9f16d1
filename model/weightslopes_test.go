package model

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spots"
)

// The derivatives ObserveSlopes gives in the weight parameters agree with
// finite differences of Observe itself (central differences, step h: the
// first derivative to O(h²), the second to O(h²) — a standard numerical
// check, no outside source needed): the closed forms of weightslopes.go
// are those of the code that makes the counts. The binary share is linear:
// a step's change is the derivative times the step to rounding, and the
// second derivative is zero. The counts are observed with a search loss
// and a re-weighted binary share, so the search's factor and the binary
// weight are in every star's count.
func TestWeightSlopesMatchFiniteDifferences(t *testing.T) {
	// The share is linear over its whole range [0, 2] only while
	// 2f ≤ 1 for every star's binary fraction f.
	require.LessOrEqual(t, 2*binaryFractionMax, 1.0)
	p, g, bank, change := memoTestBank(t)
	ctx := context.Background()
	centre := change(func(q *Population) {
		q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.9, 0.7, 0.5, 0.3, 0.2}, TurnoverPower: 1}
		q.Binaries.FractionScale = 1.3
		q.Survey.Detect.ThresholdSNR = 12
		q.Survey.Detect.Sharpness = 3.3
		amp := *p.Spots
		amp.Slope = 1.7
		amp.AmpSatPpm = 8000
		amp.ScatterDex = 0.25
		q.Spots = &amp
	})
	at := func(w WeightParam, x float64) *Population {
		return change(func(q *Population) {
			*q = *centre
			amp := *centre.Spots
			q.Spots = &amp
			switch w {
			case BinaryShare:
				q.Binaries.FractionScale = x
			case SpotSlope:
				q.Spots.Slope = x
			case DetectionThreshold:
				q.Survey.Detect.ThresholdSNR = x
			case SpotAmplitude:
				q.Spots.AmpSatPpm = x
			case DetectionSharpness:
				q.Survey.Detect.Sharpness = x
			case SpotScatter:
				q.Spots.ScatterDex = x
			}
		})
	}
	observe := func(q *Population) []float64 {
		c, _, err := bank.Observe(ctx, q, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
		return c
	}
	for _, tc := range []struct {
		w    WeightParam
		x, h float64
	}{
		{BinaryShare, 1.3, 0.05},
		{SpotSlope, 1.7, 0.01},
		{DetectionThreshold, 12, 0.05},
		{SpotAmplitude, 8000, 20},
		{DetectionSharpness, 3.3, 0.01},
		{SpotScatter, 0.25, 0.002},
	} {
		_, _, ds, err := bank.ObserveSlopes(ctx, centre, g, ObserveOptions{BaseFractionScale: 1,
			WeightSlopes: []WeightSlope{{tc.w, false}, {tc.w, true}}})
		require.NoError(t, err)
		require.Len(t, ds, 2)
		first, second := ds[0], ds[1]
		f0, fp, fm := observe(centre), observe(at(tc.w, tc.x+tc.h)), observe(at(tc.w, tc.x-tc.h))
		var size, errFirst, errSecond, size2 float64
		for i := range f0 {
			d1 := (fp[i] - fm[i]) / (2 * tc.h)
			d2 := (fp[i] - 2*f0[i] + fm[i]) / (tc.h * tc.h)
			size += math.Abs(first[i])
			size2 += math.Abs(second[i])
			errFirst += math.Abs(d1 - first[i])
			errSecond += math.Abs(d2 - second[i])
		}
		require.Positive(t, size, "%v: a derivative", tc.w)
		if tc.w == BinaryShare {
			assert.Less(t, errFirst, 1e-9*size, "%v: linear", tc.w)
			assert.Zero(t, size2, "%v: no curvature", tc.w)
			assert.Less(t, errSecond, 1e-6*size, "%v: the differences' curvature is rounding", tc.w)
			continue
		}
		require.Positive(t, size2, "%v: a curvature", tc.w)
		assert.Less(t, errFirst, 1e-3*size, "%v: first derivative", tc.w)
		assert.Less(t, errSecond, 1e-2*size2, "%v: second derivative", tc.w)
	}
}

// The derivatives are the same bits whether the stars' rotations come
// from the seen memo (the Rossby number kept with them) or are worked out.
func TestWeightSlopesWithAndWithoutMemo(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	ctx := context.Background()
	q := change(func(q *Population) { q.Binaries.FractionScale = 1.2 })
	all := []WeightSlope{{BinaryShare, false}, {SpotSlope, false}, {SpotSlope, true}, {DetectionThreshold, false}, {DetectionThreshold, true},
		{SpotAmplitude, false}, {SpotAmplitude, true}, {DetectionSharpness, false}, {DetectionSharpness, true},
		{SpotScatter, false}, {SpotScatter, true}}
	// The run's pass fills the seen memo that q's pass reads.
	_, _, err := bank.Observe(ctx, p, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	key, ok := seenKeyOf(q)
	require.True(t, ok)
	e := bank.seen.find(key)
	bank.seen.release(e)
	require.NotNil(t, e, "the pass reads the memo")
	_, _, got, err := bank.ObserveSlopes(ctx, q, g, ObserveOptions{BaseFractionScale: 1, WeightSlopes: all})
	require.NoError(t, err)
	_, _, want, err := bank.ObserveSlopes(ctx, q, g, ObserveOptions{BaseFractionScale: 1, WeightSlopes: all, noMemo: true})
	require.NoError(t, err)
	assert.Equal(t, want, got)
}

// Without a spot model no star's count depends on the spots' parameters:
// their derivatives are zero (and the binary share's are not).
func TestWeightSlopesWithoutSpots(t *testing.T) {
	_, g, bank, change := memoTestBank(t)
	q := change(func(q *Population) { q.Spots = nil })
	all := []WeightSlope{{BinaryShare, false}, {SpotSlope, false}, {SpotSlope, true}, {SpotAmplitude, false}, {SpotAmplitude, true},
		{SpotScatter, false}, {SpotScatter, true}, {DetectionThreshold, false}, {DetectionSharpness, true}}
	_, _, ds, err := bank.ObserveSlopes(context.Background(), q, g, ObserveOptions{BaseFractionScale: 1, WeightSlopes: all})
	require.NoError(t, err)
	for i, w := range all {
		size := 0.0
		for _, v := range ds[i] {
			size += math.Abs(v)
		}
		if w.Param == BinaryShare {
			assert.Positive(t, size, "%v", w.Param)
		} else {
			assert.Zero(t, size, "%v", w.Param)
		}
	}
}

// Derivatives ObserveSlopes cannot give are refused by name.
func TestWeightSlopesRefused(t *testing.T) {
	p, g, bank, _ := memoTestBank(t)
	ctx := context.Background()
	_, _, _, err := bank.ObserveSlopes(ctx, p, g, ObserveOptions{WeightSlopes: []WeightSlope{{BinaryShare, false}}})
	assert.ErrorContains(t, err, "BaseFractionScale")
	_, _, _, err = bank.ObserveSlopes(ctx, p, g, ObserveOptions{BaseFractionScale: 1, WeightSlopes: []WeightSlope{{WeightParam(9), false}}})
	assert.ErrorContains(t, err, "WeightParam(9)")
	_, _, err = bank.Observe(ctx, p, g, ObserveOptions{BaseFractionScale: 1, WeightSlopes: []WeightSlope{{SpotSlope, false}}})
	assert.ErrorContains(t, err, "ObserveSlopes")
}
