package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
)

// ar1 returns a stationary AR(1) series x_t = φ x_{t−1} + √(1−φ²) ε_t.
func ar1(r *rand.Rand, n int, phi float64) []float64 {
	x := make([]float64, n)
	x[0] = r.NormFloat64()
	s := math.Sqrt(1 - phi*phi)
	for i := 1; i < n; i++ {
		x[i] = phi*x[i-1] + s*r.NormFloat64()
	}
	return x
}

func TestAutocorrTimeAR1(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	n := 1 << 19
	for _, phi := range []float64{0, 0.7, 0.9} {
		x := ar1(r, n, phi)
		tau, window := AutocorrTime(x, 5)
		// Source: for AR(1), ρ(t) = φ^t, so τ = 1 + 2Σφ^t = (1+φ)/(1−φ)
		// (standard result, e.g. Sokal 1997). Statistical error of the
		// windowed estimate: var τ̂ ≈ 2(2M+1)/N τ² (From memory of Sokal 1997;
		// tolerance of 4σ reflects that).
		want := (1 + phi) / (1 - phi)
		sigma := math.Sqrt(2*float64(2*window+1)/float64(n)) * want
		assert.InDelta(t, want, tau, 4*sigma+1e-3, "phi=%g window=%d", phi, window)
		assert.GreaterOrEqual(t, float64(window), 5*tau, "Sokal window M ≥ cτ")
	}
}

func TestAutocorrelationBasics(t *testing.T) {
	// Common practice, no source: ρ(0) = 1; a constant series has no
	// correlation structure; an alternating series has ρ(1) ≈ −1.
	acf := Autocorrelation([]float64{1, 2, 3, 4, 5})
	assert.InDelta(t, 1.0, acf[0], 1e-15)
	c := Autocorrelation([]float64{2, 2, 2})
	assert.Equal(t, []float64{1, 0, 0}, c)
	alt := make([]float64, 1000)
	for i := range alt {
		alt[i] = float64(1 - 2*(i%2))
	}
	assert.InDelta(t, -1.0, Autocorrelation(alt)[1], 2e-3)
}

func TestAutocorrTimeWalkersAgrees(t *testing.T) {
	// Averaging ACFs over independent chains of the same AR(1) process
	// recovers the same τ.
	r := rand.New(rand.NewPCG(13, 14))
	series := make([][]float64, 16)
	for i := range series {
		series[i] = ar1(r, 1<<14, 0.8)
	}
	tau, _ := AutocorrTimeWalkers(series, 5)
	// Source: (1+φ)/(1−φ) = 9 for φ = 0.8; 16 chains of 16384 give
	// ~2 % standard error, 12 % tolerance (Sokal 1997 error formula, from memory).
	assert.InDelta(t, 9.0, tau, 9*0.12)
}
