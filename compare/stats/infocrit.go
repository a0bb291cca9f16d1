package stats

import "math"

// AIC returns the Akaike information criterion 2k − 2 ln L̂ (Akaike 1974)
// for a model with k free parameters and maximised log-likelihood logL.
// Lower is better; differences, not values, carry meaning.
func AIC(logL float64, k int) float64 {
	return 2*float64(k) - 2*logL
}

// AICc returns the small-sample corrected AIC,
// AIC + 2k(k+1)/(n − k − 1) (Hurvich & Tsai 1989), for n data points. It is
// +Inf when n ≤ k + 1, where the correction is undefined.
func AICc(logL float64, k, n int) float64 {
	if n-k-1 <= 0 {
		return math.Inf(1)
	}
	fk := float64(k)
	return AIC(logL, k) + 2*fk*(fk+1)/float64(n-k-1)
}

// BIC returns the Bayesian information criterion k ln n − 2 ln L̂
// (Schwarz 1978) for k free parameters and n data points. For a binned
// likelihood n is the number of independent observations, which for a
// Poisson histogram is usually taken as the number of stars, not bins;
// the caller decides and should say which.
func BIC(logL float64, k, n int) float64 {
	return float64(k)*math.Log(float64(n)) - 2*logL
}
