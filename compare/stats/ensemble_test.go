package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// gaussian3 is a correlated 3-D Gaussian with known mean and covariance.
var (
	g3Mean = []float64{1, -2, 0.5}
	g3Cov  = mat.NewSymDense(3, []float64{
		1.0, 0.6, -0.3,
		0.6, 2.0, 0.4,
		-0.3, 0.4, 0.5,
	})
)

func gaussianLogProb(t *testing.T) func([]float64) float64 {
	var chol mat.Cholesky
	require.True(t, chol.Factorize(g3Cov), "covariance must be positive definite")
	var prec mat.SymDense
	require.NoError(t, chol.InverseTo(&prec))
	d := make([]float64, 3)
	return func(x []float64) float64 {
		for i := range d {
			d[i] = x[i] - g3Mean[i]
		}
		v := mat.NewVecDense(3, d)
		return -0.5 * mat.Inner(v, &prec, v)
	}
}

func startBall(r *rand.Rand, walkers, dim int) [][]float64 {
	init := make([][]float64, walkers)
	for w := range init {
		init[w] = make([]float64, dim)
		for i := range init[w] {
			init[w][i] = 0.1 * r.NormFloat64()
		}
	}
	return init
}

func TestEnsembleRecoversGaussian(t *testing.T) {
	r := rand.New(rand.NewPCG(2024, 6))
	const walkers, steps, burn = 32, 4000, 500
	e, err := NewEnsemble(gaussianLogProb(t), startBall(r, walkers, 3), 2)
	require.NoError(t, err)
	calls := 0
	require.NoError(t, e.Run(r, steps, func(done, total int) {
		calls++
		require.Equal(t, steps, total)
	}))
	require.Equal(t, steps, calls)
	require.Equal(t, steps, e.Steps())

	tau, ok := e.AutocorrTime(burn, 5)
	tauMax := 0.0
	for i := range tau {
		assert.True(t, ok[i], "chain long enough for τ of coordinate %d (%g)", i, tau[i])
		tauMax = math.Max(tauMax, tau[i])
	}
	flat, n := e.Flat(burn, 1)
	nEff := float64(n) / tauMax

	mean := make([]float64, 3)
	for s := 0; s < n; s++ {
		for i := range mean {
			mean[i] += flat[s*3+i] / float64(n)
		}
	}
	cov := make([]float64, 9)
	for s := 0; s < n; s++ {
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				cov[i*3+j] += (flat[s*3+i] - mean[i]) * (flat[s*3+j] - mean[j]) / float64(n-1)
			}
		}
	}
	for i := 0; i < 3; i++ {
		// Source: analytic mean of the target; Monte Carlo standard error
		// √(Σ_ii/N_eff) with N_eff = samples/τ (common practice, no source);
		// 5σ tolerance.
		se := math.Sqrt(g3Cov.At(i, i) / nEff)
		assert.InDelta(t, g3Mean[i], mean[i], 5*se, "mean %d", i)
		for j := 0; j < 3; j++ {
			// Source: analytic covariance; standard error of a sample
			// covariance of Gaussian data √((Σ_ii Σ_jj + Σ_ij²)/N_eff)
			// (common practice, no source); 5σ tolerance.
			sij := g3Cov.At(i, j)
			se := math.Sqrt((g3Cov.At(i, i)*g3Cov.At(j, j) + sij*sij) / nEff)
			assert.InDelta(t, sij, cov[i*3+j], 5*se, "cov %d%d", i, j)
		}
	}
	// Common practice, no source: the stretch move with a = 2 accepts a
	// few tenths of proposals on a 3-D Gaussian.
	for w, f := range e.AcceptanceFraction() {
		assert.True(t, f > 0.2 && f < 0.8, "walker %d acceptance %g", w, f)
	}
}

func TestEnsembleDeterministic(t *testing.T) {
	lp := gaussianLogProb(t)
	run := func(seed uint64) *Ensemble {
		r := rand.New(rand.NewPCG(seed, 1))
		e, err := NewEnsemble(lp, startBall(r, 8, 3), 2)
		require.NoError(t, err)
		require.NoError(t, e.Run(r, 200, nil))
		return e
	}
	a, b, c := run(5), run(5), run(6)
	fa, _ := a.Flat(0, 1)
	fb, _ := b.Flat(0, 1)
	fc, _ := c.Flat(0, 1)
	assert.Equal(t, fa, fb, "same seed, same chain")
	assert.NotEqual(t, fa, fc, "different seed, different chain")
	assert.Equal(t, a.LogProb(199, 3), b.LogProb(199, 3))
	assert.Equal(t, a.Position(150, 2), b.Position(150, 2))
}

func TestEnsembleErrors(t *testing.T) {
	lp := func(x []float64) float64 { return -x[0] * x[0] }
	_, err := NewEnsemble(lp, [][]float64{{0, 0}, {1, 1}}, 2)
	require.ErrorContains(t, err, "cannot span")
	_, err = NewEnsemble(lp, [][]float64{{0}, {1}, {2, 3}}, 2)
	require.ErrorContains(t, err, "walker 2 has dimension 2")
	_, err = NewEnsemble(func([]float64) float64 { return math.Inf(-1) }, [][]float64{{0}, {1}}, 2)
	require.ErrorContains(t, err, "walker 0")
	_, err = NewEnsemble(lp, [][]float64{{0}, {1}}, 1)
	require.ErrorContains(t, err, "stretch scale")
	e, err := NewEnsemble(func(x []float64) float64 {
		if x[0] > 5 {
			return math.NaN()
		}
		return -x[0] * x[0]
	}, [][]float64{{4.9}, {4.95}, {4.99}}, 2)
	require.NoError(t, err)
	err = e.Run(rand.New(rand.NewPCG(1, 1)), 1000, nil)
	require.ErrorContains(t, err, "NaN")
}
