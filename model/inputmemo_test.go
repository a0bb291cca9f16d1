package model

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spin"
	"spinpop/model/spots"
)

// A fit's side points in the law's coefficients and scatter (down to a
// law without scatter) read the stars' inputs from the memo; a new C or a
// new tidal lock makes new ones. Whichever way,
// the templates are the bits worked out without any memo.
func TestObserveInputMemoIdentical(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	amp := spots.DefaultAmplitudeModel()
	withLaw := func(a, n, c, dex float64) func(q *Population) {
		return func(q *Population) {
			law := spin.Barnes2007()
			law.A, law.N, law.C = a, n, c
			q.Law = spin.Scattered{Law: law, Dex: dex}
			q.Spots = &amp
			q.Survey.Search = spots.SearchCompleteness{HalfPeriodD: 30, TurnoverPower: 1, Steepness: 4}
		}
	}
	b := spin.Barnes2007()
	withStall := func(start float64) func(q *Population) {
		return func(q *Population) {
			withLaw(b.A, b.N, b.C+0.01, 0.08)(q)
			law := q.Law.(spin.Scattered)
			g := law.Law.(spin.GyroLaw)
			g.Stall = spin.DefaultStallOptions()
			g.Stall.Enabled, g.Stall.StartGyrAtPivot = true, start
			law.Law = g
			q.Law = law
		}
	}
	scaledA := func(l spin.Law, f float64) spin.Law {
		sc := l.(spin.Scattered)
		g := sc.Law.(spin.GyroLaw)
		g.A *= f
		sc.Law = g
		return sc
	}
	steps := []struct {
		name string
		pop  *Population
		hit  bool // the inputs are in the memo before this pass
	}{
		{"scattered law", change(withLaw(b.A, b.N, b.C, 0.08)), false},
		{"a side point", change(withLaw(b.A*1.02, b.N, b.C, 0.08)), true},
		{"n side point", change(withLaw(b.A, b.N*0.98, b.C, 0.08)), true},
		{"scatter side point", change(withLaw(b.A, b.N, b.C, 0.11)), true},
		// A scatter fitted to 0 is a law without scatter, whose stream
		// holds the tidal-lock draws first: the same memo serves it.
		{"no scatter", change(func(q *Population) { withLaw(b.A, b.N, b.C, 0.08)(q); q.Law = spin.Barnes2007() }), true},
		{"c side point", change(withLaw(b.A, b.N, b.C+0.01, 0.08)), false},
		{"tidal lock", change(func(q *Population) { withLaw(b.A, b.N, b.C+0.01, 0.08)(q); q.Binaries.TidalLockFraction = 0.3 }), false},
		// A stall moves the effective age Terms reads: new inputs, and
		// another start again.
		{"stall", change(func(q *Population) { withStall(0.65)(q); q.Binaries.TidalLockFraction = 0.3 }), false},
		{"stall a side point", change(func(q *Population) {
			withStall(0.65)(q)
			q.Binaries.TidalLockFraction = 0.3
			q.Law = scaledA(q.Law, 1.02)
		}), true},
		{"stall moved", change(func(q *Population) { withStall(0.8)(q); q.Binaries.TidalLockFraction = 0.3 }), false},
		{"the run as made", p, false},
	}
	has := func(key inputKey) bool {
		e := bank.input.find(key)
		bank.input.release(e)
		return e != nil
	}
	for _, st := range steps {
		plan := st.pop.rotationPlan()
		require.True(t, plan.hasLog, st.name)
		key := inputKeyOf(&plan)
		assert.Equal(t, st.hit, has(key), "%s: inputs before the pass", st.name)
		sameWithAndWithoutMemo(t, bank, st.pop, g, 1, st.name)
		assert.True(t, has(key), "%s: inputs after the pass", st.name)
	}
}

// opaqueLaw hides a law's log form: the population then takes ln of its
// period, by the path every other law takes.
type opaqueLaw struct{ spin.Law }

