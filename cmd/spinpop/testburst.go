package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"

	"gonum.org/v1/plot/vg"

	"spinpop/compare"
)

func runTestBurst(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("test-burst", "test-burst SCENARIO --out DIR [--replicates N] [--json] [--templates DIR] [--force]",
		"Does the catalog demand a burst in the star-formation history? Fit the scenario's history\n"+
			"without its burst part (smooth) and with it (the parameters in [[compare.free]]), compare\n"+
			"them by the likelihood ratio, AIC and BIC, calibrate the ratio by a parametric bootstrap\n"+
			"under the fitted smooth history (Wilks' theorem fails for a burst of zero size: Chernoff\n"+
			"1954; Protassov et al. 2002), estimate the evidence ratio by grid integration, profile the\n"+
			"burst age, and check the young fraction against height. Needs [data] in the scenario.", stdout)
	cf := addCompareFlags(fs)
	reps := fs.Int("replicates", -1, "bootstrap replicates (default: compare.bootstrap)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "test-burst")
	if err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	c, err := setupComparison(ctx, path, cf, stderr)
	if err != nil {
		return err
	}
	b := c.s.Compare.Bootstrap
	if *reps >= 0 {
		b = *reps
	}
	res, err := burstTest(ctx, c, b, stderr)
	if err != nil {
		return err
	}
	if err := writeBurstOutputs(*cf.out, c, res); err != nil {
		return err
	}
	if *cf.asJSON {
		return printJSON(stdout, res.json(c))
	}
	printDataSummary(stdout, c.dataSummary())
	printBurstSummary(stdout, res)
	fmt.Fprintf(stdout, "wrote: %v\n", res.outputs)
	return nil
}

// burstOutcome gathers the burst test with the profile and height check
// that go with it.
type burstOutcome struct {
	test    *compare.BurstResult
	profile []compare.ProfilePoint
	heights *compare.HeightResult
	outputs []string
}

func burstTest(ctx context.Context, c *comparison, replicates int, stderr io.Writer) (*burstOutcome, error) {
	bar := newProgressBar("bootstrap", int64(max(replicates, 1)))
	tr, err := compare.BurstTest(ctx, c.like, c.smooth, c.burst, compare.TestOptions{
		Replicates: replicates, Seed: c.s.Run.Seed, Workers: c.workers,
		Progress: func(done, total int) { bar.Update(int64(done)) },
		Nuisance: c.nuisance,
		Stage:    func(msg string) { fmt.Fprintf(stderr, "fit: %s\n", msg) },
	})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted during the bootstrap; no test output was written")
		}
		return nil, err
	}
	out := &burstOutcome{test: tr}
	if tr.AgeParam != "" {
		var lo, hi float64
		for _, f := range c.burst.Free {
			if f.Name == tr.AgeParam {
				lo, hi = f.Min, f.Max
			}
		}
		grid := linspace(lo, hi, 61)
		// The plot's profile holds nuisance parameters at the burst fit's
		// values; the interval of the verdict refits them.
		if err := c.like.UseFit(tr.Burst); err != nil {
			return nil, err
		}
		if out.profile, _, err = compare.Profile(c.like, c.burst, tr.AgeParam, grid); err != nil {
			return nil, err
		}
	}
	split := c.splitAge(0, tr.Burst)
	out.heights, err = c.heightCheck(split, tr.Smooth, tr.Burst)
	if err != nil {
		return nil, err
	}
	return out, nil
}

