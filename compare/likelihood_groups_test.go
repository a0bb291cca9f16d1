package compare

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/stats"
)

// The per-color likelihood is the sum over color columns of each
// column's profiled Poisson likelihood, which stats.ProfiledPoissonLogL
// computes independently, column by column.
// Source: the identity max_s Σ[n ln sμ − sμ − ln n!] at s = N/Σμ, applied
// to each column (the product of one multinomial per column); exact.
func TestPerColorIsSumOfColumnLikelihoods(t *testing.T) {
	tpl := randomTemplates(t, 5, 6, 7, 3, 6, 21)
	data := poissonData(tpl, randomWeights(5, 4), 0.7, 8)
	for _, use3D := range []bool{false, true} {
		for _, norm := range []string{NormPerColor, NormPerColorHeight} {
			if norm == NormPerColorHeight && !use3D {
				continue
			}
			l, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: norm, TemplateNoise: NoiseIgnore, Use3D: use3D})
			require.NoError(t, err)
			sp := l.Space()
			w := randomWeights(5, 30)
			mu := l.tplExpected(w)
			groups := map[int][]int{}
			for i := range sp.NumBins() {
				c, _, z := sp.Split(i)
				g := c
				if norm == NormPerColorHeight {
					g = c*sp.NumHeight() + z
				}
				groups[g] = append(groups[g], i)
			}
			var want float64
			for _, bins := range groups {
				var m, n []float64
				for _, i := range bins {
					m = append(m, mu[i])
					n = append(n, l.Counts()[i])
				}
				var nTot float64
				for _, v := range n {
					nTot += v
				}
				if nTot == 0 {
					continue
				}
				v, _ := stats.ProfiledPoissonLogL(m, n)
				want += v
			}
			assert.InDelta(t, want, l.LogL(w), 1e-9*math.Abs(want), "%s 3D=%v", norm, use3D)
		}
	}
}

// What the per-color likelihood is for: a change that scales whole color
// columns — another IMF, another relation table, a selection in color
// alone — leaves it unchanged, for exact and noisy templates alike, while
// the free-normalisation likelihood moves.
func TestPerColorIgnoresColumnScaling(t *testing.T) {
	tpl := randomTemplates(t, 4, 6, 8, 2, 8, 5)
	data := poissonData(tpl, randomWeights(4, 1), 0.5, 2)
	scaled := *tpl
	scaled.Counts = append([]float64(nil), tpl.Counts...)
	nb := tpl.Space.NumBins()
	for k := range tpl.NumAgeBins() {
		for i := range nb {
			c, _, _ := tpl.Space.Split(i)
			scaled.Counts[k*nb+i] *= 1 + 0.7*float64(c) // a different number of stars per column
		}
	}
	w := randomWeights(4, 9)
	for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
		a, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: NormPerColor, TemplateNoise: noise})
		require.NoError(t, err)
		b, err := NewLikelihood(&scaled, data, LikeOptions{Normalisation: NormPerColor, TemplateNoise: noise})
		require.NoError(t, err)
		if noise == NoiseIgnore {
			assert.InDelta(t, a.LogL(w), b.LogL(w), 1e-9*math.Abs(a.LogL(w)))
		} else {
			// Template noise is relative: scaling a column by c scales its
			// variance by c, not c², so β moves a little; the change is of
			// the order of the templates' relative noise, far below the
			// free normalisation's.
			assert.InDelta(t, a.LogL(w), b.LogL(w), 0.05*math.Abs(a.LogL(w)))
		}
		fa, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: noise})
		require.NoError(t, err)
		fb, err := NewLikelihood(&scaled, data, LikeOptions{TemplateNoise: noise})
		require.NoError(t, err)
		assert.Greater(t, math.Abs(fa.LogL(w)-fb.LogL(w)), 5.0, "the free normalisation sees the column scaling")
	}
}

// SetTemplates gives the same likelihood as a Likelihood made afresh from
// the new templates, and leaves a Likelihood that shared the old ones
// untouched.
func TestSetTemplatesMatchesNew(t *testing.T) {
	tpl := randomTemplates(t, 4, 5, 6, 2, 8, 7)
	other := randomTemplates(t, 4, 5, 6, 2, 8, 8)
	data := poissonData(tpl, randomWeights(4, 1), 0.5, 2)
	w := randomWeights(4, 3)
	for _, norm := range []string{NormFree, NormPerColor} {
		for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
			l, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: norm, TemplateNoise: noise})
			require.NoError(t, err)
			shared, err := l.WithCounts(l.Counts())
			require.NoError(t, err)
			before := shared.LogL(w)
			require.NoError(t, l.SetTemplates(other))
			fresh, err := NewLikelihood(other, data, LikeOptions{Normalisation: norm, TemplateNoise: noise})
			require.NoError(t, err)
			assert.InDelta(t, fresh.LogL(w), l.LogL(w), 1e-9*math.Abs(fresh.LogL(w)))
			assert.Equal(t, before, shared.LogL(w))
		}
	}
}

