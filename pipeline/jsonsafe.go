package pipeline

import "math"

// Finite maps NaN and ±Inf to JSON-safe values (null is not a float64, so
// NaN becomes 0 only where it means "nothing"): infinite values are capped.
func Finite(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return 0
	case math.IsInf(x, 1):
		return math.MaxFloat64
	case math.IsInf(x, -1):
		return -math.MaxFloat64
	}
	return x
}

// FiniteAll maps NaN and ±Inf to null.
func FiniteAll(x []float64) []any {
	out := make([]any, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			out[i] = nil
		} else {
			out[i] = v
		}
	}
	return out
}

// finiteOnly replaces values JSON cannot hold (NaN, ±Inf) by −1, which no
// likelihood ratio (≥ 0) takes.
func finiteOnly(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			v = -1
		}
		out[i] = v
	}
	return out
}
