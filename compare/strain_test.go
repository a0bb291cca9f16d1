package compare

import (
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A nuisance parameter is strained when the fit puts it outside its
// gaussian prior's central 95 % (|pull| > 1.96, common practice), or on a
// bound of its range the scenario's value is not on. A node at its upper
// bound of 1 where the scenario put it (no loss) is not strained.
func TestStrains(t *testing.T) {
	nu := &Nuisance{Params: []NuisanceParam{
		{Name: "survey.color_offset_mag", Nominal: 0, Sigma: 0.03, Min: -0.1, Max: 0.1},
		{Name: "spin.barnes2007.a", Nominal: 0.7725, Sigma: 0.011, Min: 0.7, Max: 0.85},
		{Name: "stars.binary_fraction_scale", Nominal: 1, Min: 0, Max: 2},
		{Name: "survey.search_by_rossby.efficiency_12d", Nominal: 1, Min: 0, Max: 1},
		{Name: "survey.search_by_rossby.efficiency_96d", Nominal: 1, Min: 0, Max: 1},
	}}
	f := FitResult{
		NuisanceNames: []string{"survey.color_offset_mag", "spin.barnes2007.a", "stars.binary_fraction_scale",
			"survey.search_by_rossby.efficiency_12d", "survey.search_by_rossby.efficiency_96d"},
		Nuisance: []float64{0.075, 0.7725 - 1.5*0.011, 2, 1, 1e-12},
	}
	got := Strains(f, nu)
	require.Len(t, got, 3)
	assert.Equal(t, "survey.color_offset_mag", got[0].Name)
	assert.InDelta(t, 2.5, got[0].Pull, 1e-12)
	assert.Equal(t, "", got[0].Bound)
	assert.Equal(t, "stars.binary_fraction_scale", got[1].Name)
	assert.Equal(t, "max", got[1].Bound)
	assert.Equal(t, "survey.search_by_rossby.efficiency_96d", got[2].Name)
	assert.Equal(t, "min", got[2].Bound)

	assert.Equal(t, "survey.color_offset_mag = 0.075 (2.5σ from its prior 0 ± 0.03)", got[0].Describe())
	assert.Equal(t, "stars.binary_fraction_scale = 2 (at the top of its range 0–2, scenario value 1)", got[1].Describe())

	// Just inside 1.96σ, and a flat-prior parameter inside its range: none.
	f.Nuisance = []float64{-1.95 * 0.03, 0.7725, 1.98, 0.5, 0.2}
	assert.Empty(t, Strains(f, nu))
	assert.Empty(t, StrainWarning("the with-burst fit", nil, 2))
	assert.Empty(t, Strains(f, nil))
	assert.Equal(t, 2, GaussianPriors(nu))

	// A bound the scenario's value lies next to but not on still counts
	// (the tolerance is for the fitted value only); a value that is not
	// finite is always reported.
	nu.Params[2].Nominal = 1.995
	f.Nuisance = []float64{0, 0.7725, 2, 0.5, 0.2}
	got = Strains(f, nu)
	require.Len(t, got, 1)
	assert.Equal(t, "max", got[0].Bound)
	f.Nuisance = []float64{0, 0.7725, 1, 0.5, math.NaN()}
	got = Strains(f, nu)
	require.Len(t, got, 1)
	assert.Equal(t, "not finite", got[0].Bound)
	assert.Contains(t, got[0].Describe(), "not a finite value")
}

// The warning weighs pulls against chance: with K gaussian priors, one or
// more beyond 1.96σ has probability 1 − 0.95^K (independent pulls; 1 −
// 0.95³ = 14.3 %, worked by hand); with only bounds strained it says
// nothing of chance.
func TestStrainWarningChance(t *testing.T) {
	pull := []Strain{{Name: "survey.color_offset_mag", Value: 0.075, Sigma: 0.03, Pull: 2.5}}
	w := StrainWarning("The with-burst fit", pull, 3)
	assert.True(t, strings.HasPrefix(w, "The with-burst fit strains its nuisance parameters: survey.color_offset_mag = 0.075 (2.5σ from its prior 0 ± 0.03)."), w)
	assert.Contains(t, w, "may be bending them")
	assert.Contains(t, w, "of 3 gaussian priors, one or more beyond 1.96σ by chance alone has probability 14 %")
	bound := []Strain{{Name: "stars.binary_fraction_scale", Value: 2, Nominal: 1, Min: 0, Max: 2, Bound: "max"}}
	assert.NotContains(t, StrainWarning("the fit", bound, 3), "by chance")
}

// A verdict that claims a burst says when its fit strains nuisance
// parameters, naming them; a verdict of no burst does not (there is no
// age to bias).
func TestVerdictCautionsOnStrains(t *testing.T) {
	r := &BurstResult{Replicates: 100, PValue: 0.005, LR: 30, DeltaLogL: 15,
		Strains: []Strain{{Name: "survey.color_offset_mag", Value: 0.075, Sigma: 0.03, Pull: 2.5}}}
	strength, _, _, text := verdict(r)
	require.Equal(t, "moderate", strength)
	assert.Contains(t, text, "Caution: the fit strains survey.color_offset_mag")

	r.PValue = 0.5
	strength, _, _, text = verdict(r)
	require.Equal(t, "none", strength)
	assert.NotContains(t, text, "Caution")
}

// A claimed burst whose fits stopped at their round limit while ln L was
// still rising by more than half a unit a round says so in the verdict;
// one that gained less in its last round, or a verdict of no burst, does
// not.
func TestVerdictCautionsWhenUnconverged(t *testing.T) {
	r := &BurstResult{Replicates: 100, PValue: 0.005, LR: 30, DeltaLogL: 15,
		Smooth: FitResult{Rounds: 12, RoundLimit: true, LastGain: 0.3},
		Burst:  FitResult{Rounds: 12, RoundLimit: true, LastGain: 5.07}}
	strength, _, _, text := verdict(r)
	require.Equal(t, "moderate", strength)
	assert.Contains(t, text, "Caution: the with-burst fit stopped at its limit of 12 expansions with ln L still rising by 5.1 a round")
	assert.NotContains(t, text, "smooth-history fit stopped", "0.3 a round is near enough")

	r.Smooth.LastGain = 2
	_, _, _, text = verdict(r)
	assert.Contains(t, text, "the smooth-history fit stopped at its limit of 12 expansions with ln L still rising by 2.0 a round and the with-burst fit")

	r.Smooth.RoundLimit, r.Burst.RoundLimit = false, false
	_, _, _, text = verdict(r)
	assert.NotContains(t, text, "Caution")

	r.Burst.RoundLimit, r.PValue = true, 0.5
	strength, _, _, text = verdict(r)
	require.Equal(t, "none", strength)
	assert.NotContains(t, text, "Caution")
}

// A claimed burst on an edge of its age range is refused: its age is the
// range's. The numbers are of the kind the independent model's smooth
// catalogs gave with the detection held (docs/independent-check.md): a
// burst at the 0.1 Gyr floor, and one at the 3 Gyr edge.
func TestVerdictRefusesBurstAtRangeEdge(t *testing.T) {
	r := &BurstResult{Replicates: 100, PValue: 0.005, LR: 30, DeltaLogL: 15,
		AgeParam: "burst.age_gyr", AgeBounds: [2]float64{0.1, 3},
		Burst: FitResult{Names: []string{"burst.age_gyr", "burst.mass_fraction"}, Theta: []float64{0.1, 0.2}}}
	strength, reason, _, text := verdict(r)
	require.Equal(t, "unreliable", strength)
	assert.Contains(t, reason, "youngest age its range allows (0.1 Gyr)")
	assert.True(t, strings.HasPrefix(text, "No burst is claimed"), text)
	assert.Contains(t, text, "mask_below_age_gyr")
	assert.Contains(t, text, "favours a burst", "the ratio's own reading is kept after the refusal")

	r.Burst.Theta[0] = 0.12 // 0.7 % of the range above the floor: still on it
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)

	r.Burst.Theta[0] = 0.2 // 3.4 % of the range inside it
	strength, reason, _, text = verdict(r)
	assert.Equal(t, "moderate", strength)
	assert.Empty(t, reason)
	assert.NotContains(t, text, "range allows")

	r.Burst.Theta[0] = 3
	strength, reason, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)
	assert.Contains(t, reason, "oldest age its range allows (3 Gyr)")

	r.PValue = 0.03 // weak: a hint on the edge is refused too
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)

	r.PValue = 0.5 // no claim: nothing to refuse
	strength, reason, _, _ = verdict(r)
	require.Equal(t, "none", strength)
	assert.Empty(t, reason)

	r.PValue, r.AgeBounds = 0.005, [2]float64{} // no range known
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "moderate", strength)

	// A misfit larger than the ratio is the first reason given.
	r.AgeBounds = [2]float64{0.1, 3}
	r.PValueQuasi = 0.005
	r.AdequacyBurst = Adequacy{Deviance: 400, ReplicateMean: 227, ReplicateSD: 19, PValue: 0.001, Dispersion: 1.7, Excess: 173, Replicates: 100}
	strength, reason, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)
	assert.Contains(t, reason, "excess deviance 173.0")
	assert.NotContains(t, reason, "range allows", "the misfit's reason, not the edge's")
}

