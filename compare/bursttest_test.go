package compare

import (
	"context"
	"errors"
	"math"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare/stats"
	"spinpop/sfh"
)

// ksUniform returns the one-sample KS statistic of x against U(0, 1) and
// its p-value (stats.KolmogorovSF, exact for n).
func ksUniform(x []float64) (d, p float64) {
	s := append([]float64(nil), x...)
	slices.Sort(s)
	n := float64(len(s))
	for i, v := range s {
		d = math.Max(d, math.Max(float64(i+1)/n-v, v-float64(i)/n))
	}
	return d, stats.KolmogorovSF(len(s), d)
}

// chernoffSetup is the small calibration problem: 10 age bins × 200
// comparison bins of computed templates; the null is a fixed constant
// history, the alternative adds a burst at a fixed age whose mass
// fraction (one parameter, on its boundary 0 under the null) is fitted.
func chernoffSetup(t testing.TB) (tpl *Templates, smooth, burst HistoryModel) {
	edges := make([]float64, 11)
	for i := range edges {
		edges[i] = float64(i)
	}
	tpl = gyroTemplates(t, edges, 10, 20, 1e4, 0.08)
	h, err := sfh.New(10, []sfh.Part{
		{Name: "smooth", Component: sfh.Constant{}, Weight: 1},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 2.5, WidthGyr: 0.4, MassFraction: 0}},
	})
	require.NoError(t, err)
	smooth = HistoryModel{Base: h, AgeEdgesGyr: edges}
	burst = HistoryModel{Base: h, AgeEdgesGyr: edges, Free: []FreeParam{{Name: "burst.mass_fraction", Min: 0, Max: 0.5}}}
	return tpl, smooth, burst
}

