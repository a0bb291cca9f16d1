package compare

import (
	"context"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// BenchmarkFit times one two-parameter burst fit (age, fraction; 4
// starts) at 40 age bins × 23 colors × 30 periods on a 30,000-star mock.
func BenchmarkFit(b *testing.B) {
	edges := demoEdges()
	tpl := gyroTemplates(b, edges, 23, 30, 1e5, 0.04)
	truth := burstHistory(b, 0.6, 0.05, 0.2)
	w := truth.BinWeights(edges)
	data := poissonData(tpl, w, 30000/tpl.totalStars(w), 1)
	_, burst := demoModels(b, edges)
	for _, noise := range []string{NoiseIgnore, NoiseBarlowBeeston} {
		b.Run(noise, func(b *testing.B) {
			like, err := NewLikelihood(tpl, data, LikeOptions{TemplateNoise: noise})
			require.NoError(b, err)
			evals := 0
			for b.Loop() {
				r, err := Fit(like, burst, FitOptions{Starts: 4})
				require.NoError(b, err)
				evals = r.Evaluations
			}
			b.ReportMetric(float64(evals), "evals/fit")
		})
	}
}

// BenchmarkBurstTest1000 is the end-to-end figure: templates of 40 age
// bins from a real population (4 M stars drawn), a 30,000-star mock
// catalog with a 20 % burst at 0.6 Gyr, and a burst test with 1,000
// bootstrap replicates (Barlow–Beeston lite, free normalisation), on all
// cores. Run with -benchtime=1x; the phases are reported as metrics.
func BenchmarkBurstTest1000(b *testing.B) {
	edges := demoEdges()
	truth := burstHistory(b, 0.6, 0.05, 0.2)
	world := newTestWorld(b, truth, edges)
	sp, err := NewSpace(0.45, 1.6, 23, 0.8, 80, 30, nil)
	require.NoError(b, err)
	smooth, burst := demoModels(b, edges)
	for b.Loop() {
		t0 := time.Now()
		tpl, err := BuildTemplates(context.Background(), world.pop, world.binIntegrals(), edges, sp, TemplateOptions{Stars: 4_000_000, Seed: 1})
		require.NoError(b, err)
		t1 := time.Now()
		w := truth.BinWeights(edges)
		data := poissonData(tpl, w, 30000/tpl.totalStars(w), 2)
		like, err := NewLikelihood(tpl, data, LikeOptions{})
		require.NoError(b, err)
		res, err := BurstTest(context.Background(), like, smooth, burst, TestOptions{Replicates: 1000, Seed: 3})
		require.NoError(b, err)
		t2 := time.Now()
		b.ReportMetric(t1.Sub(t0).Seconds(), "s-templates")
		b.ReportMetric(t2.Sub(t1).Seconds(), "s-test")
		b.Logf("%s", res.Verdict)
	}
}

// BenchmarkBuildTemplates reports template-building speed in stars/s.
func BenchmarkBuildTemplates(b *testing.B) {
	edges := demoEdges()
	world := newTestWorld(b, burstHistory(b, 0.6, 0.05, 0.2), edges)
	sp, err := NewSpace(0.45, 1.6, 23, 0.8, 80, 30, []float64{0, 100, 200, 300, 450})
	require.NoError(b, err)
	b.ResetTimer()
	_, err = BuildTemplates(context.Background(), world.pop, world.binIntegrals(), edges, sp, TemplateOptions{Stars: int64(b.N), Seed: 1})
	require.NoError(b, err)
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "stars/s")
}
