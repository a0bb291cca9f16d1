package model

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// A hand-made chunk with one star stopping at each selection step: the
// cumulative counts, the per-age detection efficiency and the catalog
// histograms must follow the flags exactly.
func TestTallyCountsFollowFlags(t *testing.T) {
	c := NewChunk(7)
	pass := FlagInMagRange | FlagInColorRange | FlagOnMainSeq | FlagDetected | FlagInPeriodWindow
	c.Flags = []Flag{
		FlagGone, // not a dwarf any more
		0,        // too faint
		FlagInMagRange,
		FlagInMagRange | FlagInColorRange,
		FlagInMagRange | FlagInColorRange | FlagOnMainSeq,
		FlagInMagRange | FlagInColorRange | FlagOnMainSeq | FlagDetected,
		pass | FlagBinary,
	}
	for i := range c.N {
		c.AgeBin[i] = int32(i % 2)
		c.ObsBV[i] = 0.8
		c.MeasPeriodD[i] = 10
		c.ZPc[i] = -50
	}
	tl := NewTally([]float64{0, 1, 2}, []float64{0.5, 1, 1.5}, []float64{0, 1, 2}, []float64{0, 100, 200})
	tl.Add(c)
	assert.Equal(t, []int64{7, 6, 5, 4, 3, 2, 1}, tl.StepCounts)
	assert.Equal(t, int64(1), tl.Selected())
	assert.Equal(t, int64(1), tl.Binaries)
	// Eligible (mag, color, MS): stars 4, 5, 6 in age bins 0, 1, 0.
	assert.Equal(t, []int64{2, 1}, tl.AgeEligible)
	assert.Equal(t, []int64{1, 1}, tl.AgeDetected)
	assert.Equal(t, []int64{3, 0}, tl.ColorEligible)
	assert.Equal(t, []int64{2, 0}, tl.ColorDetected)
	assert.Equal(t, int64(1), tl.PeriodColor[0][1], "log10(10 d) = 1 falls in the last, closed bin")
	assert.Equal(t, []int64{1, 0}, tl.AbsZ)
	assert.Equal(t, []int64{1, 0}, tl.AgeSelected)
}

func TestBinEdges(t *testing.T) {
	e := []float64{0, 1, 2}
	assert.Equal(t, 0, BinIndex(e, 0))
	assert.Equal(t, 1, BinIndex(e, 1))
	assert.Equal(t, 1, BinIndex(e, 2), "the last edge belongs to the last bin")
	assert.Equal(t, -1, BinIndex(e, 2.0001))
	assert.Equal(t, -1, BinIndex(e, -1e-9))
}
