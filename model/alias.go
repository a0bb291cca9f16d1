package model

import (
	"errors"
	"math"
	"math/rand/v2"

	internal "spinpop/internal/alias"
)

// alias draws from a discrete distribution in constant time, one uniform
// number per draw (Walker's alias table, see internal/alias).
type alias struct{ t internal.Table }

// newAlias checks the weights and builds the table.
func newAlias(w []float64) (alias, error) {
	if len(w) == 0 {
		return alias{}, errors.New("no categories")
	}
	sum := 0.0
	for _, x := range w {
		if x < 0 || math.IsNaN(x) || math.IsInf(x, 0) {
			return alias{}, errors.New("weights must be finite and ≥ 0")
		}
		sum += x
	}
	if sum <= 0 {
		return alias{}, errors.New("all weights are zero: no star can be drawn (is the field empty, or the history zero inside the age bins?)")
	}
	return alias{internal.New(w)}, nil
}

func (a alias) draw(r *rand.Rand) int { return a.t.Draw(r.Float64()) }
