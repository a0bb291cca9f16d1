package model

import (
	"context"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spin"
	"spinpop/model/spots"
)

// Re-observations that read the stars' spins from the memo of an earlier
// one give the same bits as those that work every spin out afresh, in the
// order a fit makes them: the run's law, then the spots, the color
// calibration (stars the first pass did not reach come in), a law with
// scatter, the tidal lock, the run's law again. The memo is kept for the
// laws seen last (maxLawMemos), and a law that cannot be compared is not
// kept.
func TestObserveLawMemoIdentical(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	ctx := context.Background()
	amp := spots.DefaultAmplitudeModel()
	amp.RoSat, amp.Slope = 0.11, 1.7
	steps := []struct {
		name string
		pop  *Population
		hit  bool // the law's spins are in the memo before this pass
	}{
		{"as run", p, false},
		{"spots", change(func(q *Population) { q.Spots = &amp }), true},
		{"color offset +0.05", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.05} }), true},
		// Stretched colors bring stars across the main-sequence band's
		// edges that no pass before reached (the memo does not know them).
		{"color scale 1.04", change(func(q *Population) { q.Survey.Color = ColorCalibration{Scale: 1.04} }), true},
		{"period scatter", change(func(q *Population) { q.Law = spin.Scattered{Law: q.Law, Dex: 0.08} }), false},
		{"tidal lock", change(func(q *Population) { q.Binaries.TidalLockFraction = 0.2 }), false},
		{"as run again", p, true},
		{"search nodes", change(func(q *Population) {
			q.Survey.Search = spots.SearchCompleteness{RossbyBands: []float64{1, 0.9, 0.7, 0.5, 0.3, 0.2}, TurnoverPower: 1}
		}), true},
	}
	// has says whether the memo holds key (a read that find begins and
	// release ends, as Observe's).
	has := func(key lawKey) bool {
		e := bank.memos.find(key)
		bank.memos.release(e)
		return e != nil
	}
	for _, st := range steps {
		key, ok := keyOf(st.pop)
		require.True(t, ok, st.name)
		assert.Equal(t, st.hit, has(key), "%s: memo before the pass", st.name)
		sameWithAndWithoutMemo(t, bank, st.pop, g, 1, st.name)
		assert.True(t, has(key), "%s: memo after the pass", st.name)
		assert.LessOrEqual(t, len(bank.memos.entries), maxLawMemos)
	}

	// More laws than the memo keeps: the oldest are dropped and their
	// storage used again (no more buffers than the memo holds, plus one),
	// with the same bits as ever.
	for i, dex := range []float64{0.02, 0.04, 0.06, 0.1, 0.12} {
		q := change(func(q *Population) { q.Law = spin.Scattered{Law: q.Law, Dex: dex} })
		got, _, err := bank.Observe(ctx, q, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
		want, _, err := bank.Observe(ctx, q, g, ObserveOptions{BaseFractionScale: 1, noMemo: true})
		require.NoError(t, err)
		assert.Equal(t, want, got, "scatter %g (%d)", dex, i)
		assert.Len(t, bank.memos.entries, maxLawMemos)
		assert.NotNil(t, bank.memos.spare, "a dropped memo's storage is kept for the next")
	}
	key, _ := keyOf(p)
	require.False(t, has(key), "the run's law was dropped")
	got, _, err := bank.Observe(ctx, p, g, ObserveOptions{BaseFractionScale: 1})
	require.NoError(t, err)
	want, _, err := bank.Observe(ctx, p, g, ObserveOptions{BaseFractionScale: 1, noMemo: true})
	require.NoError(t, err)
	assert.Equal(t, want, got, "on storage used again")

	// A law holding functions, or held by pointer (compared by address,
	// and made anew for every re-observation), is worked out every time.
	q := *p
	q.Law = funcLaw{period: func(spin.Star) float64 { return 10 }}
	_, ok := keyOf(&q)
	assert.False(t, ok)
	q.Law = spin.Scattered{Law: &funcLaw{}, Dex: 0.05}
	_, ok = keyOf(&q)
	assert.False(t, ok)
}

// sameWithAndWithoutMemo observes pop through the bank with its memos and
// without them (with node derivatives when pop has search nodes), and
// asserts the same bits.
func sameWithAndWithoutMemo(t *testing.T, bank *Bank, pop *Population, g Grid, baseScale float64, name string) {
	t.Helper()
	ctx := context.Background()
	opts := ObserveOptions{BaseFractionScale: baseScale}
	if len(pop.Survey.Search.RossbyBands) > 0 {
		opts.BandSlopes = []int{1, 3}
	}
	got, gotVar, gotSlopes, err := bank.ObserveSlopes(ctx, pop, g, opts)
	require.NoError(t, err, name)
	opts.noMemo = true
	want, wantVar, wantSlopes, err := bank.ObserveSlopes(ctx, pop, g, opts)
	require.NoError(t, err, name)
	assert.Equal(t, want, got, name)
	assert.Equal(t, wantVar, gotVar, name)
	assert.Equal(t, wantSlopes, gotSlopes, name)
}

// memoTestBank is the memo tests' population, grid and bank (with color
// and band margins, so that color changes bring stars in), and change,
// which returns a prepared copy of the population with f applied.
func memoTestBank(t *testing.T) (*Population, Grid, *Bank, func(f func(q *Population)) *Population) {
	p := testPopulation(t, 4)
	g := bankGrid()
	_, bank := randomTemplatesAndBank(t, p, g, 300_000, BankMargin{ColorMag: 0.06, BandMag: 0.1})
	change := func(f func(q *Population)) *Population {
		q := *p
		f(&q)
		require.NoError(t, q.Prepare())
		return &q
	}
	return p, g, bank, change
}

// funcLaw is a law whose value cannot be compared.
type funcLaw struct{ period func(spin.Star) float64 }

func (f funcLaw) Name() string { return "func" }
func (f funcLaw) Period(s spin.Star, _ *rand.Rand) (float64, bool) {
	return f.period(s), true
}
