package compare

import (
	"context"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/sfh"
)

// A joint fit stopped after one expansion is not at the maximum; the
// profile of the burst age on its expansion rises above it, and the joint
// fit from that peak (exact templates) replaces it with a better answer,
// nearer the truth, keeping the old one among OtherMaxima. A
// fit the profile cannot improve on comes back unchanged. Common practice, no source: a maximum found by
// a search is checked by searching again from the best point another
// method found.
func TestConfirmProfilePeak(t *testing.T) {
	nu, m, like := offNominalBurst(t)
	ctx := context.Background()

	short, err := FitJoint(ctx, like, m, nu, FitOptions{Starts: 3, MaxRounds: 1})
	require.NoError(t, err)
	got, rejected, err := confirmProfilePeak(ctx, like, m, nu, short, "burst.age_gyr", FitOptions{})
	require.NoError(t, err)
	t.Logf("one expansion: age %.4f, ln L %.3f → confirmed: age %.4f, ln L %.3f", short.Theta[0], short.LogL, got.Theta[0], got.LogL)
	assert.Greater(t, got.LogL, short.LogL+peakTol, "a better maximum was found")
	assert.Empty(t, rejected)
	for i := 1; i < len(got.OtherMaxima); i++ {
		assert.GreaterOrEqual(t, got.OtherMaxima[i-1].LogL, got.OtherMaxima[i].LogL, "other maxima best first")
	}
	assert.Less(t, abs(got.Theta[0]-0.6), abs(short.Theta[0]-0.6), "nearer the true age")
	kept := false
	for _, o := range got.OtherMaxima {
		kept = kept || o.LogL == short.LogL
	}
	assert.True(t, kept, "the replaced fit is kept among OtherMaxima")
	assert.InDelta(t, got.LogLData(), like.LogL(got.Weights), 1e-6, "like is left on the answer's exact templates")

	// At the confirmed answer the profile rises no further: unchanged.
	again, _, err := confirmProfilePeak(ctx, like, m, nu, got, "burst.age_gyr", FitOptions{})
	require.NoError(t, err)
	assert.Equal(t, got.LogL, again.LogL)
	assert.Equal(t, got.Theta, again.Theta)
	assert.Equal(t, len(got.OtherMaxima), len(again.OtherMaxima))
}

// emptyAway is an Observer whose templates, anywhere but at keep, hold
// no model stars in catalog cell `cell`: what a re-observation far from
// the expansion's centre can do to a cell the data fill.
type emptyAway struct {
	inner Observer
	keep  []float64
	cell  int
}

func (e emptyAway) Observe(ctx context.Context, v []float64) (*Templates, error) {
	t, err := e.inner.Observe(ctx, v)
	if err != nil || slices.Equal(v, e.keep) {
		return t, err
	}
	c := *t
	c.Counts = slices.Clone(t.Counts)
	nb := t.Space.NumBins()
	for k := range len(t.AgeEdgesGyr) - 1 {
		c.Counts[k*nb+e.cell] = 0
	}
	if t.Var != nil {
		c.Var = slices.Clone(t.Var)
		for k := range len(t.AgeEdgesGyr) - 1 {
			c.Var[k*nb+e.cell] = 0
		}
	}
	return &c, nil
}

