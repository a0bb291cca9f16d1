package stats

import (
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
)

// Integrated autocorrelation time.
//
// For a stationary series with normalised autocorrelation ρ(t), the
// integrated time τ = 1 + 2 Σ_{t≥1} ρ(t) is the factor by which it has
// fewer independent samples than its length. The estimate τ̂(M) = 1 +
// 2 Σ_{t=1..M} ρ̂(t) is cut at Sokal's automatic window: the smallest M
// with M ≥ c·τ̂(M), c ≈ 5 (Sokal 1997, "Monte Carlo methods in statistical
// mechanics"; the same rule as in common ensemble-sampler practice). ρ̂ is
// computed by FFT of the mean-subtracted series, zero-padded to avoid
// circular wrap-around.

// Autocorrelation returns the normalised autocorrelation function ρ̂(t),
// t = 0 … len(x)−1, of x (biased estimator, ρ̂(0) = 1). A constant series
// returns all zeros after ρ̂(0) = 1.
func Autocorrelation(x []float64) []float64 {
	n := len(x)
	acf := make([]float64, n)
	if n == 0 {
		return acf
	}
	addAutocovariance(acf, x)
	normalise(acf)
	return acf
}

// addAutocovariance adds the (unnormalised) autocovariance of x to acf.
func addAutocovariance(acf, x []float64) {
	n := len(x)
	m := 1
	for m < 2*n {
		m <<= 1
	}
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	seq := make([]float64, m)
	for i, v := range x {
		seq[i] = v - mean
	}
	fft := fourier.NewFFT(m)
	coef := fft.Coefficients(nil, seq)
	for i, c := range coef {
		re, im := real(c), imag(c)
		coef[i] = complex(re*re+im*im, 0)
	}
	fft.Sequence(seq, coef)
	for i := range acf {
		acf[i] += seq[i]
	}
}

func normalise(acf []float64) {
	a0 := acf[0]
	if a0 == 0 {
		for i := range acf {
			acf[i] = 0
		}
		acf[0] = 1
		return
	}
	for i := range acf {
		acf[i] /= a0
	}
}

// sokalWindow applies the automatic window to a normalised ACF and returns
// τ̂ and the window M. If no M satisfies M ≥ c τ̂(M) the last lag is used.
func sokalWindow(acf []float64, c float64) (tau float64, window int) {
	tau = 1
	for m := 1; m < len(acf); m++ {
		tau += 2 * acf[m]
		if float64(m) >= c*tau {
			return tau, m
		}
	}
	if len(acf) == 0 {
		return math.NaN(), 0
	}
	return tau, len(acf) - 1
}

// AutocorrTime returns the integrated autocorrelation time of x with
// Sokal's automatic window constant c (5 is usual; c ≤ 0 selects 5) and
// the window M used.
func AutocorrTime(x []float64, c float64) (tau float64, window int) {
	if c <= 0 {
		c = 5
	}
	return sokalWindow(Autocorrelation(x), c)
}

// AutocorrTimeWalkers estimates one integrated autocorrelation time from
// several chains of equal length (the walkers of an ensemble): their
// normalised autocorrelation functions are averaged before the windowed
// sum, which is much less noisy than averaging per-walker τ estimates.
func AutocorrTimeWalkers(series [][]float64, c float64) (tau float64, window int) {
	if c <= 0 {
		c = 5
	}
	if len(series) == 0 || len(series[0]) == 0 {
		return math.NaN(), 0
	}
	n := len(series[0])
	mean := make([]float64, n)
	acf := make([]float64, n)
	for _, x := range series {
		if len(x) != n {
			panic("stats: AutocorrTimeWalkers series of unequal length")
		}
		for i := range acf {
			acf[i] = 0
		}
		addAutocovariance(acf, x)
		normalise(acf)
		for i, v := range acf {
			mean[i] += v
		}
	}
	for i := range mean {
		mean[i] /= float64(len(series))
	}
	return sokalWindow(mean, c)
}
