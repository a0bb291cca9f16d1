package compare

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat/distuv"

	"spinpop/compare/stats"
)

func poissonData(tpl *Templates, w []float64, scale float64, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 11))
	mu := tpl.Expected(w, nil)
	out := make([]float64, len(mu))
	for i, m := range mu {
		if m*scale > 0 {
			out[i] = distuv.Poisson{Lambda: m * scale, Src: r}.Rand()
		}
	}
	return out
}

func randomWeights(k int, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 3))
	w := make([]float64, k)
	for j := range w {
		w[j] = 0.2 + r.Float64()
	}
	return w
}

// The analytic gradient agrees with central finite differences for every
// option combination. Common practice, no source: central differences
// with a relative step of 1e-6 are accurate to ~1e-8 relative here.
func TestLikelihoodGradientMatchesFiniteDifferences(t *testing.T) {
	tpl := randomTemplates(t, 6, 5, 8, 3, 4, 1)
	wTrue := randomWeights(6, 2)
	data := poissonData(tpl, wTrue, 3, 5)
	for _, norm := range Normalisations {
		for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
			for _, use3D := range []bool{false, true} {
				if norm == NormPerColorHeight && !use3D {
					continue
				}
				l, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: norm, TemplateNoise: noise, Use3D: use3D, MassScale: 2.5})
				require.NoError(t, err)
				w := randomWeights(6, 9)
				g := make([]float64, 6)
				v := l.LogLGrad(w, g)
				require.False(t, math.IsInf(v, 0) || math.IsNaN(v))
				assert.InDelta(t, v, l.LogL(w), 1e-9*math.Abs(v))
				for j := range w {
					h := 1e-6 * w[j]
					wp := append([]float64(nil), w...)
					wm := append([]float64(nil), w...)
					wp[j] += h
					wm[j] -= h
					fd := (l.LogL(wp) - l.LogL(wm)) / (2 * h)
					assert.InDelta(t, fd, g[j], 1e-5*(1+math.Abs(fd)), "%s/%s/3D=%v: ∂/∂w_%d", norm, noise, use3D, j)
				}
			}
		}
	}
}

// Free normalisation is the Poisson likelihood at the profiled scale
// s = N/Σμ, which stats.ProfiledPoissonLogL computes independently, and
// it differs from the multinomial by a constant of the data.
// Source: the identity max_s Σ[n ln sμ − sμ − ln n!] at s = N/Σμ (see
// stats.MultinomialLogL's comment); analytic, exact to rounding.
func TestFreeNormalisationIsProfiledPoisson(t *testing.T) {
	tpl := randomTemplates(t, 5, 6, 7, 0, 6, 3)
	data := poissonData(tpl, randomWeights(5, 4), 0.7, 8)
	l, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	n := 0.0
	for _, v := range data {
		n += v
	}
	for seed := range uint64(5) {
		w := randomWeights(5, 20+seed)
		mu := tpl.Expected(w, nil)
		want, scale := stats.ProfiledPoissonLogL(mu, data)
		assert.InDelta(t, want, l.LogL(w), 1e-9*math.Abs(want))
		// Same value by brute force: the best scale maximises the Poisson likelihood.
		scaled := make([]float64, len(mu))
		for i := range mu {
			scaled[i] = mu[i] * scale
		}
		assert.InDelta(t, stats.PoissonLogL(scaled, data), l.LogL(w), 1e-9*math.Abs(want))
		for _, f := range []float64{0.99, 1.01} {
			for i := range mu {
				scaled[i] = mu[i] * scale * f
			}
			assert.Less(t, stats.PoissonLogL(scaled, data), l.LogL(w))
		}
		// Multinomial differs by N ln N − N − ln N!.
		lnNFact, _ := math.Lgamma(n + 1)
		assert.InDelta(t, stats.MultinomialLogL(mu, data)+n*math.Log(n)-n-lnNFact, l.LogL(w), 1e-8*math.Abs(want))
		// Scale invariance of the weights.
		w2 := append([]float64(nil), w...)
		for j := range w2 {
			w2[j] *= 3.7
		}
		assert.InDelta(t, l.LogL(w), l.LogL(w2), 1e-9*math.Abs(want))
	}
}

