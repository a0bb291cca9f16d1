package model

import (
	"context"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spin"
	"spinpop/model/spots"
)

// Re-observations that read the stars' rotations from the seen memo give
// the same bits as those that work every star out afresh, in the order a
// fit's round makes them: the color calibration's side points and the
// binary share's read the memo the run's pass made; a stretched color
// scale brings in stars no pass reached; the spots, the detection
// threshold, the noise and the law each need their own; the search
// nodes with their derivatives too. Only maxSeenMemos are kept.
func TestObserveSeenMemoIdentical(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	amp := spots.DefaultAmplitudeModel()
	amp.RoSat, amp.Slope = 0.11, 1.7
	noisier := p.Survey.Detect
	noisier.Noise.FloorPpm *= 2
	steps := []struct {
		name string
		pop  *Population
		base float64 // the binary fraction scale of the bank's run to weigh against
		hit  bool    // the rotations are in the memo before this pass
	}{
		{"as run", p, 1, false},
		{"color offset +0.05", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.05} }), 1, true},
		{"color offset -0.05", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: -0.05} }), 1, true},
		{"binary share 1.3", change(func(q *Population) { q.Binaries.FractionScale = 1.3 }), 1, true},
		// Stretched colors bring stars across the main-sequence band's
		// edges that no pass before reached (the memo does not know them).
		{"color scale 1.04", change(func(q *Population) { q.Survey.Color = ColorCalibration{Scale: 1.04} }), 1, true},
		{"spots", change(func(q *Population) { q.Spots = &amp }), 1, false},
		{"spots, color offset", change(func(q *Population) { q.Spots = &amp; q.Survey.Color = ColorCalibration{OffsetMag: 0.03} }), 1, true},
		{"threshold", change(func(q *Population) { q.Survey.Detect.ThresholdSNR *= 1.2 }), 1, false},
		{"noise", change(func(q *Population) { q.Survey.Detect = noisier }), 1, false},
		{"law", change(func(q *Population) { q.Law = spin.Scattered{Law: q.Law, Dex: 0.08} }), 1, false},
		{"as run again (dropped)", p, 1, false},
		{"search nodes", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.9, 0.7, 0.5, 0.3, 0.2}, TurnoverPower: 1}
		}), 1, false},
		{"search nodes, color offset", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.9, 0.7, 0.5, 0.3, 0.2}, TurnoverPower: 1}
			q.Survey.Color = ColorCalibration{OffsetMag: 0.02}
		}), 1, true},
		// Other nodes: the kept rotations with the new nodes' factor.
		{"other search nodes", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.2, 0.4, 0.9, 1, 0.6}, TurnoverPower: 1}
		}), 1, true},
		{"search nodes and a logistic loss", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.2, 0.4, 0.9, 1, 0.6}, TurnoverPower: 1, HalfPeriodD: 20, Steepness: 4}
		}), 1, true},
		// A search that does not read τ_c needs its own.
		{"search nodes in period alone", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.2, 0.4, 0.9, 1, 0.6}}
		}), 1, false},
	}
	has := func(key seenKey) bool {
		e := bank.seen.find(key)
		bank.seen.release(e)
		return e != nil
	}
	for _, st := range steps {
		key, ok := seenKeyOf(st.pop)
		require.True(t, ok, st.name)
		assert.Equal(t, st.hit, has(key), "%s: memo before the pass", st.name)
		sameWithAndWithoutMemo(t, bank, st.pop, g, st.base, st.name)
		assert.True(t, has(key), "%s: memo after the pass", st.name)
		assert.LessOrEqual(t, len(bank.seen.entries), maxSeenMemos)
	}
	// The key holds every part of the detection: two that differ in one
	// field only are different keys.
	k1, _ := seenKeyOf(p)
	k2, _ := seenKeyOf(change(func(q *Population) { q.Survey.Detect.Sharpness++ }))
	assert.NotEqual(t, k1, k2)
}

// A pass with NoNewMemos reads the memos the passes before it made (a
// side point after its centre) but makes none, and its counts are those
// of a pass that works every star out afresh.
func TestObserveNoNewMemos(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	ctx := context.Background()
	_, _, _, err := bank.ObserveSlopes(ctx, p, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	laws, rotations, columns, inputs := bank.MemoSets()
	require.Equal(t, [4]int{1, 1, 1, 1}, [4]int{laws, rotations, columns, inputs}, "the centre's pass keeps one set of each")
	amp := spots.DefaultAmplitudeModel()
	amp.Slope = 1.7
	for _, side := range []struct {
		name string
		pop  *Population
	}{
		{"color offset", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.04} })},
		{"spots", change(func(q *Population) { q.Spots = &amp })},
		{"law", change(func(q *Population) { q.Law = spin.Scattered{Law: q.Law, Dex: 0.05} })},
	} {
		opts := ObserveOptions{BaseFractionScale: 1, NoNewMemos: true}
		got, gotVar, _, err := bank.ObserveSlopes(ctx, side.pop, g, opts)
		require.NoError(t, err, side.name)
		l, r, c, i := bank.MemoSets()
		assert.Equal(t, [4]int{1, 1, 1, 1}, [4]int{l, r, c, i}, "%s: a side point adds no memo", side.name)
		opts.noMemo = true
		want, wantVar, _, err := bank.ObserveSlopes(ctx, side.pop, g, opts)
		require.NoError(t, err, side.name)
		assert.Equal(t, want, got, side.name)
		assert.Equal(t, wantVar, gotVar, side.name)
	}
	// Without the option the same side point keeps its rotations.
	_, _, _, err = bank.ObserveSlopes(ctx, change(func(q *Population) { q.Spots = &amp }), g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	_, rotations, _, _ = bank.MemoSets()
	assert.Equal(t, 2, rotations)
}

// The workers' fine grids are kept between passes (gridPool) and left
// zero by each pass: a pass gives the same bits after any other pass as
// before it. (A collection between passes may empty the pool, and the
// repeat then runs on new grids; it failed with the zeroing in spread
// taken out.)
func TestObserveGridsReusedClean(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	ctx := context.Background()
	nodes := change(func(q *Population) {
		q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.9, 0.7, 0.5, 0.3, 0.2}, TurnoverPower: 1}
	})
	opts := ObserveOptions{BaseFractionScale: 1, BandSlopes: []int{1, 3}, WeightSlopes: []WeightSlope{{Param: BinaryShare}}, noMemo: true}
	first, firstVar, firstSlopes, err := bank.ObserveSlopes(ctx, nodes, g, opts)
	require.NoError(t, err)
	// Other passes in between: other stars' weights left in a grid would
	// show in the repeat.
	_, _, _, err = bank.ObserveSlopes(ctx, p, g, ObserveOptions{BaseFractionScale: 1, noMemo: true})
	require.NoError(t, err)
	_, _, _, err = bank.ObserveSlopes(ctx, change(func(q *Population) { q.Binaries.FractionScale = 1.5 }), g, opts)
	require.NoError(t, err)
	again, againVar, againSlopes, err := bank.ObserveSlopes(ctx, nodes, g, opts)
	require.NoError(t, err)
	assert.Equal(t, first, again)
	assert.Equal(t, firstVar, againVar)
	assert.Equal(t, firstSlopes, againSlopes)
}
