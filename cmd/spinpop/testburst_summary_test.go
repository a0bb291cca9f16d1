package main

import (
	"bytes"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"

	"spinpop/compare"
	"spinpop/pipeline"
)

// summaryText is test-burst's printed summary of out.
func summaryText(out *pipeline.BurstOutcome) string {
	var b bytes.Buffer
	printBurstSummary(&b, out)
	return b.String()
}

// A joint fit that stopped at its round limit while still improving is
// said so before any number of the test, naming the fit; fits that
// converged get no such line.
func TestBurstSummaryWarnsOfRoundLimit(t *testing.T) {
	out := &pipeline.BurstOutcome{
		Test: &compare.BurstResult{
			Smooth: compare.FitResult{Rounds: 5, Converged: true},
			Burst:  compare.FitResult{Rounds: 12, RoundLimit: true, LastGain: 3.25},
		},
		Heights: &compare.HeightResult{SplitAgeGyr: 0.8},
	}
	text := summaryText(out)
	assert.Contains(t, text, "warning: the with-burst fit stopped at its limit of 12 expansions while ln L was still rising (by 3.25 in its last)")
	assert.NotContains(t, text, "the smooth-history fit stopped")
	assert.Less(t, strings.Index(text, "warning:"), strings.Index(text, "smooth history: ln L"), "the warning comes first")

	out.Test.Burst.RoundLimit = false
	assert.NotContains(t, summaryText(out), "stopped at its limit")

	// At the limit with a last round that gained less than half a unit
	// (less than the answer's own error): as good as finished, no
	// "still rising (by 0.00)".
	out.Test.Burst.RoundLimit, out.Test.Burst.LastGain = true, 0.004
	assert.NotContains(t, summaryText(out), "stopped at its limit")
}

// A second maximum the data cannot tell from the best, with the burst
// outside the 95 % interval, is said first, with its age.
func TestBurstSummaryWarnsOfRivalAge(t *testing.T) {
	out := &pipeline.BurstOutcome{
		Test: &compare.BurstResult{
			AgeParam: "burst.age_gyr", Dispersion: 1, AgeInterval: compare.Interval{Best: 1.28, Lo95: 1.2, Hi95: 1.36},
			Burst: compare.FitResult{Names: []string{"burst.age_gyr"}, Theta: []float64{1.28}, LogL: -1209.2,
				OtherMaxima: []compare.LocalMaximum{{LogL: -1210.7, Theta: []float64{1.43}}}},
		},
		Heights: &compare.HeightResult{SplitAgeGyr: 0.8},
	}
	text := summaryText(out)
	assert.Contains(t, text, "warning: a second search of the with-burst fit ended 1.50 below the best in ln L")
	assert.Contains(t, text, "with the burst at 1.430 Gyr, outside the 95 % interval")
	assert.Less(t, strings.Index(text, "warning:"), strings.Index(text, "smooth history: ln L"), "the warning comes first")
}

// A with-burst fit that strains a nuisance parameter is said first, with
// the parameter, its value and its prior.
func TestBurstSummaryWarnsOfStrains(t *testing.T) {
	out := &pipeline.BurstOutcome{
		Test:    &compare.BurstResult{Strains: []compare.Strain{{Name: "survey.color_offset_mag", Value: 0.075, Sigma: 0.03, Pull: 2.5}}},
		Heights: &compare.HeightResult{SplitAgeGyr: 0.8},
	}
	text := summaryText(out)
	assert.Contains(t, text, "warning: the with-burst fit strains its nuisance parameters: survey.color_offset_mag = 0.075 (2.5σ from its prior 0 ± 0.03)")
	assert.Less(t, strings.Index(text, "warning:"), strings.Index(text, "smooth history: ln L"), "the warning comes first")

	assert.NotContains(t, text, "the smooth-history fit strains")

	out.Test.Strains = nil
	assert.NotContains(t, summaryText(out), "strains")
	out.Test.StrainsSmooth = []compare.Strain{{Name: "stars.binary_fraction_scale", Value: 2, Nominal: 1, Max: 2, Bound: "max"}}
	assert.Contains(t, summaryText(out), "warning: the smooth-history fit strains its nuisance parameters: stars.binary_fraction_scale = 2 (at the top of its range 0–2, scenario value 1)")
}

// The burst age refitted on mocks of the with-burst fit is printed with
// the share of refits the profile's 95 % interval holds (worked by hand:
// three of four), and a profile peak the exact fit did not confirm is
// said with its age.
func TestBurstSummaryAgeRefitsAndUnconfirmedPeak(t *testing.T) {
	out := &pipeline.BurstOutcome{
		Test: &compare.BurstResult{
			AgeParam: "burst.age_gyr", AgeInterval: compare.Interval{Best: 1.1, Lo95: 0.9, Hi95: 1.4},
			AgeIntervalProfile:    compare.Interval{Best: 1.1, Lo95: 1.05, Hi95: 1.2},
			AgeBootstrap:          compare.AgeBootstrap{Ages: []float64{1.06, 1.1, 1.15, 1.3}, Truth: 1.1, Median: 1.125, Lo95: 1.063, Hi95: 1.289},
			AgeProfileUnconfirmed: 1.21, AgeProfilePeakChecked: true,
		},
		Heights: &compare.HeightResult{SplitAgeGyr: 0.8},
	}
	text := summaryText(out)
	assert.Contains(t, text, "burst age refitted on 4 mocks of the with-burst fit (drawn at 1.100 Gyr): median 1.125 Gyr (bias +0.025), central 95% 1.063–1.289 Gyr; the profile's 95% interval holds 75% of them")
	assert.Contains(t, text, "rose above the fit at 1.210 Gyr and a fit from there with exact templates found nothing better")
	out.Test.AgeProfilePeakChecked = false
	assert.Contains(t, summaryText(out), "rose above the fit at 1.210 Gyr and no fit with exact templates was started there")

	out.Test.AgeBootstrap, out.Test.AgeProfileUnconfirmed = compare.AgeBootstrap{}, 0
	text = summaryText(out)
	assert.NotContains(t, text, "refitted on")
	assert.NotContains(t, text, "rose above the fit")
}

// A burst refused for lying on an edge of its age range is said first as
// a refusal, not as a misfit: the fit described the catalog. A refusal
// for misfit (quasi-likelihood calibration) says both.
func TestBurstSummaryRefusalSaysWhy(t *testing.T) {
	out := &pipeline.BurstOutcome{
		Test: &compare.BurstResult{Strength: "unreliable", Calibration: "bootstrap",
			StrengthReason: "the best burst lies at the youngest age its range allows (0.1 Gyr)"},
		Heights: &compare.HeightResult{SplitAgeGyr: 0.8},
	}
	text := summaryText(out)
	assert.Contains(t, text, "warning: no burst is claimed: the best burst lies at the youngest age its range allows (0.1 Gyr)")
	assert.NotContains(t, text, "do not describe")
	assert.Less(t, strings.Index(text, "warning:"), strings.Index(text, "smooth history: ln L"), "the warning comes first")

	out.Test.Calibration, out.Test.StrengthReason = "quasi-likelihood", "the burst improves the fit by 2Δln L = 24.0, no more than the misfit"
	text = summaryText(out)
	assert.Contains(t, text, "warning: the models do not describe this catalog")
	assert.Contains(t, text, "warning: no burst is claimed: the burst improves the fit")
}