// The adequacy level: the smooth catalog of the independent model whose
// fit passed at p = 0.04 under the old 1 % level, its burst (2Δln L = 24)
// then judged by the plain bootstrap and "moderate", is judged against
// its misfit (excess deviance 43) at 5 % and refused; the same numbers
// with a deviance its replicates reach often (p = 0.2) keep the plain
// verdict. The numbers are that run's (docs/independent-check.md).
func TestVerdictAdequacyLevel(t *testing.T) {
	r := &BurstResult{Replicates: 200, PValue: 0.005, PValueQuasi: 0.005, LR: 24, DeltaLogL: 12, Dispersion: 1.19,
		AdequacyBurst: Adequacy{Deviance: 270, ReplicateMean: 227, ReplicateSD: 19, PValue: 0.04, Dispersion: 1.19, Excess: 43, Replicates: 200}}
	strength, reason, calibration, _ := verdict(r)
	assert.Equal(t, "unreliable", strength)
	assert.Equal(t, "quasi-likelihood", calibration)
	assert.Contains(t, reason, "excess deviance 43.0")

	r.AdequacyBurst.PValue = 0.2
	strength, _, calibration, _ = verdict(r)
	assert.Equal(t, "moderate", strength)
	assert.Equal(t, "bootstrap", calibration)
}

