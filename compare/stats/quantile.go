package stats

import "math"

// QuantileSorted is the q-quantile of sorted values by linear interpolation
// between order statistics: with h = q(n−1), x[⌊h⌋] + (h−⌊h⌋)(x[⌊h⌋+1]−x[⌊h⌋])
// (definition 7 of Hyndman & Fan 1996, the default of R and NumPy). It is
// NaN for no values. The project's one quantile rule: posterior summaries,
// bands and injection reports all use it.
//
// gonum's stat.Quantile offers definitions 1 and 4, which differ from this
// one (the median of two values is the lower one under LinInterp); the
// project keeps definition 7 so that reported quantiles do not change.
func QuantileSorted(sorted []float64, q float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	x := q * float64(n-1)
	i := int(math.Floor(x))
	if i >= n-1 {
		return sorted[n-1]
	}
	return sorted[i] + (x-float64(i))*(sorted[i+1]-sorted[i])
}
