package sfh

import (
	"fmt"
	"math"
)

// Exponential is an exponentially declining star-formation rate with e-folding
// time TimescaleGyr in cosmic time. Cosmic time runs opposite to lookback age
// (t = MaxAgeGyr − τ), so over lookback age the rate is
//
//	rate(τ) ∝ exp(−t/TimescaleGyr) ∝ exp(τ/TimescaleGyr).
//
// A positive TimescaleGyr puts more star formation in the past (old ages); a
// negative one is a rising history with more star formation recently. Zero is
// not allowed; a very large |TimescaleGyr| approaches Constant.
type Exponential struct {
	TimescaleGyr float64
}

func (Exponential) kind() string     { return "Exponential" }
func (Exponential) role() Role       { return Smooth }
func (Exponential) strength() string { return "" }

func (e Exponential) check(part string, _ float64) error {
	if !finite(e.TimescaleGyr) || e.TimescaleGyr == 0 {
		return outOfRange(part, e, "TimescaleGyr", "timescale_gyr", e.TimescaleGyr,
			"(-Inf, 0) ∪ (0, +Inf): finite and non-zero; positive declines toward the present, negative rises")
	}
	return nil
}

func (e Exponential) newShape(maxAge float64) shape { return newExpShape(e.TimescaleGyr, maxAge) }

// params: the timescale cannot change sign through a fit's box, so its
// range is the side of zero the current value is on.
func (e Exponential) params(add func(string, float64, float64, float64), _ float64) {
	inf := math.Inf(1)
	if e.TimescaleGyr > 0 {
		add("timescale_gyr", e.TimescaleGyr, 0, inf)
	} else {
		add("timescale_gyr", e.TimescaleGyr, -inf, 0)
	}
}

func (e Exponential) with(key string, v float64) (Component, bool) {
	if key != "timescale_gyr" {
		return e, false
	}
	e.TimescaleGyr = v
	return e, true
}

func (e Exponential) clone() Component { return e }

// String describes the component in a few words.
func (e Exponential) String() string {
	if e.TimescaleGyr < 0 {
		return fmt.Sprintf("exponentially rising rate, e-folding %g Gyr", -e.TimescaleGyr)
	}
	return fmt.Sprintf("exponentially declining rate, e-folding %g Gyr", e.TimescaleGyr)
}
