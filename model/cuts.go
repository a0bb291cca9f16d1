package model

import "math"

// Cuts are the catalog cuts, applied identically to model and data: the
// generator sets a synthetic star's flags with these methods, and compare
// keeps or removes an observed star with Keep, which calls the same ones.
type Cuts struct {
	BVMin, BVMax    float64
	MSBandBrightMag float64 // keep stars up to this much brighter than the single-star sequence at their color
	MSBandFaintMag  float64 // and this much fainter
	// MSBandDereddened places a star for the band test after taking the
	// dust's reddening and extinction out (its E(B−V) and A_V from the
	// scenario's dust model at the star's distance and height), as one
	// places stars on a color–magnitude diagram with a dust model in hand.
	// Without it the band sees the catalog's color and M_V as measured:
	// reddening then moves a distant star along a line of slope
	// A_V/E(B−V) = 3.1, shallower than the sequence at the blue end, so
	// the band cuts distant (older, higher) stars at a rate that depends
	// on the sequence's slope — which a catalog's real stars need not
	// share with the model's table.
	MSBandDereddened bool
	PeriodMinD       float64
	PeriodMaxD       float64
	HeightMaxPc      float64 // |z| cut; 0 = none
}

// Cut names, in the order Keep applies them.
const (
	CutColor        = "color"
	CutMainSequence = "main_sequence"
	CutPeriodWindow = "period_window"
	CutHeight       = "height"
)

// InColorRange is the color cut on the observed (reddened) B−V.
func (c Cuts) InColorRange(obsBV float64) bool { return obsBV >= c.BVMin && obsBV <= c.BVMax }

// OnMainSequence is the catalog's color–magnitude cut: keep a star whose
// M_V (from parallax, extinction included) lies within the band around the
// single-star sequence at its B−V. Unresolved binaries (up to 0.753 mag
// brighter) and evolved stars fall out when the band is narrow, in data
// and model alike. avMag is the star's extinction in V, which
// MSBandDereddened takes out of both (E(B−V) = A_V/3.1); without it
// avMag is not read.
func (c Cuts) OnMainSequence(rel *Relations, obsBV, absV, avMag float64) bool {
	if c.MSBandDereddened {
		obsBV, absV = obsBV-ebvPerAV*avMag, absV-avMag
	}
	ms, ok := rel.AbsMagVAtBV(obsBV)
	if !ok {
		return false
	}
	dm := absV - ms
	return dm >= -c.MSBandBrightMag && dm <= c.MSBandFaintMag
}

// InPeriodWindow is the cut on the measured period and, when HeightMaxPc
// is set, on the height above the plane: the generator's last step
// (FlagInPeriodWindow).
func (c Cuts) InPeriodWindow(periodD, zPc float64) bool {
	return c.PeriodInRange(periodD) && c.HeightInRange(zPc)
}

// PeriodInRange is the period window alone.
func (c Cuts) PeriodInRange(periodD float64) bool {
	return periodD >= c.PeriodMinD && periodD <= c.PeriodMaxD
}

// HeightInRange is the |z| cut alone (always true when HeightMaxPc is 0).
func (c Cuts) HeightInRange(zPc float64) bool {
	return c.HeightMaxPc <= 0 || math.Abs(zPc) <= c.HeightMaxPc
}

// Keep applies the cuts to one star as a catalog lists it: observed B−V
// bv, absolute V magnitude absMagV (from parallax, extinction included),
// its extinction in V avMag (read only by a dereddened band), measured
// period periodD in days and height zPc above the plane. It returns ok, or
// the name of the first cut that removes the star.
func (c Cuts) Keep(rel *Relations, bv, absMagV, avMag, periodD, zPc float64) (ok bool, reason string) {
	if !c.InColorRange(bv) {
		return false, CutColor
	}
	if !c.OnMainSequence(rel, bv, absMagV, avMag) {
		return false, CutMainSequence
	}
	if !c.PeriodInRange(periodD) {
		return false, CutPeriodWindow
	}
	if !c.HeightInRange(zPc) {
		return false, CutHeight
	}
	return true, ""
}