// The log-form path (the stars' inputs, ln P by sums of products) is the
// law's own period: templates through it and through Period agree to
// rounding, with and without scatter (which moves the tidal-lock draws in
// the stream), with tidal locks, spots and a search completeness that
// reads τ_c, and both put the same stars in the catalog.
func TestObserveLogFormIsThePeriod(t *testing.T) {
	stalled := func() spin.Law {
		g := spin.Barnes2007()
		g.Stall = spin.DefaultStallOptions()
		g.Stall.Enabled, g.Stall.CatchUpFraction = true, 0
		return spin.Scattered{Law: g, Dex: 0.08}
	}
	_, g, bank, change := memoTestBank(t)
	amp := spots.DefaultAmplitudeModel()
	amp.Slope = 1.37 // not a half-integer: the power law's general path
	laws := map[string]spin.Law{
		"scattered": spin.Scattered{Law: spin.MamajekHillenbrand2008(), Dex: 0.09, Scale: 1.1},
		"bare":      spin.Barnes2007(),
		"stalled":   stalled(),
	}
	for name, law := range laws {
		t.Run(name, func(t *testing.T) {
			set := func(l spin.Law) func(q *Population) {
				return func(q *Population) {
					q.Law = l
					q.Spots = &amp
					q.Binaries.TidalLockFraction = 0.4
					q.Survey.Search = spots.SearchCompleteness{HalfPeriodD: 25, TurnoverPower: 0.8, Steepness: 5,
						RossbyBands: []float64{1, 0.9, 0.8, 0.6, 0.3, 0.2}}
				}
			}
			logPop, plainPop := change(set(law)), change(set(opaqueLaw{law}))
			lp, pp := logPop.rotationPlan(), plainPop.rotationPlan()
			require.True(t, lp.hasLog)
			require.False(t, pp.hasLog)
			ctx := context.Background()
			opts := ObserveOptions{BaseFractionScale: 1, BandSlopes: []int{2, 4}}
			got, _, gotSlopes, err := bank.ObserveSlopes(ctx, logPop, g, opts)
			require.NoError(t, err)
			want, _, wantSlopes, err := bank.ObserveSlopes(ctx, plainPop, g, opts)
			require.NoError(t, err)
			var total float64
			for i := range want {
				total += want[i]
				assert.InDelta(t, want[i], got[i], 1e-9*math.Max(1, want[i]), "cell %d", i)
			}
			require.Greater(t, total, 1000.0, "the test population puts stars in the catalog")
			for j := range wantSlopes {
				for i := range wantSlopes[j] {
					assert.InDelta(t, wantSlopes[j][i], gotSlopes[j][i], 1e-9*math.Max(1, math.Abs(wantSlopes[j][i])), "node slope %d cell %d", j, i)
				}
			}
		})
	}
}

// A pass that finds the stars' rotations in the seen memo (a color side
// point) makes no input memo: it would hold only the few stars the seen
// memo lacks and push out the full one. After a side point of C (new
// inputs) and a color side point back at the centre's law, the next law
// side point at the centre finds a full set again.
func TestObserveInputMemoNotEmptiedBySeenPasses(t *testing.T) {
	_, g, bank, change := memoTestBank(t)
	amp := spots.DefaultAmplitudeModel()
	b := spin.Barnes2007()
	at := func(c, a, offset float64) *Population {
		return change(func(q *Population) {
			law := b
			law.C, law.A = c, a
			q.Law = spin.Scattered{Law: law, Dex: 0.08}
			q.Spots = &amp
			q.Survey.Color = ColorCalibration{OffsetMag: offset}
		})
	}
	known := func() int {
		e := bank.input.find(inputKeyOf(ptr(at(b.C, b.A, 0).rotationPlan())))
		defer bank.input.release(e)
		if e == nil {
			return 0
		}
		n := 0
		for _, k := range e.st.known {
			if k {
				n++
			}
		}
		return n
	}
	ctx := context.Background()
	observe := func(p *Population) {
		_, _, err := bank.Observe(ctx, p, g, ObserveOptions{BaseFractionScale: 1})
		require.NoError(t, err)
	}
	observe(at(b.C, b.A, 0))
	full := known()
	require.Greater(t, full, 1000)
	observe(at(b.C+0.02, b.A, 0)) // new inputs push the centre's out
	require.Zero(t, known())
	observe(at(b.C, b.A, 0.03)) // the centre's rotations are in the seen memo
	observe(at(b.C, b.A*1.01, 0))
	assert.Equal(t, full, known(), "the law side point found, or made, a full set")
	sameWithAndWithoutMemo(t, bank, at(b.C, b.A*1.02, 0), g, 1, "after the sequence")
}

func ptr[T any](v T) *T { return &v }
