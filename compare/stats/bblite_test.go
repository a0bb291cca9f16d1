package stats

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// bbBinLogL is ℓ(β) of Conway (2011) for one bin, written out directly.
func bbBinLogL(beta, n, m, varM float64) float64 {
	d2 := varM / (m * m)
	l := -beta*m - (beta-1)*(beta-1)/(2*d2)
	if n != 0 {
		lf, _ := math.Lgamma(n + 1)
		l += n*math.Log(beta*m) - lf
	}
	return l
}

// goldenMax maximises a unimodal f on [a, b] by golden-section search.
func goldenMax(f func(float64) float64, a, b float64) float64 {
	g := (math.Sqrt(5) - 1) / 2
	c, d := b-g*(b-a), a+g*(b-a)
	for i := 0; i < 200 && b-a > 1e-13; i++ {
		if f(c) > f(d) {
			b, d = d, c
			c = b - g*(b-a)
		} else {
			a, c = c, d
			d = a + g*(b-a)
		}
	}
	return (a + b) / 2
}

func TestBBLiteBinAgainstNumericalMaximum(t *testing.T) {
	cases := []struct{ n, m, varM float64 }{
		{12, 10, 4},     // typical: 25 effective template stars
		{0, 3, 0.5},     // empty data bin, b < 0: β̂ = 1 − mδ²
		{0, 3, 20},      // empty data bin, b > 0: β̂ = 0
		{40, 25, 30},    // b > 0 branch (varM > m)
		{3, 0.2, 0.05},  // small expectation
		{150, 120, 60},  // large counts
		{7, 7, 1e-6},    // nearly exact template
		{1, 1e-3, 1e-6}, // tiny expectation, data far above it
	}
	for _, c := range cases {
		beta, logL := BBLiteBin(c.n, c.m, c.varM)
		f := func(b float64) float64 { return bbBinLogL(b, c.n, c.m, c.varM) }
		// Common practice, no source: direct numerical maximisation of the
		// same per-bin likelihood by golden-section search.
		bNum := goldenMax(f, 0, 20)
		assert.InDelta(t, bNum, beta, 1e-6*math.Max(1, bNum), "case %+v", c)
		assert.InDelta(t, f(bNum), logL, 1e-9*math.Max(1, math.Abs(logL)), "case %+v", c)
		assert.GreaterOrEqual(t, logL, f(bNum)-1e-12, "closed form is the maximum, case %+v", c)
		assert.GreaterOrEqual(t, beta, 0.0)
	}
}

func TestBBLiteLimits(t *testing.T) {
	// With no template noise the treatment reduces to plain Poisson.
	beta, l := BBLiteBin(5, 4, 0)
	assert.Equal(t, 1.0, beta)
	assert.InDelta(t, PoissonLogL([]float64{4}, []float64{5}), l, 1e-14)
	// Very small noise: β̂ → 1 and ℓ → Poisson.
	beta, l = BBLiteBin(5, 4, 1e-10)
	assert.InDelta(t, 1.0, beta, 1e-9)
	assert.InDelta(t, PoissonLogL([]float64{4}, []float64{5}), l, 1e-8)
	// Template noise can only help the fit: ℓ(β̂) ≥ ℓ(1) = Poisson.
	_, l = BBLiteBin(30, 10, 5)
	assert.Greater(t, l, PoissonLogL([]float64{10}, []float64{30}))
	assert.InDelta(t, 25.0, EffectiveCount(10, 4), 1e-12)
}

func TestBBLiteLogLMixture(t *testing.T) {
	w, tm, n := benchMixture(5, 90, 0.2)
	betas := make([]float64, len(n))
	got := BBLiteLogL(betas, w, tm, tm, n)
	mu := explicitMu(w, tm, len(n))
	var want float64
	for i := range n {
		var v float64
		for k := range w {
			v += w[k] * w[k] * tm[i*len(w)+k]
		}
		b, l := BBLiteBin(n[i], mu[i], v)
		require.Equal(t, b, betas[i])
		want += l
	}
	assert.InDelta(t, want, got, 1e-9*math.Abs(want))
	assert.GreaterOrEqual(t, got, PoissonLogL(mu, n))
}
