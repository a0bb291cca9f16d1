package compare

import (
	"math"

	"spinpop/model"
)

// Cut names, in the order KeepStar applies them. They key Observed.CutAway.
const (
	CutColor        = "color"
	CutMainSequence = "main_sequence"
	CutPeriodWindow = "period_window"
	CutHeight       = "height"
	CutOutsideSpace = "outside_space"
)

// CutNames lists the cut names in order, for reports.
var CutNames = []string{CutColor, CutMainSequence, CutPeriodWindow, CutHeight, CutOutsideSpace}

// KeepStar applies the catalogue cuts to one star as a catalogue lists it:
// observed B−V color bv, absolute V magnitude absMagV (from parallax,
// extinction included), measured period periodD in days and height zPc
// above the plane. It returns ok, or the name of the first cut that removes
// the star (CutColor, CutMainSequence, CutPeriodWindow or CutHeight).
//
// These are exactly the tests model.Population makes when it sets a
// synthetic star's flags — FlagInColorRange on ObsBV, FlagOnMainSeq through
// the same model.OnMainSequence on (ObsBV, ObsAbsMag), and
// FlagInPeriodWindow on MeasPeriodD and |ZPc| — so that data and model are
// cut alike. The model cannot call this function (compare imports model,
// not the reverse); the test TestKeepStarAgreesWithModelFlags holds the two
// together, star by star, on a generated chunk.
func KeepStar(cuts model.Cuts, rel *model.Relations, bv, absMagV, periodD, zPc float64) (ok bool, reason string) {
	if !(bv >= cuts.BVMin && bv <= cuts.BVMax) {
		return false, CutColor
	}
	if !model.OnMainSequence(rel, cuts, bv, absMagV) {
		return false, CutMainSequence
	}
	if !(periodD >= cuts.PeriodMinD && periodD <= cuts.PeriodMaxD) {
		return false, CutPeriodWindow
	}
	if cuts.HeightMaxPc > 0 && !(math.Abs(zPc) <= cuts.HeightMaxPc) {
		return false, CutHeight
	}
	return true, ""
}
