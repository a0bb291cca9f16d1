package sfh

import (
	"fmt"
	"math"
)

// Component is one ingredient of a History. The implementations are Constant,
// Exponential, Burst, Piecewise and Dip; the interface is closed so that New
// can check every parameter it will rely on.
type Component interface {
	fmt.Stringer
	// kind names the component type in error messages.
	kind() string
}

// Constant forms stars at a flat rate over [0, MaxAgeGyr].
type Constant struct{}

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

// Burst is a Gaussian episode of star formation centred on lookback age AgeGyr
// (in [0, MaxAgeGyr]) with standard deviation WidthGyr (> 0), truncated to
// [0, MaxAgeGyr] and normalised after truncation. MassFraction, in [0, 1], is
// its share of the total mass formed, before any Dip is applied.
type Burst struct {
	AgeGyr       float64
	WidthGyr     float64
	MassFraction float64
}

// Piecewise is a non-parametric history: rate Rates[i] (relative, ≥ 0) on the
// age bin [EdgesGyr[i], EdgesGyr[i+1]). The edges increase strictly and lie in
// [0, MaxAgeGyr]; outside them the component forms no stars.
type Piecewise struct {
	EdgesGyr []float64
	Rates    []float64
}

// Dip suppresses star formation around lookback age AgeGyr: the whole rate is
// multiplied by
//
//	1 − Depth·exp(−(τ − AgeGyr)² / (2 WidthGyr²)),
//
// with AgeGyr in [0, MaxAgeGyr], WidthGyr > 0 and Depth in [0, 1] (1 stops
// star formation at AgeGyr). The product is then renormalised to unit total
// mass, so the fractions and weights of the other parts describe the history
// before suppression.
type Dip struct {
	AgeGyr   float64
	WidthGyr float64
	Depth    float64
}

func (Constant) kind() string    { return "Constant" }
func (Exponential) kind() string { return "Exponential" }
func (Burst) kind() string       { return "Burst" }
func (Piecewise) kind() string   { return "Piecewise" }
func (Dip) kind() string         { return "Dip" }

// String describes the component in a few words.
func (Constant) String() string { return "constant rate" }

// String describes the component in a few words.
func (e Exponential) String() string {
	if e.TimescaleGyr < 0 {
		return fmt.Sprintf("exponentially rising rate, e-folding %g Gyr", -e.TimescaleGyr)
	}
	return fmt.Sprintf("exponentially declining rate, e-folding %g Gyr", e.TimescaleGyr)
}

// String describes the component in a few words.
func (b Burst) String() string {
	return fmt.Sprintf("Gaussian burst at %g Gyr, width %g Gyr, %.3g of mass", b.AgeGyr, b.WidthGyr, b.MassFraction)
}

// String describes the component in a few words.
func (p Piecewise) String() string {
	return fmt.Sprintf("piecewise-constant rate in %d bins", len(p.Rates))
}

// String describes the component in a few words.
func (d Dip) String() string {
	return fmt.Sprintf("dip at %g Gyr, width %g Gyr, depth %g", d.AgeGyr, d.WidthGyr, d.Depth)
}

// isSmooth reports whether c shares the non-burst mass by Part.Weight.
func isSmooth(c Component) bool {
	switch c.(type) {
	case Constant, Exponential, Piecewise:
		return true
	}
	return false
}

// derefComponent accepts pointer forms (&Burst{...}) as a convenience and
// returns the value form that the rest of the package switches on.
func derefComponent(c Component) (Component, bool) {
	switch v := c.(type) {
	case *Constant:
		if v == nil {
			return nil, false
		}
		return *v, true
	case *Exponential:
		if v == nil {
			return nil, false
		}
		return *v, true
	case *Burst:
		if v == nil {
			return nil, false
		}
		return *v, true
	case *Piecewise:
		if v == nil {
			return nil, false
		}
		return *v, true
	case *Dip:
		if v == nil {
			return nil, false
		}
		return *v, true
	case nil:
		return nil, false
	}
	return c, true
}

// copyComponent returns c with its slices copied, so that a History never
// shares memory with its caller.
func copyComponent(c Component) Component {
	if p, ok := c.(Piecewise); ok {
		return Piecewise{
			EdgesGyr: append([]float64(nil), p.EdgesGyr...),
			Rates:    append([]float64(nil), p.Rates...),
		}
	}
	return c
}

