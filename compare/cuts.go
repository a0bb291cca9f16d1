package compare

import "spinpop/model"

// Cut names, in the order KeepStar applies them. They key Observed.CutAway.
const (
	CutColor        = model.CutColor
	CutMainSequence = model.CutMainSequence
	CutPeriodWindow = model.CutPeriodWindow
	CutHeight       = model.CutHeight
	CutOutsideSpace = "outside_space"
)

// CutNames lists the cut names in order, for reports.
var CutNames = []string{CutColor, CutMainSequence, CutPeriodWindow, CutHeight, CutOutsideSpace}

// KeepStar applies the catalog cuts to one observed star: cuts.Keep, the
// very methods model.Population calls when it sets a synthetic star's
// flags, so data and model are cut alike. It returns ok, or the name of the
// first cut that removes the star.
func KeepStar(cuts model.Cuts, rel *model.Relations, bv, absMagV, avMag, periodD, zPc float64) (ok bool, reason string) {
	return cuts.Keep(rel, bv, absMagV, avMag, periodD, zPc)
}