func writeBurstOutputs(dir string, c *comparison, r *burstOutcome) error {
	sp := c.like.Space()
	data := c.like.Counts()
	if err := c.like.UseFit(r.test.Smooth); err != nil {
		return err
	}
	muS := c.like.Expected(r.test.Smooth.Weights, nil)
	if err := c.like.UseFit(r.test.Burst); err != nil {
		return err
	}
	muB := c.like.Expected(r.test.Burst.Weights, nil)
	r.outputs = append(r.outputs, "rejected.csv")
	grid, err := periodHistsDataModel(sp, data, map[string][]float64{"smooth": muS, "burst": muB}, []string{"smooth", "burst"}, 6)
	if err != nil {
		return err
	}
	if err := writeGrid(filepath.Join(dir, "fit_period_histograms.png"), grid, 30*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return err
	}
	resid := c.like.PearsonResiduals(r.test.Burst.Weights)
	if err := writeGrid(filepath.Join(dir, "fit_residuals.png"), dataModelResiduals(sp, data, muB, resid, "with burst"), 36*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return err
	}
	r.outputs = append(r.outputs, "fit_period_histograms.png", "fit_residuals.png")
	if len(r.profile) > 0 {
		p, err := profilePlot(r.test.AgeParam, r.profile, r.test.AgeInterval)
		if err != nil {
			return err
		}
		if err := writePlot(filepath.Join(dir, "profile_burst_age.png"), p, 16*vg.Centimeter, 11*vg.Centimeter); err != nil {
			return err
		}
		r.outputs = append(r.outputs, "profile_burst_age.png")
	}
	bp, err := bootstrapPlot(r.test.LR, r.test.LRReplicates)
	if err != nil {
		return err
	}
	if err := writePlot(filepath.Join(dir, "bootstrap.png"), bp, 16*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return err
	}
	hp, err := heightPlotFit(r.heights)
	if err != nil {
		return err
	}
	if err := writePlot(filepath.Join(dir, "height_check.png"), hp, 16*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return err
	}
	r.outputs = append(r.outputs, "bootstrap.png", "height_check.png", "test.json")
	return writeJSON(filepath.Join(dir, "test.json"), r.json(c))
}

// json is every number of the test, NaN-free for encoding/json.
func (r *burstOutcome) json(c *comparison) map[string]any {
	t := r.test
	fit := func(f compare.FitResult) map[string]any {
		p := map[string]float64{}
		for i, n := range f.Names {
			p["history."+n] = f.Theta[i]
		}
		for i, n := range f.NuisanceNames {
			p[n] = f.Nuisance[i]
		}
		return map[string]any{"params": p, "log_l": finite(f.LogL), "log_prior": finite(f.LogPrior), "expansions": f.Rounds,
			"converged": f.Converged, "evaluations": f.Evaluations, "age_bin_weights": finiteAll(f.Weights)}
	}
	prof := make([][2]float64, 0, len(r.profile))
	for _, q := range r.profile {
		prof = append(prof, [2]float64{q.Value, finite(q.LogL)})
	}
	h := r.heights
	hyp := map[string]any{}
	for _, x := range h.Hypotheses {
		hyp[x.Name] = map[string]any{"young_fraction": finiteAll(x.Fraction), "log_l": finite(x.LogL)}
	}
	return map[string]any{
		"tool": "spinpop", "version": version, "scenario": c.path, "scenario_sha256": c.res.Hash(),
		"data":   c.dataSummary(),
		"smooth": fit(t.Smooth), "burst": fit(t.Burst),
		"delta_log_l": finite(t.DeltaLogL), "lr": finite(t.LR), "n": t.N,
		"k_smooth": t.KSmooth, "k_burst": t.KBurst,
		"aic_smooth": finite(t.AICSmooth), "aic_burst": finite(t.AICBurst), "bic_smooth": finite(t.BICSmooth), "bic_burst": finite(t.BICBurst),
		"bootstrap_replicates": t.Replicates, "lr_replicates": finiteAll(t.LRReplicates),
		"p_value": finite(t.PValue), "p_value_randomised": finite(t.PValueRandomised), "significance_sigma": finite(t.Significance),
		"chernoff_p": finite(t.ChernoffP), "chernoff_note": t.ChernoffNote,
		"log_bayes_factor": finite(t.LogBayesFactor), "evidence_params": t.EvidenceParams, "has_evidence": t.HasEvidence, "evidence_note": t.EvidenceNote,
		"age_param": t.AgeParam, "age_interval": t.AgeInterval, "age_profile": prof,
		"strength": t.Strength, "strength_reason": t.StrengthReason, "calibration": t.Calibration, "verdict": t.Verdict,
		"adequacy_smooth": adequacyJSON(t.AdequacySmooth), "adequacy_burst": adequacyJSON(t.AdequacyBurst),
		"dispersion": finite(t.Dispersion), "p_value_quasi": finite(t.PValueQuasi),
		"nuisance_params": c.nuisance.Names(),
		"height_check": map[string]any{
			"split_age_gyr": h.SplitAgeGyr, "z_edges_pc": finiteAll(h.ZEdgesPc), "young": h.Young, "total": h.Total,
			"fraction": finiteAll(h.Fraction), "lo68": finiteAll(h.Lo68), "hi68": finiteAll(h.Hi68), "hypotheses": hyp,
		},
		"outputs": r.outputs,
	}
}

