package pipeline

import (
	"context"
	"fmt"
	"math"

	"spinpop/compare"
	"spinpop/internal/grid"
	"spinpop/model/spin"
)

// BurstOutcome is the burst test with the burst-age profile and the height
// check that go with it.
type BurstOutcome struct {
	Test    *compare.BurstResult
	Profile []compare.ProfilePoint // ln L along the burst age; empty without one
	// ProfileZoom is ln L on a fine grid over the burst age's 95 %
	// interval and a third of its width each side: the part of the
	// profile the interval is read from, which the whole range's grid
	// resolves by a point or two.
	ProfileZoom []compare.ProfilePoint
	Heights     *compare.HeightResult
}

// BurstTest asks whether the catalog demands a burst: both hypotheses
// fitted, the likelihood ratio calibrated by a parametric bootstrap of
// replicates, the burst age profiled, and the young fraction checked
// against height at the fitted burst age's gyrochrone.
func (c *Comparison) BurstTest(ctx context.Context, replicates int, progress func(done, total int)) (*BurstOutcome, error) {
	tr, err := compare.BurstTest(ctx, c.Likelihood, c.Smooth, c.Burst, compare.TestOptions{
		Replicates: replicates, Seed: c.Scenario.Run.Seed, Workers: c.Workers, Progress: progress,
		Nuisance: c.Nuisance, Stage: c.Stage, AgeCalibration: c.ageCalibration(), MaxRounds: c.MaxRounds,
		AgeReplicates: AgeReplicates(replicates),
	})
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted during the bootstrap; no test output was written")
		}
		return nil, err
	}
	out := &BurstOutcome{Test: tr}
	if tr.AgeParam != "" {
		var lo, hi float64
		for _, f := range c.Burst.Free {
			if f.Name == tr.AgeParam {
				lo, hi = f.Min, f.Max
			}
		}
		// The plot's profile holds nuisance parameters at the burst fit's
		// values; the verdict's interval refits them.
		if err := c.Likelihood.UseFit(tr.Burst); err != nil {
			return nil, err
		}
		if out.Profile, _, err = compare.Profile(c.Likelihood, c.Burst, tr.AgeParam, grid.Linspace(lo, hi, 61)); err != nil {
			return nil, err
		}
		if zlo, zhi, ok := ProfileZoomRange(tr.AgeIntervalProfile, lo, hi); ok {
			if out.ProfileZoom, _, err = compare.Profile(c.Likelihood, c.Burst, tr.AgeParam, grid.Linspace(zlo, zhi, 41)); err != nil {
				return nil, err
			}
		}
	}
	split := c.SplitAge(0, tr.Burst)
	if out.Heights, err = c.HeightCheck(split, tr.Smooth, tr.Burst); err != nil {
		return nil, err
	}
	return out, nil
}

// AgeReplicates is how many mocks of the with-burst fit the burst test
// refits to measure the burst age's spread and bias: a quarter of the
// test's replicates, at least 20 (at 200 replicates, 50: the 2.5 and 97.5
// percentiles then rest on one or two refits each, enough to see a spread
// or a bias the size of the profile interval; the refits cost about a
// sixth of the test's).
func AgeReplicates(replicates int) int {
	if replicates <= 0 {
		replicates = compare.DefaultReplicates
	}
	return max(20, replicates/4)
}

// Report is every number of the test, NaN-free for encoding/json, with the
// names of the files written (outputs).
func (r *BurstOutcome) Report(c *Comparison, outputs []string) map[string]any {
	t := r.Test
	fit := func(f compare.FitResult) map[string]any {
		return FitReport(f)
	}
	prof := make([][2]float64, 0, len(r.Profile))
	for _, q := range r.Profile {
		prof = append(prof, [2]float64{q.Value, Finite(q.LogL)})
	}
	return map[string]any{
		"tool": "spinpop", "version": Version, "scenario": c.Source, "scenario_sha256": c.Resolved.Hash(),
		"data":   c.DataSummary(),
		"smooth": fit(t.Smooth), "burst": fit(t.Burst),
		"delta_log_l": Finite(t.DeltaLogL), "lr": Finite(t.LR), "n": t.N,
		"k_smooth": t.KSmooth, "k_burst": t.KBurst,
		"aic_smooth": Finite(t.AICSmooth), "aic_burst": Finite(t.AICBurst), "bic_smooth": Finite(t.BICSmooth), "bic_burst": Finite(t.BICBurst),
		"bootstrap_replicates": t.Replicates, "lr_replicates": FiniteAll(t.LRReplicates),
		"p_value": Finite(t.PValue), "p_value_randomised": Finite(t.PValueRandomised), "significance_sigma": Finite(t.Significance),
		"chernoff_p": Finite(t.ChernoffP), "chernoff_note": t.ChernoffNote,
		"log_bayes_factor": Finite(t.LogBayesFactor), "evidence_params": t.EvidenceParams, "has_evidence": t.HasEvidence, "evidence_note": t.EvidenceNote,
		"age_param": t.AgeParam, "age_interval": t.AgeInterval, "age_profile": prof,
		"age_interval_profile": t.AgeIntervalProfile, "age_calibration_sigma_ln": Finite(t.AgeCalibrationSigma),
		"age_calibration_color_bv": Finite(c.MedianColor()), "rival_ages": rivals(t.RivalAges()),
		"age_bootstrap": ageBootstrapReport(t), "age_profile_unconfirmed": unconfirmedPeak(t),
		"strength": t.Strength, "strength_reason": t.StrengthReason, "calibration": t.Calibration, "verdict": t.Verdict,
		"adequacy_smooth": AdequacyReport(t.AdequacySmooth), "adequacy_burst": AdequacyReport(t.AdequacyBurst),
		"dispersion": Finite(t.Dispersion), "p_value_quasi": Finite(t.PValueQuasi),
		"nuisance_params": c.Nuisance.Names(), "nuisance_strains": StrainsReport(t.Strains), "nuisance_strains_smooth": StrainsReport(t.StrainsSmooth),
		"height_check": HeightReport(r.Heights),
		"outputs":      outputs,
	}
}

