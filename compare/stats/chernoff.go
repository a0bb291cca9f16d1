package stats

import "math"

// ChernoffSF returns P(T > t) for the likelihood-ratio statistic
// T = 2 Δln L of a single parameter tested at the boundary of its range
// (a component weight that cannot be negative, say). Chernoff (1954, Ann.
// Math. Stat. 25, 573) showed that under the null T is then asymptotically
// the mixture ½χ²₀ + ½χ²₁, not χ²₁ as Wilks' theorem would have it:
//
//	P(T > t) = ½ P(χ²₁ > t) = ½ erfc(√(t/2))   for t > 0,
//
// and P(T > t) = 1 for t < 0. At t = 0 it returns ½, the mass of the χ²₁
// half (the χ²₀ half is a point mass at 0 and P(T > 0) excludes it).
// Protassov et al. (2002, ApJ 571, 545) show how this asymptotic result can
// still fail for finite data or several boundary parameters; calibrate with
// a parametric bootstrap when it matters.
func ChernoffSF(t float64) float64 {
	switch {
	case math.IsNaN(t):
		return math.NaN()
	case t < 0:
		return 1
	}
	return 0.5 * math.Erfc(math.Sqrt(t/2))
}
