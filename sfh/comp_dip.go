package sfh

import (
	"fmt"
	"math"
)

// Dip suppresses star formation around lookback age AgeGyr: the whole rate is
// multiplied by
//
//	1 − Depth·exp(−(τ − AgeGyr)² / (2 WidthGyr²)),
//
// with AgeGyr in [0, MaxAgeGyr], WidthGyr > 0 and Depth in [0, 1] (1 stops
// star formation at AgeGyr). The product is then renormalised to unit total
// mass, so the fractions and weights of the other parts describe the history
// before suppression. It is the one Modulation: History keeps its dips as
// such, for the speed of the factor in the samplers' inner loop.
type Dip struct {
	AgeGyr   float64
	WidthGyr float64
	Depth    float64
}

func (Dip) kind() string           { return "Dip" }
func (Dip) role() Role             { return Modulation }
func (Dip) strength() string       { return "Depth" }
func (d Dip) clone() Component     { return d }
func (Dip) newShape(float64) shape { return nil }

func (d Dip) check(part string, maxAge float64) error {
	if err := checkGaussian(part, d, d.AgeGyr, d.WidthGyr, maxAge); err != nil {
		return err
	}
	if !(d.Depth >= 0 && d.Depth <= 1) {
		return outOfRange(part, d, "Depth", "depth", d.Depth, "[0, 1] (1 stops star formation at AgeGyr)")
	}
	return nil
}

func (d Dip) params(add func(string, float64, float64, float64), maxAge float64) {
	add("age_gyr", d.AgeGyr, 0, maxAge)
	add("width_gyr", d.WidthGyr, 0, math.Inf(1))
	add("depth", d.Depth, 0, 1)
}

func (d Dip) with(key string, v float64) (Component, bool) {
	switch key {
	case "age_gyr":
		d.AgeGyr = v
	case "width_gyr":
		d.WidthGyr = v
	case "depth":
		d.Depth = v
	default:
		return d, false
	}
	return d, true
}

// String describes the component in a few words.
func (d Dip) String() string {
	return fmt.Sprintf("dip at %g Gyr, width %g Gyr, depth %g", d.AgeGyr, d.WidthGyr, d.Depth)
}
