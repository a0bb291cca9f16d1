package sfh

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Piecewise is a non-parametric history: rate Rates[i] (relative, ≥ 0) on the
// age bin [EdgesGyr[i], EdgesGyr[i+1]). The edges increase strictly and lie in
// [0, MaxAgeGyr]; outside them the component forms no stars.
type Piecewise struct {
	EdgesGyr []float64
	Rates    []float64
}

func (Piecewise) kind() string     { return "Piecewise" }
func (Piecewise) role() Role       { return Smooth }
func (Piecewise) strength() string { return "" }

func (p Piecewise) check(part string, maxAge float64) error {
	return validatePiecewise(part, p, maxAge)
}

func (p Piecewise) newShape(float64) shape { return newStepShape(p.EdgesGyr, p.Rates) }

// params: one rate per bin; the edges are structure, not parameters.
func (p Piecewise) params(add func(string, float64, float64, float64), _ float64) {
	for i, r := range p.Rates {
		add("rate_"+strconv.Itoa(i), r, 0, math.Inf(1))
	}
}

// with sets rate_<i>, in place: History.WithParams works on its own copy.
func (p Piecewise) with(key string, v float64) (Component, bool) {
	idx, ok := strings.CutPrefix(key, "rate_")
	if !ok {
		return p, false
	}
	i, err := strconv.Atoi(idx)
	if err != nil || i < 0 || i >= len(p.Rates) || strconv.Itoa(i) != idx {
		return p, false
	}
	p.Rates[i] = v
	return p, true
}

// clone copies the slices, so that a History never shares memory with its
// caller.
func (p Piecewise) clone() Component {
	return Piecewise{
		EdgesGyr: append([]float64(nil), p.EdgesGyr...),
		Rates:    append([]float64(nil), p.Rates...),
	}
}

// String describes the component in a few words.
func (p Piecewise) String() string {
	return fmt.Sprintf("piecewise-constant rate in %d bins", len(p.Rates))
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
