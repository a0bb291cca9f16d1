package model

import (
	"math"
	"strconv"
	"strings"
)

// Most of a fit's re-observations leave the color calibration and the
// cuts alone (every side point but the color's), so every stored star
// lands in the same (color, height) column of the grid and passes or
// fails the color and main-sequence cuts as before. Working that out
// again — the calibration, the two bin searches, the main-sequence
// magnitude at the star's color — was a tenth of a re-observation's
// cost. Bank keeps each star's column for the latest few calibrations
// (placeMemo); a column is an index, so templates do not depend on
// whether the memo was used (TestObservePlaceMemoIdentical).

// maxPlaceMemos is how many calibrations' columns a Bank keeps: a round's
// centre and its two color side points. 4 bytes a stored star each, and
// one spare set of storage.
const maxPlaceMemos = 3

// placeKey is what decides a stored star's column: the color calibration,
// the cuts and the relations they read (by pointer: a population's
// relations are not changed once made), and the grid's color and height
// edges (as their bits; the period edges play no part) and whether its
// colors are dereddened.
type placeKey struct {
	color      ColorCalibration
	cuts       Cuts
	recut      bool
	relations  *Relations
	edges      string
	dereddened bool
}

func placeKeyOf(ob *observer) placeKey {
	var b strings.Builder
	for _, ax := range [][]float64{ob.g.ColorEdges, ob.g.HeightEdgesPc} {
		for _, x := range ax {
			b.WriteString(strconv.FormatUint(math.Float64bits(x), 16))
			b.WriteByte(',')
		}
		b.WriteByte(';')
	}
	return placeKey{color: ob.obs.Survey.Color, cuts: ob.cuts, recut: ob.recut, relations: ob.obs.Relations, edges: b.String(),
		dereddened: ob.g.Dereddened}
}

// A placeStore column: placeUnknown before the pass that makes the memo
// reaches the star, placeOut for a star outside the grid or the cuts,
// otherwise c·nZ + z.
const (
	placeUnknown int32 = -2
	placeOut     int32 = -1
)

// placeStore is the per-star storage of a place memo.
type placeStore struct{ col []int32 }

func newPlaceStore(n int) placeStore {
	st := placeStore{col: make([]int32, n)}
	forgetPlaces(&st)
	return st
}

func forgetPlaces(st *placeStore) {
	for i := range st.col {
		st.col[i] = placeUnknown
	}
}

// placeMemos is the memo of the stars' columns by place key.
type placeMemos = memoList[placeKey, placeStore]

// placeMemo is every stored star's column under one place key.
type placeMemo = memo[placeKey, placeStore]

func newPlaceMemos() *placeMemos {
	return &placeMemos{max: maxPlaceMemos, alloc: newPlaceStore,
		stars: func(st *placeStore) int { return len(st.col) }, forget: forgetPlaces}
}