// With Barlow–Beeston lite and free normalisation the scale is jointly
// profiled: perturbing it away from the solution lowers the likelihood,
// and absolute normalisation at that scale reproduces the value.
// Source: Conway (2011), arXiv:1103.0354 — the profiled likelihood is a
// maximum over the nuisances.
func TestBBLiteFreeScaleIsAMaximum(t *testing.T) {
	tpl := randomTemplates(t, 4, 6, 6, 0, 3, 6)
	data := poissonData(tpl, randomWeights(4, 1), 2, 2)
	w := randomWeights(4, 17)
	lf, err := NewLikelihood(tpl, data, LikeOptions{})
	require.NoError(t, err)
	lf.LogL(w) // fills the moments bbScale reads
	s, ok := lf.bbScale()
	require.True(t, ok)
	best := lf.LogL(w)
	for _, f := range []float64{0.98, 0.995, 0.9999, 1, 1.0001, 1.005, 1.02} {
		la, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: NormAbsolute, MassScale: s * f})
		require.NoError(t, err)
		v := la.LogL(w)
		if f == 1 {
			assert.InDelta(t, best, v, 1e-9*math.Abs(best))
		} else {
			assert.Less(t, v, best)
		}
	}
	// And each bin matches stats.BBLiteLogL at that scale.
	mu := tpl.Collapse2D().Expected(w, nil)
	_ = mu
	lfw := append([]float64(nil), w...)
	for j := range lfw {
		lfw[j] *= s
	}
	var tplRows []float64
	t2 := tpl.Collapse2D()
	nb := t2.Space.NumBins()
	for i := range nb {
		for j := range 4 {
			tplRows = append(tplRows, t2.Counts[j*nb+i])
		}
	}
	// Variance of s·T is s²·T: pass templates T with weights s·w, variances T.
	want := stats.BBLiteLogL(nil, lfw, tplRows, tplRows, data)
	// Plus the Laplace term −½ ln(1 + n δ²) of every bin with data, δ² =
	// Σ_k w_k² T_ki / (Σ_k w_k T_ki)² (scale-free).
	// Source: Tierney & Kadane (1986), JASA 81, 82 — the Laplace
	// approximation of an integral over a nuisance parameter.
	for i := range nb {
		if data[i] == 0 {
			continue
		}
		var m, v float64
		for j := range 4 {
			m += w[j] * t2.Counts[j*nb+i]
			v += w[j] * w[j] * t2.Counts[j*nb+i]
		}
		if m > 0 && v > 0 {
			want -= 0.5 * math.Log1p(data[i]*v/(m*m))
		}
	}
	assert.InDelta(t, want, best, 1e-9*math.Abs(want))
}

func TestLikelihoodErrors(t *testing.T) {
	tpl := randomTemplates(t, 3, 4, 4, 2, 3, 1)
	_, err := NewLikelihood(tpl, make([]float64, 5), LikeOptions{})
	assert.ErrorContains(t, err, "5 data counts")
	_, err = NewLikelihood(tpl, make([]float64, 16), LikeOptions{Normalisation: "fixed"})
	assert.ErrorContains(t, err, `"free", "absolute", "per-color" or "per-color-height"`)
	_, err = NewLikelihood(tpl, make([]float64, 16), LikeOptions{Normalisation: NormPerColorHeight})
	assert.ErrorContains(t, err, "3-D")
	_, err = NewLikelihood(tpl, make([]float64, 16), LikeOptions{Normalisation: NormAbsolute})
	assert.ErrorContains(t, err, "MassScale")
	// A data star where no template star fell.
	for j := range 3 {
		tpl.Counts[j*tpl.Space.NumBins()+0] = 0
		tpl.Counts[j*tpl.Space.NumBins()+1] = 0
	}
	data := make([]float64, 16)
	data[0] = 1
	_, err = NewLikelihood(tpl, data, LikeOptions{})
	assert.ErrorContains(t, err, "no template star fell")
}

func benchLikelihood(b *testing.B, noise string) {
	// 40 age bins × 2,500 comparison bins (25 colors × 100 periods), with
	// about a third of the data bins empty as in a sparse catalog.
	tpl := randomTemplates(b, 40, 25, 100, 0, 3, 1)
	data := poissonData(tpl, randomWeights(40, 2), 0.15, 3)
	l, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: noise})
	require.NoError(b, err)
	w := randomWeights(40, 5)
	g := make([]float64, 40)
	b.ReportAllocs()
	for b.Loop() {
		l.LogLGrad(w, g)
	}
}

// BenchmarkLogLGrad40x2500 times one LogLGrad at 40 age bins × 2,500 bins.
func BenchmarkLogLGrad40x2500(b *testing.B) {
	b.Run("ignore", func(b *testing.B) { benchLikelihood(b, NoiseIgnore) })
	b.Run("bblite", func(b *testing.B) { benchLikelihood(b, NoiseBarlowBeeston) })
}
