package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// withKernels runs f once with the assembly kernels (when the processor has
// them) and once with the Go loops.
func withKernels(t *testing.T, f func(t *testing.T)) {
	saved := useAsmKernels
	defer func() { useAsmKernels = saved }()
	if haveAVXFMA() {
		useAsmKernels = true
		t.Run("asm", f)
	} else {
		t.Log("processor lacks AVX+FMA: assembly path not exercised")
	}
	useAsmKernels = false
	t.Run("go", f)
}

func TestKernelsAgainstNaiveLoops(t *testing.T) {
	// Common practice, no source: the plain triple loop is the reference;
	// shapes cover every row and column remainder modulo 4.
	withKernels(t, func(t *testing.T) {
		r := rand.New(rand.NewPCG(9, 9))
		for m := 0; m <= 9; m++ {
			for _, k := range []int{1, 2, 3, 4, 5, 7, 8, 9, 40, 41} {
				a := make([]float64, m*k)
				for i := range a {
					a[i] = r.NormFloat64()
				}
				x := make([]float64, k)
				for i := range x {
					x[i] = r.NormFloat64()
				}
				c := make([]float64, m)
				for i := range c {
					c[i] = r.NormFloat64()
				}
				y := make([]float64, m+1)
				y[m] = 12345 // sentinel past the end
				gemvRows(a, m, k, x, y[:m])
				g := make([]float64, k+1)
				g[k] = 54321
				for j := 0; j < k; j++ {
					g[j] = float64(j)
				}
				gemvRowsTAdd(a, m, k, c, g[:k])
				for i := 0; i < m; i++ {
					var want float64
					for j := 0; j < k; j++ {
						want += a[i*k+j] * x[j]
					}
					require.InDelta(t, want, y[i], 1e-12, "m=%d k=%d row %d", m, k, i)
				}
				for j := 0; j < k; j++ {
					want := float64(j)
					for i := 0; i < m; i++ {
						want += c[i] * a[i*k+j]
					}
					require.InDelta(t, want, g[j], 1e-12, "m=%d k=%d col %d", m, k, j)
				}
				require.Equal(t, 12345.0, y[m], "gemvRows wrote past y")
				require.Equal(t, 54321.0, g[k], "gemvRowsTAdd wrote past g")
			}
		}
	})
}

func TestMixtureBothKernels(t *testing.T) {
	w, tm, n := benchMixture(13, 203, 0.25)
	want := PoissonLogL(explicitMu(w, tm, len(n)), n)
	withKernels(t, func(t *testing.T) {
		grad := make([]float64, len(w))
		relClose(t, want, MixtureLogLGrad(grad, w, tm, n), 1e-13, 1)
		g2 := make([]float64, len(w))
		relClose(t, want, NewMixture(tm, len(w), n).LogLGrad(g2, w), 1e-13, 1)
		for j := range grad {
			relClose(t, grad[j], g2[j], 1e-11, 1)
		}
	})
}

func TestBlockTermsAgainstMathLog(t *testing.T) {
	// Common practice, no source: math.Log is the reference; the vector
	// logarithm follows the same algorithm, so per-term agreement is to an
	// ulp or two.
	withKernels(t, func(t *testing.T) {
		r := rand.New(rand.NewPCG(21, 22))
		for trial := 0; trial < 200; trial++ {
			m := 1 + r.IntN(70)
			mu := make([]float64, m)
			n := make([]float64, m)
			for i := range mu {
				mu[i] = math.Exp(r.Float64()*1380 - 690) // 1e-300 … 1e300
				if trial%3 == 0 {
					mu[i] = 1 + (r.Float64()-0.5)*1e-6 // near 1, ln μ small
				}
				if r.IntN(4) > 0 {
					n[i] = float64(r.IntN(50))
				}
			}
			var wantLog, wantMu, scale float64
			wantC := make([]float64, m)
			for i, v := range mu {
				wantMu += v
				wantC[i] = -1
				if n[i] != 0 {
					wantLog += n[i] * math.Log(v)
					scale += math.Abs(n[i] * math.Log(v))
					wantC[i] = n[i]/v - 1
				}
			}
			got := append([]float64(nil), mu...)
			sl, sm, ok := blockTerms(got, n, 1)
			require.True(t, ok)
			require.InDelta(t, wantLog, sl, 4e-16*scale+1e-300, "trial %d", trial)
			require.InDelta(t, wantMu, sm, 1e-15*wantMu)
			for i := range got {
				require.InDelta(t, wantC[i], got[i], 1e-15*math.Abs(wantC[i]), "trial %d bin %d", trial, i)
			}
		}
	})
}