// A claimed burst whose age's 95 % profile interval spans the whole range
// searched is refused: placed anywhere it gains about as much. The
// numbers are smooth-02's of the independent check with fine age bins
// (2Δln L 53 in the README's table; the profile interval 0.100–3.000 Gyr
// from that run's log, kept outside the repository), with the misfit's
// excess put just below the ratio (52, where the run measured 54) so that
// the misfit rule lets it through; then the same burst with burst-1.17's
// interval (1.202–1.441 Gyr) and with smooth-01's (2.023–3.000, one end
// only), which are kept; then the cases the rule must leave alone or
// word otherwise.
func TestVerdictRefusesUndeterminedAge(t *testing.T) {
	r := &BurstResult{Replicates: 200, PValue: 0.3, PValueQuasi: 0.001, LR: 53, DeltaLogL: 26.5, Dispersion: 1.2,
		AgeParam: "burst.age_gyr", AgeBounds: [2]float64{0.1, 3},
		AgeIntervalProfile: Interval{Best: 2.961, Lo68: 0.1, Hi68: 3, Lo95: 0.1, Hi95: 3},
		AdequacyBurst:      Adequacy{Deviance: 314, ReplicateMean: 262, ReplicateSD: 22, PValue: 0.0029, Dispersion: 1.2, Excess: 52, Replicates: 200},
		Burst:              FitResult{Names: []string{"burst.age_gyr", "burst.mass_fraction"}, Theta: []float64{2.961, 0.05}}}
	strength, reason, calibration, text := verdict(r)
	require.Equal(t, "unreliable", strength)
	assert.Equal(t, "quasi-likelihood", calibration)
	assert.Contains(t, reason, "the burst's age is not determined: its 95 % profile interval, 0.1–3 Gyr, spans the whole range searched")
	assert.True(t, strings.HasPrefix(text, "No burst is claimed"), text)
	assert.Contains(t, text, "the catalog prefers a burst", "the ratio's own reading is kept after the refusal")

	r.AgeIntervalProfile = Interval{Best: 1.289, Lo68: 1.24, Hi68: 1.36, Lo95: 1.202, Hi95: 1.441}
	r.Burst.Theta[0] = 1.289
	strength, reason, _, _ = verdict(r)
	assert.Equal(t, "strong", strength)
	assert.Empty(t, reason)

	r.AgeIntervalProfile = Interval{Best: 2.512, Lo68: 2.3, Hi68: 2.8, Lo95: 2.023, Hi95: 3}
	r.Burst.Theta[0] = 2.512
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "strong", strength, "an interval open at one end only says the age is poorly known, not undetermined")

	r.AgeIntervalProfile = Interval{Best: 1.5, Lo68: 0.12, Hi68: 2.98, Lo95: 0.12, Hi95: 2.98} // within 1 % of the range of each end
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)

	r.PValueQuasi = 0.03 // weak: a hint whose age is undetermined is refused too
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "unreliable", strength)

	r.PValueQuasi = 0.5 // no claim: nothing to refuse
	strength, reason, _, _ = verdict(r)
	assert.Equal(t, "none", strength)
	assert.Empty(t, reason)

	// An adequate model: judged by the plain bootstrap, the same refusal,
	// and the advice points at the history's family, not at misfit.
	r.PValue, r.AdequacyBurst.PValue = 0.001, 0.3
	strength, reason, calibration, text = verdict(r)
	require.Equal(t, "unreliable", strength)
	assert.Equal(t, "bootstrap", calibration)
	assert.Contains(t, reason, "not determined")
	assert.Contains(t, text, "smooth history's family")
	assert.NotContains(t, text, "misfit spread")

	// The edge rule speaks first when the best age is on an edge too.
	r.Burst.Theta[0] = 3
	_, reason, _, _ = verdict(r)
	assert.Contains(t, reason, "oldest age its range allows")
	r.Burst.Theta[0] = 1.5

	// No profile (NoProfile, or none computed), no range, or NaN bounds:
	// nothing to judge, the claim stands.
	for _, iv := range []Interval{{}, {Lo95: math.NaN(), Hi95: math.NaN()}} {
		r.AgeIntervalProfile = iv
		strength, _, _, _ = verdict(r)
		assert.Equal(t, "strong", strength, "%+v", iv)
	}
	r.AgeIntervalProfile, r.AgeBounds = Interval{Best: 1.5, Lo95: 0.1, Hi95: 3}, [2]float64{}
	strength, _, _, _ = verdict(r)
	assert.Equal(t, "strong", strength, "no range known")
}