// A profile peak whose exact templates leave a data star with no model
// star is set aside: the fit comes back unchanged, the peak among the
// points rejected, and no error (a joint fit started from such a point
// once ended a whole check run, first with a worker's panic, then with
// "the likelihood is zero at the start").
func TestConfirmProfilePeakSetsAsideAnUnreachablePeak(t *testing.T) {
	nu, m, like := offNominalBurst(t)
	ctx := context.Background()
	short, err := FitJoint(ctx, like, m, nu, FitOptions{Starts: 3, MaxRounds: 1})
	require.NoError(t, err)
	cell := slices.IndexFunc(like.Counts(), func(n float64) bool { return n > 0 })
	require.GreaterOrEqual(t, cell, 0)
	away := &Nuisance{Params: nu.Params, Source: emptyAway{inner: nu.Source, keep: short.Nuisance, cell: cell}}
	var stages []string
	got, rejected, err := confirmProfilePeak(ctx, like, m, away, short, "burst.age_gyr", FitOptions{Stage: func(s string) { stages = append(stages, s) }})
	require.NoError(t, err)
	require.Len(t, rejected, 1, "the one peak, set aside")
	assert.Equal(t, short.LogL, got.LogL)
	assert.Equal(t, short.Theta, got.Theta)
	assert.Contains(t, strings.Join(stages, "\n"), "leave data stars with no model stars: the point is set aside")
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// In the burst test, a with-burst fit stopped short (one expansion) is
// replaced by the better maximum its age profile leads to, and the smooth
// fit, stopped short as well, gets its own second search from the nuisance
// values found there: neither hypothesis ends below its one-expansion
// fit, and the ratio is taken between the two second searches.
func TestBurstTestSecondSearchForBoth(t *testing.T) {
	nu, m, like := offNominalBurst(t)
	h, err := sfh.New(10, []sfh.Part{
		{Name: "flat", Component: sfh.Constant{}, Weight: 1},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 0.6, WidthGyr: 0.05, MassFraction: 0}},
	})
	require.NoError(t, err)
	smooth := HistoryModel{Base: h, AgeEdgesGyr: jointEdges}
	ctx := context.Background()
	opts := FitOptions{Starts: 4, MaxRounds: 1}
	short0, err := FitJoint(ctx, like, smooth, nu, opts)
	require.NoError(t, err)
	res, err := BurstTest(ctx, like, smooth, m, TestOptions{Replicates: 3, Seed: 1, Workers: 2, NoEvidence: true, Nuisance: nu, MaxRounds: 1})
	require.NoError(t, err)
	t.Logf("smooth: one expansion ln L %.3f, in the test %.3f; with burst %.3f at age %.4f", short0.LogL, res.Smooth.LogL, res.Burst.LogL, res.Burst.Theta[0])
	assert.InDelta(t, 0.6, res.Burst.Theta[0], 0.005, "the confirmed burst age")
	assert.Greater(t, res.Smooth.LogL, short0.LogL+peakTol, "the smooth fit's second search found more")
	assert.NotEmpty(t, res.Smooth.OtherMaxima, "the first search's answer is kept")
	assert.InDelta(t, 2*(res.Burst.LogL-res.Smooth.LogL), res.LR, 1e-9)
}

// The burst-age refits on a fit with nuisance parameters (refitted on its
// expansion) give the same ages on one worker as on two.
func TestAgeBootstrapSameOnAnyThreadsWithNuisance(t *testing.T) {
	nu, m, like := offNominalBurst(t)
	ctx := context.Background()
	f, err := FitJoint(ctx, like, m, nu, FitOptions{Starts: 3})
	require.NoError(t, err)
	opts := TestOptions{Seed: 4, Workers: 1, ReplicateStarts: 2, Nuisance: nu}
	one, err := ageBootstrap(ctx, like, m, f, 0, 8, opts)
	require.NoError(t, err)
	opts.Workers = 2
	two, err := ageBootstrap(ctx, like, m, f, 0, 8, opts)
	require.NoError(t, err)
	assert.Equal(t, one.Ages, two.Ages)
	assert.Greater(t, one.Hi95-one.Lo95, 0.0, "the refits scatter")
	assert.InDelta(t, 0.6, one.Median, 0.02)
}

// offNominalBurst is the joint setup's nuisance model, its burst model and
// noise-free data made at jointTrueNu (the templates at the nominal
// values).
func offNominalBurst(t *testing.T) (*Nuisance, HistoryModel, *Likelihood) {
	nu, m, like, _, _ := newJointSetup(t).shifted(t)
	return nu, m, like
}

