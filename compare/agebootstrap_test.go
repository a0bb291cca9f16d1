package compare

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/stats"
)

// Where the model is right and the sample large, the refitted burst ages
// of the age bootstrap scatter about the age they were drawn at as the
// profile interval says: the profile's 95 % interval holds about 95 % of
// them and their central 68 % is about as wide as its 68 % interval.
// Source: Wilks (1938), Ann. Math. Stat. 9, 60 — −2Δln L is χ²₁ for one
// parameter, so the profile interval has its nominal coverage
// asymptotically; Efron & Tibshirani (1993), An Introduction to the
// Bootstrap, ch. 6 — the parametric bootstrap's spread estimates the
// estimator's [memory]. Tolerances: a share of 60 refits lies within
// 3.5 binomial σ of 0.95; widths within a factor 1.6 (fixed seeds:
// deterministic).
func TestAgeBootstrapMatchesProfileWhenModelIsRight(t *testing.T) {
	edges := demoEdges()
	tpl := gyroTemplates(t, edges, 23, 30, 1e5, 0.04)
	truth := burstHistory(t, 0.6, 0.05, 0.1)
	w := truth.BinWeights(edges)
	like, err := NewLikelihood(tpl, poissonData(tpl, w, 4000/tpl.totalStars(w), 3), LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	smooth, burst := demoModels(t, edges)
	const n = 60
	res, err := BurstTest(context.Background(), like, smooth, burst, TestOptions{Replicates: 5, Seed: 9, Workers: 2, NoEvidence: true, AgeReplicates: n})
	require.NoError(t, err)
	b := res.AgeBootstrap
	require.Len(t, b.Ages, n)
	assert.Equal(t, res.Burst.Theta[0], b.Truth, "drawn at the with-burst fit")
	p := res.AgeIntervalProfile
	t.Logf("best %.4f, profile 68 %% [%.4f, %.4f] 95 %% [%.4f, %.4f]; refits median %.4f, 68 %% [%.4f, %.4f], 95 %% [%.4f, %.4f]",
		p.Best, p.Lo68, p.Hi68, p.Lo95, p.Hi95, b.Median, b.Lo68, b.Hi68, b.Lo95, b.Hi95)
	held := b.Holds(p.Lo95, p.Hi95)
	assert.InDelta(t, 0.95, held, 3.5*math.Sqrt(0.95*0.05/n), "share of refits inside the profile's 95 %% interval")
	ratio := (b.Hi68 - b.Lo68) / (p.Hi68 - p.Lo68)
	assert.True(t, ratio > 1/1.6 && ratio < 1.6, "refits' 68 %% width / profile's: %.2f", ratio)
	assert.Less(t, math.Abs(b.Bias()), (p.Hi68-p.Lo68)/2, "no bias the size of the 1σ error")

	// Same numbers on one worker, and the likelihood is left on the burst fit.
	one, err := ageBootstrap(context.Background(), like, burst, res.Burst, 0, n, TestOptions{Seed: 9, Workers: 1, ReplicateStarts: 2})
	require.NoError(t, err)
	assert.Equal(t, b.Ages, one.Ages)
	assert.InDelta(t, res.Burst.LogL, like.LogL(res.Burst.Weights), 1e-9)
}

// The refits' quantiles follow the project's rule (Hyndman & Fan 1996,
// Am. Stat. 50, 361, definition 7, R's default [memory]), worked by hand
// for the values the summary test prints; a failed refit (NaN) counts in
// no share.
func TestAgeBootstrapQuantilesByHand(t *testing.T) {
	s := []float64{1.06, 1.1, 1.15, 1.3}
	assert.InDelta(t, 1.125, stats.QuantileSorted(s, 0.5), 1e-12)     // h = 1.5
	assert.InDelta(t, 1.063, stats.QuantileSorted(s, 0.025), 1e-12)   // h = 0.075
	assert.InDelta(t, 1.28875, stats.QuantileSorted(s, 0.975), 1e-12) // h = 2.925
	assert.Equal(t, 1.3, stats.QuantileSorted(s, 1))
	assert.True(t, math.IsNaN(stats.QuantileSorted(nil, 0.5)))
	b := AgeBootstrap{Ages: []float64{0.7, math.NaN(), 0.8, 0.9, 1.2}}
	assert.InDelta(t, 0.5, b.Holds(0.75, 1.0), 1e-12)
	assert.InDelta(t, 0.05, AgeBootstrap{Truth: 1, Median: 1.05}.Bias(), 1e-12)
	assert.True(t, math.IsNaN(AgeBootstrap{}.Holds(0, 1)))
}