// FitReport is one fit's numbers, NaN-free: its parameters by scenario
// path (history and nuisance), ln L, the nuisance constraint terms, how
// many template expansions and likelihood evaluations it took.
func FitReport(f compare.FitResult) map[string]any {
	p := map[string]float64{}
	for i, n := range f.Names {
		p["history."+n] = f.Theta[i]
	}
	for i, n := range f.NuisanceNames {
		p[n] = f.Nuisance[i]
	}
	others := []map[string]any{}
	for _, o := range f.OtherMaxima {
		q := map[string]float64{}
		for i, n := range f.Names {
			q["history."+n] = o.Theta[i]
		}
		for i, n := range f.NuisanceNames {
			q[n] = o.Nuisance[i]
		}
		others = append(others, map[string]any{"params": q, "log_l": Finite(o.LogL), "stopped_at_round_limit": o.RoundLimit, "last_round_gain": Finite(o.LastGain)})
	}
	return map[string]any{"params": p, "log_l": Finite(f.LogL), "log_prior": Finite(f.LogPrior), "expansions": f.Rounds,
		"converged": f.Converged, "stopped_at_round_limit": f.RoundLimit, "last_round_gain": Finite(f.LastGain), "other_maxima": others,
		"evaluations": f.Evaluations, "age_bin_weights": FiniteAll(f.Weights)}
}

// StrainsReport is a fit's strained nuisance parameters for JSON: each
// by name (its scenario path, as in "params"), with its prior's σ and
// pull only for a gaussian prior, and at_bound null unless it is on one.
func StrainsReport(ss []compare.Strain) []map[string]any {
	out := []map[string]any{}
	for _, s := range ss {
		m := map[string]any{"name": s.Name, "value": Finite(s.Value), "scenario_value": Finite(s.Nominal),
			"min": Finite(s.Min), "max": Finite(s.Max), "prior_sigma": nil, "pull_sigma": nil, "at_bound": nil}
		if s.Sigma > 0 {
			m["prior_sigma"], m["pull_sigma"] = Finite(s.Sigma), Finite(s.Pull)
		}
		if s.Bound != "" {
			m["at_bound"] = s.Bound
		}
		out = append(out, m)
	}
	return out
}

// ageBootstrapReport is the burst age refitted on mocks of the with-burst
// fit, for JSON (null when none were drawn).
func ageBootstrapReport(t *compare.BurstResult) map[string]any {
	b := t.AgeBootstrap
	if len(b.Ages) == 0 {
		return nil
	}
	p := t.AgeIntervalProfile
	return map[string]any{"replicates": len(b.Ages), "drawn_at_gyr": Finite(b.Truth), "ages_gyr": FiniteAll(b.Ages),
		"median_gyr": Finite(b.Median), "bias_gyr": Finite(b.Bias()),
		"lo68_gyr": Finite(b.Lo68), "hi68_gyr": Finite(b.Hi68), "lo95_gyr": Finite(b.Lo95), "hi95_gyr": Finite(b.Hi95),
		"share_in_profile_95": Finite(b.Holds(p.Lo95, p.Hi95))}
}

// unconfirmedPeak is BurstResult.AgeProfileUnconfirmed for JSON: null
// when the profile never rose above the fit, or rose where a better fit
// was then found.
func unconfirmedPeak(t *compare.BurstResult) any {
	if t.AgeProfileUnconfirmed > 0 {
		return map[string]any{"age_gyr": Finite(t.AgeProfileUnconfirmed), "checked_with_exact_templates": t.AgeProfilePeakChecked}
	}
	return nil
}