// A comparison of alternatives searches each as the burst test searches
// its hypotheses: the with-burst alternative, stopped short after one
// expansion, is checked against its burst-age profile and lands on the
// better maximum at the true age; the smooth alternative, stopped short
// too, gets a second search from the with-burst fit's nuisance values;
// the pair's ratio is taken between the two final fits. Without the
// checks both stay at their one-expansion answers. Common practice, no
// source: a maximum is checked by searching again from the best point
// another search found.
func TestAlternativesSearchedAsThoroughlyAsTheBurstTest(t *testing.T) {
	nu, m, _, nominal, data := newJointSetup(t).shifted(t)
	h, err := sfh.New(10, []sfh.Part{
		{Name: "flat", Component: sfh.Constant{}, Weight: 1},
		{Name: "burst", Component: sfh.Burst{AgeGyr: 0.6, WidthGyr: 0.05, MassFraction: 0}},
	})
	require.NoError(t, err)
	smooth := HistoryModel{Base: h, AgeEdgesGyr: jointEdges}
	likes := make([]*Likelihood, 2)
	for i := range likes {
		likes[i], err = NewLikelihood(nominal, data, LikeOptions{TemplateNoise: NoiseIgnore})
		require.NoError(t, err)
	}
	ctx := context.Background()
	one := FitOptions{Starts: 4, MaxRounds: 1}
	short0, err := FitJoint(ctx, likes[0], smooth, nu, one)
	require.NoError(t, err)
	short1, err := FitJoint(ctx, likes[1], m, nu, one)
	require.NoError(t, err)

	assert.Equal(t, []string{"burst.age_gyr"}, distinguishingAges([]Alternative{{History: smooth}, {History: m}}, 1))
	assert.Empty(t, distinguishingAges([]Alternative{{History: smooth}, {History: m}}, 0))
	assert.Empty(t, distinguishingAges([]Alternative{{History: m}, {History: m}}, 0), "an age every alternative frees sets none apart")

	res, err := CompareAlternatives(ctx, []Alternative{
		{Name: "smooth", Like: likes[0], History: smooth, Nuisance: nu},
		{Name: "burst", Like: likes[1], History: m, Nuisance: nu},
	}, AltOptions{Replicates: 3, Seed: 1, Workers: 2, NoEvidence: true, MaxRounds: 1})
	require.NoError(t, err)
	f0, f1 := res.Fits[0].Fit, res.Fits[1].Fit
	t.Logf("smooth: one expansion ln L %.3f, compared %.3f; burst: %.3f at %.4f, compared %.3f at %.4f",
		short0.LogL, f0.LogL, short1.LogL, short1.Theta[0], f1.LogL, f1.Theta[0])
	assert.Greater(t, f1.LogL, short1.LogL+peakTol, "the burst fit was checked against its age profile")
	assert.InDelta(t, 0.6, f1.Theta[0], 0.005, "the confirmed burst age")
	assert.Greater(t, f0.LogL, short0.LogL+peakTol, "the smooth fit's second search found more")
	assert.NotEmpty(t, f0.OtherMaxima, "the first search's answer is kept")
	require.Len(t, res.Pairs, 1)
	assert.InDelta(t, 2*(f1.LogL-f0.LogL), res.Pairs[0].LR, 1e-9)
}

// A second search starts from another alternative's nuisance values only
// when they lie in this one's box and it frees all of them (by name, in
// any order); what it frees besides starts at its scenario value.
func TestNuisanceStartFrom(t *testing.T) {
	a := &Nuisance{Params: []NuisanceParam{{Name: "spin.a", Min: 0.6, Max: 0.95, Nominal: 0.77}, {Name: "survey.color_offset_mag", Min: -0.05, Max: 0.05}}}
	b := &Nuisance{Params: slices.Clone(a.Params)}
	start, ok := nuisanceStartFrom(a, b, []float64{0.8, 0.02})
	require.True(t, ok)
	assert.Equal(t, []float64{0.8, 0.02}, start)
	b.Params = []NuisanceParam{a.Params[1], a.Params[0]}
	start, ok = nuisanceStartFrom(a, b, []float64{0.02, 0.8})
	require.True(t, ok, "another order")
	assert.Equal(t, []float64{0.8, 0.02}, start)
	start, ok = nuisanceStartFrom(a, &Nuisance{Params: a.Params[1:]}, []float64{0.03})
	require.True(t, ok, "a frees more: the rest at its scenario value")
	assert.Equal(t, []float64{0.77, 0.03}, start)
	_, ok = nuisanceStartFrom(&Nuisance{Params: a.Params[1:]}, a, []float64{0.8, 0.02})
	assert.False(t, ok, "a frees less: the start would not be b's answer")
	b.Params = slices.Clone(a.Params)
	b.Params[1].Max = 0.1
	_, ok = nuisanceStartFrom(a, b, []float64{0.8, 0.08})
	assert.False(t, ok, "same names, another range")
}
