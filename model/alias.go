package model

import (
	"errors"
	"math"
	"math/rand/v2"
)

// alias is Walker's alias table (Vose 1991 construction): O(1) draws from a
// discrete distribution, one uniform number per draw.
type alias struct {
	prob  []float64
	alias []int32
}

func newAlias(w []float64) (alias, error) {
	n := len(w)
	if n == 0 {
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
	a := alias{prob: make([]float64, n), alias: make([]int32, n)}
	scaled := make([]float64, n)
	var small, large []int
	for i, x := range w {
		scaled[i] = x * float64(n) / sum
		if scaled[i] < 1 {
			small = append(small, i)
		} else {
			large = append(large, i)
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s, l := small[len(small)-1], large[len(large)-1]
		small = small[:len(small)-1]
		a.prob[s], a.alias[s] = scaled[s], int32(l)
		scaled[l] += scaled[s] - 1
		if scaled[l] < 1 {
			large = large[:len(large)-1]
			small = append(small, l)
		}
	}
	for _, i := range append(small, large...) {
		a.prob[i], a.alias[i] = 1, int32(i)
	}
	return a, nil
}

func (a alias) draw(r *rand.Rand) int {
	u := r.Float64() * float64(len(a.prob))
	i := int(u)
	if i >= len(a.prob) {
		i = len(a.prob) - 1
	}
	if u-float64(i) < a.prob[i] {
		return i
	}
	return int(a.alias[i])
}