// Under the null the bootstrap p-value is uniform, and the LR follows
// Chernoff's ½χ²₀ + ½χ²₁.
// Source: Chernoff (1954), Ann. Math. Stat. 25, 573 — the boundary law;
// Davison & Hinkley (1997), Bootstrap Methods, §4.2 — Monte Carlo
// p-values with random tie-breaking are exactly uniform under a simple
// null [memory]. Tolerances: KS p-values must exceed 0.001 and binomial
// fractions lie within 3.5σ; the seeds are fixed, so the test is
// deterministic.
func TestBootstrapPValueUniformUnderNull(t *testing.T) {
	tpl, smooth, burst := chernoffSetup(t)
	w, err := smooth.Weights(nil)
	require.NoError(t, err)
	const mocks, reps, nStars = 300, 19, 3000
	base, err := NewLikelihood(tpl, asimov(tpl, w, nStars), LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	mu := base.Expected(w, nil)
	counts := make([]float64, len(mu))
	var pRand, pCons, lrs []float64
	for i := range mocks {
		drawMock(counts, mu, nStars, true, replicateStream(99, i))
		l, err := base.WithCounts(counts)
		require.NoError(t, err)
		res, err := BurstTest(context.Background(), l, smooth, burst, TestOptions{Replicates: reps, Seed: uint64(1000 + i), Workers: 2, NoProfile: true, NoEvidence: true})
		require.NoError(t, err)
		pRand = append(pRand, res.PValueRandomised)
		pCons = append(pCons, res.PValue)
		lrs = append(lrs, res.LR)
	}
	d, p := ksUniform(pRand)
	t.Logf("randomised p: KS D = %.3f, p = %.3f", d, p)
	assert.Greater(t, p, 0.001, "randomised bootstrap p-values are not uniform (KS D = %.3f)", d)

	// The conservative p-value never rejects more often than its level.
	sd := math.Sqrt(0.05 * 0.95 / mocks)
	frac := 0.0
	for _, v := range pCons {
		if v <= 0.05 {
			frac++
		}
	}
	assert.LessOrEqual(t, frac/mocks, 0.05+3.5*sd)

	// Chernoff: half the LRs sit at 0; the rest are χ²₁, so 2·ChernoffSF(LR) is uniform.
	var zeros float64
	var u []float64
	for _, v := range lrs {
		if v <= lrTieTol {
			zeros++
		} else {
			u = append(u, 2*stats.ChernoffSF(v))
		}
	}
	t.Logf("LR = 0 in %.0f of %d mocks", zeros, mocks)
	assert.InDelta(t, 0.5, zeros/mocks, 3.5*math.Sqrt(0.25/mocks))
	d, p = ksUniform(u)
	t.Logf("positive LRs vs χ²₁: KS D = %.3f, p = %.3f", d, p)
	assert.Greater(t, p, 0.001)
}

// BurstTest gives identical numbers for any number of workers, and a
// cancelled context returns its error and no result.
func TestBurstTestDeterministicAndCancellable(t *testing.T) {
	tpl, smooth, burst := chernoffSetup(t)
	w, err := burst.Weights([]float64{0.1})
	require.NoError(t, err)
	like, err := NewLikelihood(tpl, poissonData(tpl, w, 2000/tpl.totalStars(w), 5), LikeOptions{})
	require.NoError(t, err)
	opts := TestOptions{Replicates: 40, Seed: 7, Workers: 1}
	r1, err := BurstTest(context.Background(), like, smooth, burst, opts)
	require.NoError(t, err)
	opts.Workers = 2
	var calls int
	opts.Progress = func(done, total int) { calls++; assert.Equal(t, 40, total) }
	r2, err := BurstTest(context.Background(), like, smooth, burst, opts)
	require.NoError(t, err)
	assert.Equal(t, r1.LRReplicates, r2.LRReplicates)
	assert.Equal(t, r1.PValue, r2.PValue)
	assert.Equal(t, 41, calls, "once when the replicates begin, then after each")
	assert.True(t, r1.HasEvidence)
	assert.NotEmpty(t, r1.Verdict)
	t.Logf("%s (ln B = %.2f; %s)", r1.Verdict, r1.LogBayesFactor, r1.EvidenceNote)

	ctx, cancel := context.WithCancel(context.Background())
	opts.Progress = func(done, total int) {
		if done == 3 {
			cancel()
		}
	}
	r3, err := BurstTest(ctx, like, smooth, burst, opts)
	assert.Nil(t, r3)
	assert.True(t, errors.Is(err, context.Canceled), "got %v", err)
}

// scatterObserver makes computed templates at a nuisance value: the
// period scatter of gyroTemplates.
type scatterObserver struct {
	t     testing.TB
	edges []float64
}

func (o scatterObserver) Observe(_ context.Context, v []float64) (*Templates, error) {
	return gyroTemplates(o.t, o.edges, 10, 20, 1e4, v[0]), nil
}

// With a nuisance parameter fitted under both hypotheses — in the data's
// fits and, on the data fits' expansions, in every replicate — the
// bootstrap p-value stays uniform under the null: the approximation of
// refitting replicates on a fixed expansion does not bias the test.
// Source: Davison & Hinkley (1997), Bootstrap Methods, §4.2 — Monte Carlo
// p-values with random tie-breaking are uniform under the null [memory];
// KS p-value must exceed 0.001 (fixed seeds: deterministic).
func TestBootstrapWithNuisanceUniformUnderNull(t *testing.T) {
	_, smooth, burst := chernoffSetup(t)
	obs := scatterObserver{t: t, edges: smooth.AgeEdgesGyr}
	truth, err := obs.Observe(context.Background(), []float64{0.08})
	require.NoError(t, err)
	nu := &Nuisance{Source: obs, Params: []NuisanceParam{{Name: "scatter", Nominal: 0.07, Min: 0.03, Max: 0.15, Sigma: 0.02}}}
	w, err := smooth.Weights(nil)
	require.NoError(t, err)
	const mocks, reps, nStars = 150, 19, 3000
	base, err := NewLikelihood(truth, asimov(truth, w, nStars), LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	mu := base.Expected(w, nil)
	counts := make([]float64, len(mu))
	var pRand []float64
	var scat []float64
	for i := range mocks {
		drawMock(counts, mu, nStars, true, replicateStream(77, i))
		l, err := base.WithCounts(counts)
		require.NoError(t, err)
		res, err := BurstTest(context.Background(), l, smooth, burst, TestOptions{Replicates: reps, Seed: uint64(500 + i), Workers: 2,
			NoProfile: true, NoEvidence: true, Nuisance: nu})
		require.NoError(t, err)
		pRand = append(pRand, res.PValueRandomised)
		scat = append(scat, res.Smooth.Nuisance[0])
	}
	d, p := ksUniform(pRand)
	t.Logf("randomised p with a nuisance parameter: KS D = %.3f, p = %.3f; fitted scatter %.4f … %.4f (truth 0.08)", d, p, slices.Min(scat), slices.Max(scat))
	assert.Greater(t, p, 0.001)
	var mean float64
	for _, v := range scat {
		mean += v / mocks
	}
	assert.InDelta(t, 0.08, mean, 0.005, "the nuisance parameter is recovered on average")
}

// The burst age's interval: the profile's alone without a law
// calibration, the two combined with one, and a verdict that says so.
func TestAgeIntervalWithCalibration(t *testing.T) {
	iv := Interval{Best: 0.8, Lo68: 0.79, Hi68: 0.81, Lo95: 0.78, Hi95: 0.82}
	var r BurstResult
	r.setAgeInterval(iv, nil)
	assert.Equal(t, iv, r.AgeInterval)
	assert.Equal(t, 0.0, r.AgeCalibrationSigma)
	r.setAgeInterval(iv, func(float64) (float64, bool) { return 0, false })
	assert.Equal(t, iv, r.AgeInterval, "a law without a calibration")
	r.setAgeInterval(iv, func(age float64) (float64, bool) { assert.Equal(t, 0.8, age); return 0.12, true })
	assert.Equal(t, iv, r.AgeIntervalProfile)
	assert.Equal(t, WithCalibration(iv, 0.12), r.AgeInterval)
	assert.Equal(t, 0.12, r.AgeCalibrationSigma)

	r.AgeParam = "burst.age_gyr"
	r.Replicates, r.PValue, r.LR, r.DeltaLogL = 100, 0.001, 40, 20
	_, _, _, text := verdict(&r)
	assert.Contains(t, text, "the spin-down law's calibration, ±12 % in age, included", text)
	assert.Contains(t, text, formatAge(r.AgeInterval), "the verdict quotes the combined interval")
}

// A second maximum of the burst fit is a rival when it lies inside the
// 95 % level of ln L (½χ²₁(0.95) = 1.92, scaled by the dispersion) and
// its burst age outside the 95 % interval; one further down, or one whose
// age the interval holds, is not.
func TestRivalAges(t *testing.T) {
	r := &BurstResult{
		AgeParam:    "burst.age_gyr",
		Dispersion:  1.5,
		AgeInterval: Interval{Best: 1.28, Lo95: 1.2, Hi95: 1.36},
		Burst: FitResult{Names: []string{"burst.width_gyr", "burst.age_gyr"}, LogL: -1209.2, OtherMaxima: []LocalMaximum{
			{LogL: -1210.7, Theta: []float64{0.05, 1.43}}, // Δ 1.5, /1.5 = 1.0: a rival
			{LogL: -1213.2, Theta: []float64{0.05, 0.9}},  // Δ 4.0, /1.5 = 2.67: too far down
			{LogL: -1209.5, Theta: []float64{0.05, 1.3}},  // inside the interval
		}},
	}
	got := r.RivalAges()
	require.Len(t, got, 1)
	assert.InDelta(t, 1.43, got[0].AgeGyr, 1e-12)
	assert.InDelta(t, 1.5, got[0].DeltaLogL, 1e-9)
	assert.InDelta(t, 1.0, got[0].ScaledDelta, 1e-9)

	r.Dispersion = 0.8 // below 1: not scaled (no underdispersion credit)
	r.Burst.OtherMaxima[0].LogL = -1211.2
	assert.Empty(t, r.RivalAges(), "Δ 2.0 > 1.92 unscaled")
}

// TestOptions.MaxRounds bounds the joint fits of the burst test: with one
// expansion allowed, a fit that starts away from the truth stops there
// and says it was still rising, with what that round gained.
func TestBurstTestMaxRounds(t *testing.T) {
	_, smooth, burst := chernoffSetup(t)
	obs := scatterObserver{t: t, edges: smooth.AgeEdgesGyr}
	truth, err := obs.Observe(context.Background(), []float64{0.1})
	require.NoError(t, err)
	nu := &Nuisance{Source: obs, Params: []NuisanceParam{{Name: "scatter", Nominal: 0.05, Min: 0.03, Max: 0.15, Sigma: 0.05}}}
	w, err := smooth.Weights(nil)
	require.NoError(t, err)
	l, err := NewLikelihood(truth, asimov(truth, w, 3000), LikeOptions{TemplateNoise: NoiseIgnore})
	require.NoError(t, err)
	opts := TestOptions{Replicates: 5, Seed: 1, Workers: 2, NoProfile: true, NoEvidence: true, Nuisance: nu, MaxRounds: 1}
	res, err := BurstTest(context.Background(), l, smooth, burst, opts)
	require.NoError(t, err)
	assert.Equal(t, 1, res.Smooth.Rounds)
	assert.True(t, res.Smooth.RoundLimit)
	assert.Greater(t, res.Smooth.LastGain, 0.0)
	assert.LessOrEqual(t, res.Burst.Rounds, 1)

	opts.MaxRounds = 0 // the default lets it finish
	res, err = BurstTest(context.Background(), l, smooth, burst, opts)
	require.NoError(t, err)
	assert.Greater(t, res.Smooth.Rounds, 1)
	assert.False(t, res.Smooth.RoundLimit)
}