func TestMixtureUnusualExpectations(t *testing.T) {
	// Zero expectation in empty bins, a subnormal expectation in a
	// non-empty bin (the fast path declines it, the plain loop takes it),
	// and zero expectation in a non-empty bin (outside the domain).
	withKernels(t, func(t *testing.T) {
		const nb = 9
		w := []float64{1, 1}
		tm := make([]float64, nb*2)
		n := make([]float64, nb)
		for i := 0; i < nb; i++ {
			tm[2*i], tm[2*i+1] = float64(i), 0.5
			n[i] = float64(i % 3)
		}
		tm[0], tm[1] = 0, 0 // bin 0: μ = 0, n = 0
		tm[2], tm[3] = 1e-310, 0
		n[1] = 2 // bin 1: subnormal μ, n = 2
		want := PoissonLogL(explicitMu(w, tm, nb), n)
		require.False(t, math.IsInf(want, 0))
		grad := make([]float64, 2)
		relClose(t, want, MixtureLogLGrad(grad, w, tm, n), 1e-13, 1)
		relClose(t, want, NewMixture(tm, 2, n).LogL(w), 1e-13, 1)
		n[0] = 1 // now a star where the model has none
		require.True(t, math.IsInf(MixtureLogLGrad(grad, w, tm, n), -1))
		require.True(t, math.IsNaN(grad[1]))
	})
}

// The exported wrappers check their slices and reach the same kernels:
// against the plain loops and math.Log (common practice, no source).
func TestExportedKernels(t *testing.T) {
	withKernels(t, func(t *testing.T) {
		r := rand.New(rand.NewPCG(4, 2))
		const m, k = 37, 11
		a := make([]float64, m*k)
		for i := range a {
			a[i] = r.Float64()
		}
		x, c := make([]float64, k), make([]float64, m)
		for i := range x {
			x[i] = r.Float64()
		}
		for i := range c {
			c[i] = r.NormFloat64()
		}
		y := make([]float64, m)
		MatVec(a, m, k, x, y)
		g := make([]float64, k)
		for j := range g {
			g[j] = 1
		}
		MatTVecAdd(a, m, k, c, g)
		for i := range m {
			want := 0.0
			for j := range k {
				want += a[i*k+j] * x[j]
			}
			require.InDelta(t, want, y[i], 1e-12)
		}
		for j := range k {
			want := 1.0
			for i := range m {
				want += c[i] * a[i*k+j]
			}
			require.InDelta(t, want, g[j], 1e-12)
		}

		mu, n := make([]float64, m), make([]float64, m)
		var wantLog, wantSum float64
		for i := range mu {
			mu[i] = 0.1 + 10*r.Float64()
			if i%3 != 0 {
				n[i] = float64(1 + i%5)
				wantLog += n[i] * math.Log(mu[i])
			}
			wantSum += mu[i]
		}
		orig := append([]float64(nil), mu...)
		sl, sm, ok := LogTerms(mu, n, 0.5)
		require.True(t, ok)
		require.InDelta(t, wantLog, sl, 1e-12*math.Abs(wantLog))
		require.InDelta(t, wantSum, sm, 1e-12*wantSum)
		for i := range mu {
			require.InDelta(t, n[i]/orig[i]-0.5, mu[i], 1e-12, "bin %d", i)
		}
		mu[5], n[5] = 0, 2 // a non-empty bin with no expectation
		_, _, ok = LogTerms(mu, n, 0)
		require.False(t, ok)

		require.Panics(t, func() { MatVec(a, m, k, x[:k-1], y) })
		require.Panics(t, func() { MatTVecAdd(a[:m*k-1], m, k, c, g) })
		require.Panics(t, func() { LogTerms(mu, n[:m-1], 0) })
	})
}
