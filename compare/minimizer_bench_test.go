package compare

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/optimize"
)

// gonumBFGS is minimizeBFGS's contract on gonum/optimize's BFGS (its
// default line search and convergence tests, the same evaluation budget),
// for BenchmarkFitMinimizers.
func gonumBFGS(fg func(x, g []float64) float64, x0 []float64, maxIter int) ([]float64, float64, bool) {
	var lastX []float64
	var lastF float64
	var lastG []float64
	eval := func(x []float64) {
		if lastX != nil && equalSlices(lastX, x) {
			return
		}
		lastX = append(lastX[:0], x...)
		if lastG == nil {
			lastG = make([]float64, len(x))
		}
		lastF = fg(x, lastG)
	}
	p := optimize.Problem{
		Func: func(x []float64) float64 { eval(x); return lastF },
		Grad: func(g, x []float64) { eval(x); copy(g, lastG) },
	}
	res, err := optimize.Minimize(p, x0, &optimize.Settings{MajorIterations: maxIter, GradientThreshold: 1e-7}, &optimize.BFGS{})
	if res == nil {
		return x0, math.Inf(1), false
	}
	return res.X, res.F, err == nil && res.Status != optimize.IterationLimit
}

func equalSlices(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// BenchmarkFitMinimizers times the burst-model fit of BenchmarkFit with
// the package's BFGS and with gonum/optimize's, and reports the
// likelihood each reaches (the same fit must come out of both).
func BenchmarkFitMinimizers(b *testing.B) {
	edges := demoEdges()
	tpl := gyroTemplates(b, edges, 23, 30, 1e5, 0.04)
	truth := burstHistory(b, 0.6, 0.05, 0.2)
	w := truth.BinWeights(edges)
	data := poissonData(tpl, w, 30000/tpl.totalStars(w), 1)
	_, burst := demoModels(b, edges)
	like, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: NoiseBarlowBeeston})
	require.NoError(b, err)
	for _, m := range []struct {
		name string
		fn   func(func(x, g []float64) float64, []float64, int) ([]float64, float64, bool)
	}{{"own-bfgs", minimizeBFGS}, {"gonum-bfgs", gonumBFGS}} {
		b.Run(m.name, func(b *testing.B) {
			minimize = m.fn
			defer func() { minimize = minimizeBFGS }()
			var r FitResult
			for b.Loop() {
				r, err = Fit(like, burst, FitOptions{Starts: 4})
				require.NoError(b, err)
			}
			b.ReportMetric(float64(r.Evaluations), "evals/fit")
			b.ReportMetric(r.LogL, "lnL")
		})
	}
}
