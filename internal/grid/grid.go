// Package grid holds the project's one rule for evenly spaced values, so
// that histogram edges, parameter grids and plot axes agree to the last bit
// wherever they are made.
package grid

// Linspace returns n ≥ 2 values from lo to hi, evenly spaced: element i is
// lo + (hi−lo)·i/(n−1), and the last is hi exactly.
//
// gonum's floats.Span computes lo + i·step instead; the two differ in the
// last bit for some elements, which would move bin edges written to
// manifests and reports, so the project keeps this form.
func Linspace(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	out[n-1] = hi
	return out
}
