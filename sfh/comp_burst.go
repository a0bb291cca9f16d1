package sfh

import (
	"fmt"
	"math"
)

// Burst is a Gaussian episode of star formation centred on lookback age AgeGyr
// (in [0, MaxAgeGyr]) with standard deviation WidthGyr (> 0), truncated to
// [0, MaxAgeGyr] and normalised after truncation. MassFraction, in [0, 1], is
// its share of the total mass formed, before any Dip is applied.
type Burst struct {
	AgeGyr       float64
	WidthGyr     float64
	MassFraction float64
}

func (Burst) kind() string                    { return "Burst" }
func (Burst) role() Role                      { return Episode }
func (Burst) strength() string                { return "MassFraction" }
func (b Burst) fraction() float64             { return b.MassFraction }
func (b Burst) clone() Component              { return b }
func (b Burst) newShape(maxAge float64) shape { return newNormalShape(b.AgeGyr, b.WidthGyr, maxAge) }

func (b Burst) check(part string, maxAge float64) error {
	if err := checkGaussian(part, b, b.AgeGyr, b.WidthGyr, maxAge); err != nil {
		return err
	}
	if !(b.MassFraction >= 0 && b.MassFraction <= 1) {
		return outOfRange(part, b, "MassFraction", "mass_fraction", b.MassFraction, "[0, 1]")
	}
	return nil
}

func (b Burst) params(add func(string, float64, float64, float64), maxAge float64) {
	add("age_gyr", b.AgeGyr, 0, maxAge)
	add("width_gyr", b.WidthGyr, 0, math.Inf(1))
	add("mass_fraction", b.MassFraction, 0, 1)
}

func (b Burst) with(key string, v float64) (Component, bool) {
	switch key {
	case "age_gyr":
		b.AgeGyr = v
	case "width_gyr":
		b.WidthGyr = v
	case "mass_fraction":
		b.MassFraction = v
	default:
		return b, false
	}
	return b, true
}

// String describes the component in a few words.
func (b Burst) String() string {
	return fmt.Sprintf("Gaussian burst at %g Gyr, width %g Gyr, %.3g of mass", b.AgeGyr, b.WidthGyr, b.MassFraction)
}

// checkGaussian checks the centre and width shared by Burst and Dip.
func checkGaussian(part string, c Component, ageGyr, widthGyr, maxAge float64) error {
	if !(ageGyr >= 0 && ageGyr <= maxAge) {
		return outOfRange(part, c, "AgeGyr", "age_gyr", ageGyr, fmt.Sprintf("[0, %g] (0 to MaxAgeGyr)", maxAge))
	}
	if !(widthGyr > 0) || !finite(widthGyr) {
		return outOfRange(part, c, "WidthGyr", "width_gyr", widthGyr, "(0, +Inf): a positive, finite Gaussian sigma in Gyr")
	}
	return nil
}