// Templates with their own variances: Barlow–Beeston lite uses them, and a
// variance equal to the counts reproduces the raw-count likelihood.
func TestTemplateVariances(t *testing.T) {
	tpl := randomTemplates(t, 4, 5, 6, 0, 8, 9)
	data := poissonData(tpl, randomWeights(4, 1), 0.5, 2)
	w := randomWeights(4, 3)
	raw, err := NewLikelihood(tpl, data, LikeOptions{})
	require.NoError(t, err)
	same := *tpl
	same.Var = append([]float64(nil), tpl.Counts...)
	l1, err := NewLikelihood(&same, data, LikeOptions{})
	require.NoError(t, err)
	assert.InDelta(t, raw.LogL(w), l1.LogL(w), 1e-9*math.Abs(raw.LogL(w)))
	// Smaller template variance moves the likelihood toward the
	// exact-template one.
	small := *tpl
	small.Var = make([]float64, len(tpl.Counts))
	for i, v := range tpl.Counts {
		small.Var[i] = 1e-6 * v
	}
	l2, err := NewLikelihood(&small, data, LikeOptions{})
	require.NoError(t, err)
	exact, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	assert.InDelta(t, exact.LogL(w), l2.LogL(w), 1e-3*math.Abs(exact.LogL(w)))
}

// binDerivatives: moving the templates by a small δT changes ln L by
// Σ_i dm_i (Σ_k w_k δT_ki) + dv_i (Σ_k w_k² δV_ki), checked by finite
// differences for every normalisation and both template treatments.
// Common practice, no source: central differences, relative step 1e-6.
func TestBinDerivativesMatchFiniteDifferences(t *testing.T) {
	tpl := randomTemplates(t, 4, 5, 6, 2, 8, 11)
	data := poissonData(tpl, randomWeights(4, 1), 0.5, 2)
	w := randomWeights(4, 3)
	nb2 := tpl.Space.NumColorPeriod()
	for _, norm := range []string{NormFree, NormAbsolute, NormPerColor} {
		for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
			l, err := NewLikelihood(tpl, data, LikeOptions{Normalisation: norm, TemplateNoise: noise, MassScale: 0.4})
			require.NoError(t, err)
			dm, dv := make([]float64, nb2), make([]float64, nb2)
			l.binDerivatives(w, dm, dv)
			// A direction: perturb every template bin by a random relative amount.
			flat := tpl.Collapse2D()
			dir := randomWeights(len(flat.Counts), 4)
			shifted := func(h float64) float64 {
				c := *flat
				c.Counts = append([]float64(nil), flat.Counts...)
				c.Var = append([]float64(nil), flat.Counts...) // variance stays at the unperturbed counts
				for i := range c.Counts {
					c.Counts[i] *= 1 + h*(dir[i]-0.7)
				}
				lc, err := NewLikelihood(&c, l.Counts(), LikeOptions{Normalisation: norm, TemplateNoise: noise, MassScale: 0.4})
				require.NoError(t, err)
				return lc.LogL(w)
			}
			h := 1e-6
			fd := (shifted(h) - shifted(-h)) / (2 * h)
			var pred float64
			for i := range nb2 {
				var dmi float64
				for k := range 4 {
					dmi += w[k] * flat.Counts[k*nb2+i] * (dir[k*nb2+i] - 0.7)
				}
				pred += dm[i] * dmi
			}
			assert.InDelta(t, fd, pred, 1e-5*(1+math.Abs(fd)), "%s/%s", norm, noise)
		}
	}
}

// tplExpected returns m_i = Σ_k w_k T_ki in template units (test helper).
func (l *Likelihood) tplExpected(w []float64) []float64 {
	out := make([]float64, l.nb)
	stats.MatVec(l.rows, l.nb, l.k, w, out)
	return out
}

// The deviance of a Barlow–Beeston-lite fit counts each bin's constraint
// term as well as its Poisson term: with fixed normalisation and one age
// bin, bin i's factor has the closed form β = ½[(1 − mδ²) + √((1 − mδ²)² +
// 4nδ²)], δ² = v/m² (Conway 2011, "Incorporating nuisance parameters in
// likelihoods for multisource spectra", eq. for the "lite" case [memory]),
// and the deviance is Σ 2[βm − n + n ln(n/βm)] + (β − 1)²/δ². Templates
// noisy enough for β to absorb the misfit must not read as a perfect fit.
func TestBBLiteDevianceCountsTheConstraint(t *testing.T) {
	sp, err := NewSpace(0.5, 1.5, 2, 1, 100, 2, []float64{0, 100})
	require.NoError(t, err)
	m := []float64{40, 25, 10, 60}
	v := []float64{400, 150, 90, 30} // relative variances 0.25, 0.24, 0.9, 0.0083
	n := []float64{70, 12, 0, 55}
	tpl := &Templates{Space: sp, AgeEdgesGyr: []float64{0, 1}, Counts: m, Var: v, StarsDrawn: 1000, DrawnPerBin: []int64{1000}}
	like, err := NewLikelihood(tpl, n, LikeOptions{Normalisation: NormAbsolute, MassScale: 1, TemplateNoise: NoiseBarlowBeeston})
	require.NoError(t, err)
	rec, err := fitDeviance(like, FitResult{Weights: []float64{1}}, nil)
	require.NoError(t, err)
	var want, poissonOnly float64
	for i := range m {
		d2 := v[i] / (m[i] * m[i])
		a := 1 - m[i]*d2
		beta := 0.5 * (a + math.Sqrt(a*a+4*n[i]*d2))
		mu := beta * m[i]
		p := 2 * mu
		if n[i] > 0 {
			p = 2 * (mu - n[i] + n[i]*math.Log(n[i]/mu))
		}
		poissonOnly += p
		want += p + (beta-1)*(beta-1)/d2
	}
	assert.InDelta(t, want, rec.total, 1e-9*want)
	assert.Greater(t, rec.total, poissonOnly+1, "the constraint terms are counted")
}
