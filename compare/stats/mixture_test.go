package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// explicitMu computes μ_i = Σ_k w_k T_ki the slow, obvious way.
func explicitMu(w, t []float64, nBins int) []float64 {
	k := len(w)
	mu := make([]float64, nBins)
	for i := range mu {
		for j := 0; j < k; j++ {
			mu[i] += w[j] * t[i*k+j]
		}
	}
	return mu
}

func TestMixtureLogLMatchesPoisson(t *testing.T) {
	// Common practice, no source: the mixture likelihood is the Poisson
	// likelihood of the mixed expectation (PoissonLogL is itself checked
	// against scipy). Sizes straddle the 64-bin block.
	for _, nBins := range []int{1, 63, 64, 65, 300} {
		w, tm, n := benchMixture(7, nBins, 0.3)
		want := PoissonLogL(explicitMu(w, tm, nBins), n)
		relClose(t, want, MixtureLogL(w, tm, n), 1e-13, 1, "nBins=%d", nBins)
		grad := make([]float64, len(w))
		relClose(t, want, MixtureLogLGrad(grad, w, tm, n), 1e-13, 1, "nBins=%d", nBins)
		m := NewMixture(tm, len(w), n)
		relClose(t, want, m.LogL(w), 1e-13, 1, "nBins=%d", nBins)
		g2 := make([]float64, len(w))
		relClose(t, want, m.LogLGrad(g2, w), 1e-13, 1, "nBins=%d", nBins)
		for j := range grad {
			relClose(t, grad[j], g2[j], 1e-11, 1, "nBins=%d k=%d", nBins, j)
		}
	}
}

func TestMixtureGradientFiniteDifference(t *testing.T) {
	// Common practice, no source: central differences, step 1e-6 relative.
	w, tm, n := benchMixture(6, 150, 0.2)
	grad := make([]float64, len(w))
	MixtureLogLGrad(grad, w, tm, n)
	for k := range w {
		h := 1e-6 * w[k]
		wp := append([]float64(nil), w...)
		wm := append([]float64(nil), w...)
		wp[k] += h
		wm[k] -= h
		fd := (MixtureLogL(wp, tm, n) - MixtureLogL(wm, tm, n)) / (2 * h)
		relClose(t, fd, grad[k], 1e-6, 1, "k=%d", k)
	}
}

func TestMixtureOutsideDomain(t *testing.T) {
	w := []float64{1, -1}
	tm := []float64{1, 1, 2, 1} // bin 0: μ = 0, bin 1: μ = 1
	n := []float64{3, 1}
	assert.True(t, math.IsInf(MixtureLogL(w, tm, n), -1))
	grad := make([]float64, 2)
	assert.True(t, math.IsInf(MixtureLogLGrad(grad, w, tm, n), -1))
	assert.True(t, math.IsNaN(grad[0]))
	m := NewMixture(tm, 2, n)
	assert.True(t, math.IsInf(m.LogLGrad(grad, w), -1))
	// An empty bin with μ = 0 is fine: it contributes nothing.
	n0 := []float64{0, 1}
	assert.InDelta(t, PoissonLogL([]float64{0, 1}, n0), MixtureLogL(w, tm, n0), 1e-15)
}

func TestMixtureAllocationFree(t *testing.T) {
	w, tm, n := benchMixture(40, 2500, 0)
	grad := make([]float64, len(w))
	m := NewMixture(tm, len(w), n)
	withKernels(t, func(t *testing.T) {
		assert.Zero(t, testing.AllocsPerRun(20, func() { m.LogLGrad(grad, w) }))
		assert.Zero(t, testing.AllocsPerRun(20, func() { m.LogL(w) }))
		assert.Zero(t, testing.AllocsPerRun(20, func() { MixtureLogLGrad(grad, w, tm, n) }))
		assert.Zero(t, testing.AllocsPerRun(20, func() { MixtureLogL(w, tm, n) }))
	})
}

func TestMixtureKeepsNonEmpty(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	_, tm, n := benchMixture(3, 100, 0.5)
	nonEmpty := 0
	for _, v := range n {
		if v != 0 {
			nonEmpty++
		}
	}
	m := NewMixture(tm, 3, n)
	require.Equal(t, nonEmpty, m.NumNonEmpty())
	require.Equal(t, 3, m.NumTemplates())
	w := []float64{r.Float64(), r.Float64(), r.Float64()}
	relClose(t, MixtureLogL(w, tm, n), m.LogL(w), 1e-13, 1)
}