// adequacyJSON is an Adequacy without NaN.
func adequacyJSON(a compare.Adequacy) map[string]any {
	return map[string]any{
		"deviance": finite(a.Deviance), "replicate_mean": finite(a.ReplicateMean), "replicate_sd": finite(a.ReplicateSD),
		"p_value": finite(a.PValue), "dispersion": finite(a.Dispersion), "excess": finite(a.Excess),
		"replicates": a.Replicates, "regions": a.Regions,
	}
}

// finite maps NaN and ±Inf to JSON-safe values (null is not a float64, so
// NaN becomes 0 only where it means "nothing"): infinite values are capped.
func finite(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return 0
	case math.IsInf(x, 1):
		return math.MaxFloat64
	case math.IsInf(x, -1):
		return -math.MaxFloat64
	}
	return x
}

func finiteAll(x []float64) []any {
	out := make([]any, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			out[i] = nil
		} else {
			out[i] = v
		}
	}
	return out
}

func printBurstSummary(w io.Writer, r *burstOutcome) {
	t := r.test
	if t.Calibration == "quasi-likelihood" || t.Strength == "unreliable" {
		fmt.Fprintf(w, "\nwarning: the models do not describe this catalog (deviance %.0f where counting noise gives %.0f ± %.0f); read the verdict at the end first\n",
			t.AdequacyBurst.Deviance, t.AdequacyBurst.ReplicateMean, t.AdequacyBurst.ReplicateSD)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "smooth history: ln L = %.2f (%d free parameters)\n", t.Smooth.LogL, t.KSmooth)
	fmt.Fprintf(w, "with burst:     ln L = %.2f (%d free parameters)", t.Burst.LogL, t.KBurst)
	for i, n := range t.Burst.Names {
		fmt.Fprintf(w, "; history.%s = %.4g", n, t.Burst.Theta[i])
	}
	fmt.Fprintln(w)
	if len(t.Burst.NuisanceNames) > 0 {
		fmt.Fprint(w, "nuisance parameters (smooth | with burst):")
		for i, n := range t.Burst.NuisanceNames {
			fmt.Fprintf(w, " %s = %.4g | %.4g;", n, t.Smooth.Nuisance[i], t.Burst.Nuisance[i])
		}
		fmt.Fprintln(w)
	}
	for _, a := range []struct {
		name string
		a    compare.Adequacy
	}{{"smooth history", t.AdequacySmooth}, {"with burst", t.AdequacyBurst}} {
		fmt.Fprintf(w, "goodness of fit, %s: deviance %.1f against %.1f ± %.1f from its own replicates (p = %.3g, dispersion %.2f)\n",
			a.name, a.a.Deviance, a.a.ReplicateMean, a.a.ReplicateSD, a.a.PValue, a.a.Dispersion)
	}
	fmt.Fprintf(w, "Δln L = %.2f, LR = %.2f; ΔAIC (burst − smooth) = %.1f, ΔBIC = %.1f\n", t.DeltaLogL, t.LR, t.AICBurst-t.AICSmooth, t.BICBurst-t.BICSmooth)
	fmt.Fprintf(w, "bootstrap p = %.4g from %d replicates (%.1fσ); Chernoff asymptotic p = %.3g (%s)\n", t.PValue, t.Replicates, t.Significance, t.ChernoffP, t.ChernoffNote)
	if t.HasEvidence {
		fmt.Fprintf(w, "ln Bayes factor (burst/smooth) = %.2f over %v (%s)\n", t.LogBayesFactor, t.EvidenceParams, t.EvidenceNote)
	}
	if t.AgeParam != "" {
		iv := t.AgeInterval
		fmt.Fprintf(w, "burst age %.3f Gyr, 68%% %.3f–%.3f, 95%% %.3f–%.3f Gyr (profile likelihood)\n", iv.Best, iv.Lo68, iv.Hi68, iv.Lo95, iv.Hi95)
	}
	h := r.heights
	fmt.Fprintf(w, "height check (split at the %.2f Gyr gyrochrone):", h.SplitAgeGyr)
	for _, x := range h.Hypotheses {
		fmt.Fprintf(w, " %s ln L = %.1f;", x.Name, x.LogL)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w)
	fmt.Fprintln(w, t.Verdict)
}
