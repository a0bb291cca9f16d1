package main

import (
	"bytes"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
)

// The preferred explanation's age on an edge of its range is said before
// the numbers and on the report page; the same age on an explanation the
// verdict does not prefer, or no preference at all, says nothing.
func TestAltWarningsPreferredAgeOnEdge(t *testing.T) {
	res := &compare.AltResult{Best: "burst", Outcome: "prefers", Fits: []compare.AltFit{
		{Name: "stall"},
		{Name: "burst", AgesOnEdge: []string{"burst.age_gyr at the oldest age its range allows (3 Gyr)"}},
	}}
	var b bytes.Buffer
	page := printAltWarnings(&b, res)
	assert.Contains(t, b.String(), `warning: the fit of "burst" puts burst.age_gyr at the oldest age its range allows (3 Gyr), so that age is the range's, not the catalog's, and marks no event (the preferred explanation`)
	require.Len(t, page, 1)
	assert.Contains(t, page[0], `The fit of "burst" puts`)

	res.Best, res.Outcome = "stall", "prefers"
	b.Reset()
	assert.Empty(t, printAltWarnings(&b, res))
	assert.Empty(t, b.String())

	res.Best, res.Outcome = "", "cannot-tell"
	b.Reset()
	assert.Empty(t, printAltWarnings(&b, res))
	assert.Empty(t, b.String())
}
