package stats

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestPoissonLogLAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	for i, c := range ref.Poisson {
		// Source: scipy 1.10 scipy.stats.poisson.logpmf(n, mu).sum(), testdata/stats_reference.py
		relClose(t, c.LogL, PoissonLogL(c.Mu, c.N), 1e-12, 1, "case %d", i)
	}
}

func TestPoissonLogLEdgeCases(t *testing.T) {
	// Common practice, no source: 0·ln 0 = 0 for an empty bin with μ = 0;
	// an observed count where the model predicts nothing is impossible.
	assert.Equal(t, 0.0, PoissonLogL([]float64{0}, []float64{0}))
	assert.True(t, math.IsInf(PoissonLogL([]float64{0}, []float64{2}), -1))
	assert.Panics(t, func() { PoissonLogL([]float64{1}, []float64{1, 2}) })
}

func TestMultinomialLogLAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	for i, c := range ref.Multinomial {
		// Source: scipy 1.10 scipy.stats.multinomial.logpmf(n, N, mu/Σmu), testdata/stats_reference.py
		relClose(t, c.LogL, MultinomialLogL(c.Mu, c.N), 1e-11, 1, "case %d", i)

		// The profiled Poisson likelihood differs from the multinomial by
		// N ln N − N − ln N!, independent of the model (common practice, no
		// source; it follows from maximising over the scale).
		var nTot, muTot float64
		for j := range c.N {
			nTot += c.N[j]
			muTot += c.Mu[j]
		}
		prof, scale := ProfiledPoissonLogL(c.Mu, c.N)
		relClose(t, nTot/muTot, scale, 1e-14, 1e-300)
		lnNFact, _ := math.Lgamma(nTot + 1)
		relClose(t, MultinomialLogL(c.Mu, c.N)+nTot*math.Log(nTot)-nTot-lnNFact, prof, 1e-11, 1)
		// And it is the maximum over the scale: nudging the scale lowers it.
		scaled := make([]float64, len(c.Mu))
		for _, f := range []float64{0.97, 1.03} {
			for j, m := range c.Mu {
				scaled[j] = m * scale * f
			}
			assert.Less(t, PoissonLogL(scaled, c.N), prof)
		}
	}
}

func TestLnFactorial(t *testing.T) {
	// Source: ln n! = ln Γ(n+1) (definition); math.Lgamma is the reference.
	for _, n := range []float64{0, 1, 2, 10, 170, 1023, 1024, 5000, 2.5} {
		want, _ := math.Lgamma(n + 1)
		relClose(t, want, LnFactorial(n), 1e-13, 1, "n=%g", n)
	}
}

func TestPearsonResiduals(t *testing.T) {
	// Common practice, no source: r = (n − μ)/√μ.
	mu := []float64{4, 9, 0, 0}
	n := []float64{6, 3, 0, 1}
	r := PearsonResiduals(nil, mu, n)
	require.Len(t, r, 4)
	assert.InDelta(t, 1.0, r[0], 1e-15)
	assert.InDelta(t, -2.0, r[1], 1e-15)
	assert.Equal(t, 0.0, r[2])
	assert.True(t, math.IsInf(r[3], 1))
}