// rivals is RivalAges for JSON.
func rivals(rs []compare.RivalAge) []map[string]any {
	out := []map[string]any{}
	for _, r := range rs {
		out = append(out, map[string]any{"age_gyr": Finite(r.AgeGyr), "delta_log_l": Finite(r.DeltaLogL), "delta_log_l_scaled": Finite(r.ScaledDelta)})
	}
	return out
}

// AdequacyReport is a goodness of fit's numbers, NaN-free.
func AdequacyReport(a compare.Adequacy) map[string]any {
	return map[string]any{
		"deviance": Finite(a.Deviance), "replicate_mean": Finite(a.ReplicateMean), "replicate_sd": Finite(a.ReplicateSD),
		"p_value": Finite(a.PValue), "p_value_normal": Finite(a.PValueNormal), "replicates_exceeding": a.Exceeded,
		"dispersion": Finite(a.Dispersion), "excess": Finite(a.Excess), "replicates": a.Replicates, "regions": a.Regions,
	}
}

// HeightReport is the height check's numbers, NaN-free for encoding/json.
func HeightReport(h *compare.HeightResult) map[string]any {
	hyp := map[string]any{}
	for _, x := range h.Hypotheses {
		hyp[x.Name] = map[string]any{"young_fraction": FiniteAll(x.Fraction), "log_l": Finite(x.LogL)}
	}
	return map[string]any{
		"split_age_gyr": h.SplitAgeGyr, "z_edges_pc": FiniteAll(h.ZEdgesPc), "young": h.Young, "total": h.Total,
		"fraction": FiniteAll(h.Fraction), "lo68": FiniteAll(h.Lo68), "hi68": FiniteAll(h.Hi68), "hypotheses": hyp,
	}
}

// Heights fits both hypotheses and checks the young fraction against
// height at the gyrochrone of splitAgeGyr (0: see SplitAge). It returns
// the two fits too, smooth first (whether they finished: Rounds,
// RoundLimit, LastGain).
func (c *Comparison) Heights(ctx context.Context, splitAgeGyr float64) (*compare.HeightResult, [2]compare.FitResult, error) {
	fs, err := c.Fit(ctx, c.Smooth, nil)
	if err != nil {
		return nil, [2]compare.FitResult{}, err
	}
	fb, err := c.Fit(ctx, c.Burst, fs.Nuisance)
	if err != nil {
		return nil, [2]compare.FitResult{}, err
	}
	h, err := c.HeightCheck(c.SplitAge(splitAgeGyr, fb), fs, fb)
	return h, [2]compare.FitResult{fs, fb}, err
}

// RoundsReport is whether a joint fit finished, for the JSON reports.
func RoundsReport(f compare.FitResult) map[string]any {
	return map[string]any{"rounds": f.Rounds, "stopped_at_round_limit": f.RoundLimit, "last_round_gain": Finite(f.LastGain)}
}

// ProfileZoomRange is a 95 % interval with a third of its width added
// each side, inside [lo, hi]; ok is false when the interval is empty.
// The burst test zooms on the profile's own interval, not on the one
// widened by the law's calibration: that can be ten times wider, and a
// grid across it would draw the profile as a spike.
func ProfileZoomRange(iv compare.Interval, lo, hi float64) (zlo, zhi float64, ok bool) {
	w := iv.Hi95 - iv.Lo95
	if !(w > 0) {
		return 0, 0, false
	}
	return math.Max(lo, iv.Lo95-w/3), math.Min(hi, iv.Hi95+w/3), true
}

// ageCalibration is the burst test's law calibration: the uncertainty of
// ln(age) the scenario's spin-down law carries at the catalog's median
// color (spin.AgeCalibration); nil-safe for laws without one.
func (c *Comparison) ageCalibration() func(ageGyr float64) (float64, bool) {
	law, bv := c.Built.Population.Law, c.MedianColor()
	return func(ageGyr float64) (float64, bool) { return spin.AgeCalibration(law, bv, ageGyr) }
}

// MedianColor returns the median B−V of the compared catalog stars, read
// from the binned counts (linear within the bin that holds it); NaN
// without stars.
func (c *Comparison) MedianColor() float64 {
	sp := c.Likelihood.Space()
	nC := len(sp.ColorEdges) - 1
	n := c.Likelihood.Counts()
	per := len(n) / nC // bins per color column, 2-D or 3-D
	col := make([]float64, nC)
	var tot float64
	for i, v := range n {
		col[i/per] += v
		tot += v
	}
	if !(tot > 0) {
		return math.NaN()
	}
	half, cum := tot/2, 0.0
	for i, v := range col {
		if cum+v >= half && v > 0 {
			return sp.ColorEdges[i] + (half-cum)/v*(sp.ColorEdges[i+1]-sp.ColorEdges[i])
		}
		cum += v
	}
	return sp.ColorEdges[nC]
}
