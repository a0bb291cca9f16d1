package model

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Re-observations that read the stars' grid columns from the place memo
// give the same bits as those that place every star afresh: the centre's
// calibration serves the spots' and the threshold's side points after
// the two color side points; a new scale, narrower cuts, another grid and
// columns of dereddened color each need their own. Only maxPlaceMemos are kept.
func TestObservePlaceMemoIdentical(t *testing.T) {
	p, g, bank, change := memoTestBank(t)
	coarser := g
	coarser.ColorEdges = []float64{g.ColorEdges[0], (g.ColorEdges[0] + g.ColorEdges[len(g.ColorEdges)-1]) / 2, g.ColorEdges[len(g.ColorEdges)-1]}
	dereddened := g
	dereddened.Dereddened = true
	steps := []struct {
		name string
		pop  *Population
		grid Grid
		hit  bool // the columns are in the memo before this pass
	}{
		{"as run", p, g, false},
		{"color offset +0.05", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.05} }), g, false},
		{"color offset -0.05", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: -0.05} }), g, false},
		{"threshold", change(func(q *Population) { q.Survey.Detect.ThresholdSNR *= 1.2 }), g, true},
		{"binary share 1.3", change(func(q *Population) { q.Binaries.FractionScale = 1.3 }), g, true},
		{"color offset +0.05 again", change(func(q *Population) { q.Survey.Color = ColorCalibration{OffsetMag: 0.05} }), g, true},
		{"dereddened columns", p, dereddened, false}, // the centre's calibration and edges, columns of another color
		{"color scale 1.04", change(func(q *Population) { q.Survey.Color = ColorCalibration{Scale: 1.04} }), g, false},
		{"narrower band", change(func(q *Population) { q.Cuts.MSBandFaintMag *= 0.8 }), g, false},
		{"coarser color grid", p, coarser, false},
		{"as run again (dropped)", p, g, false},
	}
	for _, st := range steps {
		key := placeKeyOf(newObserver(bank, st.pop, st.grid, ObserveOptions{}))
		e := bank.place.find(key)
		bank.place.release(e)
		assert.Equal(t, st.hit, e != nil, "%s: memo before the pass", st.name)
		sameWithAndWithoutMemo(t, bank, st.pop, st.grid, 1, st.name)
		e = bank.place.find(key)
		bank.place.release(e)
		require.NotNil(t, e, "%s: memo after the pass", st.name)
		for s, c := range e.st.col {
			require.NotEqual(t, placeUnknown, c, "%s: star %d not reached", st.name, s)
		}
		assert.LessOrEqual(t, len(bank.place.entries), maxPlaceMemos)
	}
}
