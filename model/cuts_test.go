package model

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A dust-reddened dwarf lies off the sequence as measured and on it once
// the dust is taken out. Reddening moves a star by E(B−V) = A_V/R_V in
// color and A_V in magnitude, R_V = 3.1 for the diffuse interstellar
// medium (Cardelli, Clayton & Mathis 1989) [memory].
func TestDereddenedBandTakesTheDustOut(t *testing.T) {
	rel, err := DwarfSequence()
	require.NoError(t, err)
	const bv0, av = 0.6, 0.62 // E(B−V) = 0.2
	mv0, ok := rel.AbsMagVAtBV(bv0)
	require.True(t, ok)
	obsBV, obsMV := bv0+av/3.1, mv0+av
	tight := Cuts{MSBandBrightMag: 0.01, MSBandFaintMag: 0.01}
	assert.False(t, tight.OnMainSequence(rel, obsBV, obsMV, av), "as measured, the reddened star is off a 0.01 mag band")
	tight.MSBandDereddened = true
	assert.True(t, tight.OnMainSequence(rel, obsBV, obsMV, av), "with the dust out it is on the sequence")
	assert.False(t, tight.OnMainSequence(rel, obsBV, obsMV, 0), "without its extinction it stays off")

	// As measured, it lies brighter than the sequence at its reddened
	// color by (slope − 3.1)·E(B−V), the slope taken over the same 0.2
	// mag of color: the band that just keeps it is that wide.
	mvRed, ok := rel.AbsMagVAtBV(obsBV)
	require.True(t, ok)
	off := (mvRed - mv0) - av // the sequence's drop less the extinction
	require.Greater(t, off, 0.0, "the sequence is steeper than the reddening line at B−V 0.6–0.8")
	c := Cuts{MSBandBrightMag: off + 1e-9, MSBandFaintMag: 0}
	assert.True(t, c.OnMainSequence(rel, obsBV, obsMV, av))
	c.MSBandBrightMag = off - 1e-6
	assert.False(t, c.OnMainSequence(rel, obsBV, obsMV, av))
}