// outOfRange formats the common validation error: which part, which
// parameter, its value and the range that would be accepted.
func outOfRange(part string, c Component, field, key string, v float64, allowed string) error {
	return &ParamError{Param: part + "." + key, msg: fmt.Sprintf("sfh: part %q (%s): %s = %g is outside the allowed range %s (parameter %q)",
		part, c.kind(), field, v, allowed, part+"."+key)}
}

// ParamError is an error about one parameter of a history, named as in
// Params ("burst.age_gyr"), so that a caller can point at the key that
// set it.
type ParamError struct {
	Param string
	msg   string
}

func (e *ParamError) Error() string { return e.msg }

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// validateComponent checks c's own parameters against maxAge.
func validateComponent(part string, c Component, maxAge float64) error {
	ageRange := fmt.Sprintf("[0, %g] (0 to MaxAgeGyr)", maxAge)
	switch v := c.(type) {
	case Constant:
	case Exponential:
		if !finite(v.TimescaleGyr) || v.TimescaleGyr == 0 {
			return outOfRange(part, c, "TimescaleGyr", "timescale_gyr", v.TimescaleGyr,
				"(-Inf, 0) ∪ (0, +Inf): finite and non-zero; positive declines toward the present, negative rises")
		}
	case Burst:
		if !(v.AgeGyr >= 0 && v.AgeGyr <= maxAge) {
			return outOfRange(part, c, "AgeGyr", "age_gyr", v.AgeGyr, ageRange)
		}
		if !(v.WidthGyr > 0) || !finite(v.WidthGyr) {
			return outOfRange(part, c, "WidthGyr", "width_gyr", v.WidthGyr, "(0, +Inf): a positive, finite Gaussian sigma in Gyr")
		}
		if !(v.MassFraction >= 0 && v.MassFraction <= 1) {
			return outOfRange(part, c, "MassFraction", "mass_fraction", v.MassFraction, "[0, 1]")
		}
	case Dip:
		if !(v.AgeGyr >= 0 && v.AgeGyr <= maxAge) {
			return outOfRange(part, c, "AgeGyr", "age_gyr", v.AgeGyr, ageRange)
		}
		if !(v.WidthGyr > 0) || !finite(v.WidthGyr) {
			return outOfRange(part, c, "WidthGyr", "width_gyr", v.WidthGyr, "(0, +Inf): a positive, finite Gaussian sigma in Gyr")
		}
		if !(v.Depth >= 0 && v.Depth <= 1) {
			return outOfRange(part, c, "Depth", "depth", v.Depth, "[0, 1] (1 stops star formation at AgeGyr)")
		}
	case Piecewise:
		return validatePiecewise(part, v, maxAge)
	default:
		return fmt.Errorf("sfh: part %q: unsupported component type %T; use Constant, Exponential, Burst, Piecewise or Dip", part, c)
	}
	return nil
}

func validatePiecewise(part string, p Piecewise, maxAge float64) error {
	n := len(p.Rates)
	if n == 0 || len(p.EdgesGyr) != n+1 {
		return fmt.Errorf("sfh: part %q (Piecewise): %d edges and %d rates; want at least one rate and exactly one more edge than rates",
			part, len(p.EdgesGyr), n)
	}
	for i, e := range p.EdgesGyr {
		if !(e >= 0 && e <= maxAge) {
			return fmt.Errorf("sfh: part %q (Piecewise): EdgesGyr[%d] = %g is outside the allowed range [0, %g] (0 to MaxAgeGyr)",
				part, i, e, maxAge)
		}
		if i > 0 && !(e > p.EdgesGyr[i-1]) {
			return fmt.Errorf("sfh: part %q (Piecewise): EdgesGyr[%d] = %g is not above EdgesGyr[%d] = %g; edges must increase strictly",
				part, i, e, i-1, p.EdgesGyr[i-1])
		}
	}
	positive := false
	for i, r := range p.Rates {
		if !(r >= 0) || !finite(r) {
			return outOfRange(part, p, fmt.Sprintf("Rates[%d]", i), fmt.Sprintf("rate_%d", i), r, "[0, +Inf): a finite, non-negative relative rate")
		}
		if r > 0 {
			positive = true
		}
	}
	if !positive {
		return fmt.Errorf("sfh: part %q (Piecewise): all %d rates are zero; at least one must be positive", part, n)
	}
	return nil
}
