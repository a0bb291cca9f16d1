package compare

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// A pass is a side point, and keeps no memos, when its values differ
// from one of the latest centres in exactly one parameter: not the centre
// itself, not a proposal that moves several, not a point about a centre
// long forgotten.
func TestCentreLogSidePoints(t *testing.T) {
	var o BankObserver
	l := o.centreLog()
	assert.Same(t, l, o.centreLog(), "one log an observer")
	l.note([]float64{0.77, 0, 1})
	assert.True(t, l.sidePoint([]float64{0.78, 0, 1}), "one parameter moved")
	assert.True(t, l.sidePoint([]float64{0.77, 0, 0.5}), "another")
	assert.False(t, l.sidePoint([]float64{0.77, 0, 1}), "the centre again")
	assert.False(t, l.sidePoint([]float64{0.78, 0.01, 1}), "two moved: a proposal")
	assert.False(t, l.sidePoint([]float64{0.78, 0}), "other parameters")
	for i := range maxCentres {
		l.note([]float64{0.7, float64(i), 1})
	}
	assert.False(t, l.sidePoint([]float64{0.77, 0, 0.5}), "its centre pushed out by %d later ones", maxCentres)
	assert.True(t, l.sidePoint([]float64{0.7, 3, 0.9}))
}
