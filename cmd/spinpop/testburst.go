package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"strings"

	"spinpop/compare"
	"spinpop/internal/figure"
	"spinpop/internal/outset"
	"spinpop/internal/report"
	"spinpop/pipeline"

	"gonum.org/v1/plot/vg"
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
	cf.addRoundsFlag(fs)
	reps := fs.Int("replicates", -1, "bootstrap replicates (default: compare.bootstrap)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "test-burst")
	if err != nil {
		return err
	}
	ctx, stop := signalContext()
	defer stop()
	of := newOutFolder(cf, "test.json", stdout, stderr)
	defer of.close()
	c, err := setupComparison(ctx, path, cf, of, stderr)
	if err != nil {
		return err
	}
	out := of.set
	b := c.Scenario.Compare.Bootstrap
	if *reps >= 0 {
		b = *reps
	}
	res, err := burstTest(ctx, c, b)
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		return err
	}
	outputs, err := writeBurstOutputs(out, "", c, res)
	if err != nil {
		return err
	}
	if _, err := publish(out); err != nil {
		return err
	}
	if *cf.asJSON {
		return printJSON(stdout, res.Report(c, outputs))
	}
	printDataSummary(stdout, c.DataSummary())
	printBurstSummary(stdout, res)
	fmt.Fprintf(stdout, "wrote: %s\n", wordList(outputs))
	return nil
}

// burstTest runs the burst test with a progress bar.
func burstTest(ctx context.Context, c *pipeline.Comparison, replicates int) (*pipeline.BurstOutcome, error) {
	bar := newProgressBar("bootstrap", int64(max(replicates, 1)))
	defer bar.Done()
	return c.BurstTest(ctx, replicates, func(done, total int) { bar.Update(int64(done)) })
}

// writeBurstOutputs writes the test's figures and test.json into the
// output set, under prefix, and returns the names of the set's files.
func writeBurstOutputs(out *outset.Set, prefix string, c *pipeline.Comparison, r *pipeline.BurstOutcome) ([]string, error) {
	like := c.Likelihood
	sp := like.Space()
	data := like.Counts()
	if err := like.UseFit(r.Test.Smooth); err != nil {
		return nil, err
	}
	muS := like.Expected(r.Test.Smooth.Weights, nil)
	if err := like.UseFit(r.Test.Burst); err != nil {
		return nil, err
	}
	muB := like.Expected(r.Test.Burst.Weights, nil)
	grid, err := periodHistsDataModel(sp, data, map[string][]float64{"smooth": muS, "burst": muB}, []string{"smooth", "burst"}, 6)
	if err != nil {
		return nil, err
	}
	if err := writeFigure(out, prefix+"fit_period_histograms.png", grid, 34*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return nil, err
	}
	resid := like.PearsonResiduals(r.Test.Burst.Weights)
	if err := writeFigure(out, prefix+"fit_residuals.png", dataModelResiduals(sp, data, muB, resid, "with burst"), 44*vg.Centimeter, 12*vg.Centimeter); err != nil {
		return nil, err
	}
	dp, err := modelDifferenceMap(sp, muB, muS, "burst", "smooth")
	if err != nil {
		return nil, err
	}
	if err := writeFigure(out, prefix+"fit_difference.png", figure.One(dp), 20*vg.Centimeter, 13*vg.Centimeter); err != nil {
		return nil, err
	}
	if len(r.Profile) > 0 {
		lo, hi := profileRange(c, r)
		g, err := profilePanels(r.Test.AgeParam, r.Profile, r.ProfileZoom, r.Test.AgeIntervalProfile, r.Test.AgeInterval, r.Test.Dispersion, lo, hi, c.Nuisance.Dim() > 0, r.Test.AgeBootstrap.Ages)
		if err != nil {
			return nil, err
		}
		if err := writeFigure(out, prefix+"profile_burst_age.png", g, 30*vg.Centimeter, 11*vg.Centimeter); err != nil {
			return nil, err
		}
	}
	bp, err := bootstrapPlot(r.Test.LR, r.Test.LRReplicates, "fitted smooth history")
	if err != nil {
		return nil, err
	}
	if err := writePlot(out, prefix+"bootstrap.png", bp, 20*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return nil, err
	}
	hp, err := heightPlotFit(r.Heights)
	if err != nil {
		return nil, err
	}
	if err := writePlot(out, prefix+"height_check.png", hp, 22*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return nil, err
	}
	var outputs []string // the names in the test's own folder
	for _, n := range append(out.Names(), prefix+"test.json", prefix+reportFile) {
		if rel, ok := strings.CutPrefix(n, prefix); ok {
			outputs = append(outputs, rel)
		}
	}
	if err := writeJSON(out, prefix+"test.json", r.Report(c, outputs)); err != nil {
		return nil, err
	}
	return outputs, writeBurstReport(out, prefix, c, r, outputs)
}

// writeBurstReport writes the burst test's report.html: the verdict and
// both models' goodness of fit first.
func writeBurstReport(out *outset.Set, prefix string, c *pipeline.Comparison, r *pipeline.BurstOutcome, outputs []string) error {
	t := r.Test
	rep := newReport("test-burst", "does the catalog demand a burst?", c.Resolved, strings.Join(c.Resolved.Files, " ← "))
	rep.Verdict = report.Line{Text: t.Verdict, Tone: strengthTone(t.Strength, t.Calibration)}
	rep.Adequacy = []report.Line{adequacyLine("The smooth history", t.AdequacySmooth), adequacyLine("The history with a burst", t.AdequacyBurst)}
	if t.StrengthReason != "" {
		rep.Warnings = append(rep.Warnings, t.StrengthReason)
	}
	for _, f := range []struct {
		name    string
		strains []compare.Strain
	}{{"The with-burst fit", t.Strains}, {"The smooth-history fit", t.StrainsSmooth}} {
		if w := compare.StrainWarning(f.name, f.strains, t.GaussianPriors); w != "" {
			rep.Warnings = append(rep.Warnings, w+".")
		}
	}
	rep.Data = reportData(c.DataSummary())
	rows := []report.Row{
		row("ln L, smooth history", fmt.Sprintf("%.2f", t.Smooth.LogL), fmt.Sprintf("%d free parameters", t.KSmooth)),
		row("ln L, with burst", fmt.Sprintf("%.2f", t.Burst.LogL), fmt.Sprintf("%d free parameters", t.KBurst)),
		row("likelihood ratio 2Δln L", fmt.Sprintf("%.2f", t.LR), ""),
		row("bootstrap p-value", fmt.Sprintf("%.4g", t.PValue), fmt.Sprintf("%d replicates; %.1fσ", t.Replicates, t.Significance)),
		row("ΔAIC, ΔBIC (burst − smooth)", fmt.Sprintf("%.1f, %.1f", t.AICBurst-t.AICSmooth, t.BICBurst-t.BICSmooth), "negative favours the burst"),
	}
	if t.HasEvidence {
		rows = append(rows, row("ln Bayes factor (burst/smooth)", fmt.Sprintf("%.2f", t.LogBayesFactor), t.EvidenceNote))
	}
	if t.AgeParam != "" {
		iv := t.AgeInterval
		rows = append(rows, row("burst age", fmt.Sprintf("%.3f Gyr", iv.Best), ageIntervalText(t)))
		if b := t.AgeBootstrap; len(b.Ages) > 0 {
			rows = append(rows, row("burst age refitted on mocks of the fit", fmt.Sprintf("%.3f Gyr", b.Median),
				fmt.Sprintf("median of %d; central 95%% %.3f–%.3f Gyr; drawn at %.3f Gyr", len(b.Ages), b.Lo95, b.Hi95, b.Truth)))
		}
	}
	for i, n := range t.Burst.Names {
		rows = append(rows, row("history."+n, fmt.Sprintf("%.4g", t.Burst.Theta[i]), "best fit with the burst"))
	}
	for i, n := range t.Burst.NuisanceNames {
		rows = append(rows, row(n, fmt.Sprintf("%.4g | %.4g", t.Smooth.Nuisance[i], t.Burst.Nuisance[i]), "nuisance parameter: smooth | with burst"))
	}
	rep.Tables = []report.Table{{Title: "The test", Rows: rows}}
	var sum strings.Builder
	printDataSummary(&sum, c.DataSummary())
	printBurstSummary(&sum, r)
	rep.Summary = sum.String()
	rep.Figures = figures(outputs, captions, "fit_residuals.png", "fit_difference.png", "fit_period_histograms.png",
		"profile_burst_age.png", "bootstrap.png", "height_check.png")
	rep.Outputs = otherOutputs(outputs, rep.Figures)
	return writeReport(out, prefix, rep)
}

// profileRange is the range the fit may choose for the profiled
// parameter (its [[compare.free]] bounds), or the profile's own span.
func profileRange(c *pipeline.Comparison, r *pipeline.BurstOutcome) (lo, hi float64) {
	for _, f := range c.Burst.Free {
		if f.Name == r.Test.AgeParam {
			return f.Min, f.Max
		}
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, q := range r.Profile {
		lo, hi = math.Min(lo, q.Value), math.Max(hi, q.Value)
	}
	return lo, hi
}

func printBurstSummary(w io.Writer, r *pipeline.BurstOutcome) {
	t := r.Test
	if t.Calibration == "quasi-likelihood" {
		fmt.Fprintf(w, "\nwarning: the models do not describe this catalog (deviance %.0f where counting noise gives %.0f ± %.0f); read the verdict at the end first\n",
			t.AdequacyBurst.Deviance, t.AdequacyBurst.ReplicateMean, t.AdequacyBurst.ReplicateSD)
	}
	if t.Strength == "unreliable" {
		fmt.Fprintf(w, "\nwarning: no burst is claimed: %s\n", t.StrengthReason)
	}
	warnRoundLimits(w, []string{"smooth-history fit", "with-burst fit"}, []compare.FitResult{t.Smooth, t.Burst})
	for _, f := range []struct {
		name    string
		strains []compare.Strain
	}{{"the with-burst fit", t.Strains}, {"the smooth-history fit", t.StrainsSmooth}} {
		if s := compare.StrainWarning(f.name, f.strains, t.GaussianPriors); s != "" {
			fmt.Fprintf(w, "warning: %s\n", s)
		}
	}
	for _, r := range t.RivalAges() {
		fmt.Fprintf(w, "warning: a second search of the with-burst fit ended %.2f below the best in ln L (%.2f after the dispersion; the 95 %% level is 1.92) with the burst at %.3f Gyr, outside the 95 %% interval: the data cannot tell the two apart, and the interval does not show it\n",
			r.DeltaLogL, r.ScaledDelta, r.AgeGyr)
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
		fmt.Fprintf(w, "ln Bayes factor (burst/smooth) = %.2f over %s (%s)\n", t.LogBayesFactor, wordList(t.EvidenceParams), t.EvidenceNote)
	}
	if t.AgeParam != "" {
		fmt.Fprintf(w, "burst age %.3f Gyr, %s\n", t.AgeInterval.Best, ageIntervalText(t))
		if t.AgeProfileUnconfirmed > 0 {
			how := "a fit from there with exact templates found nothing better"
			if !t.AgeProfilePeakChecked {
				how = "no fit with exact templates was started there"
			}
			fmt.Fprintf(w, "the burst age's profile, drawn on the with-burst fit's expansion, rose above the fit at %.3f Gyr and %s: the best age is the fit's, and the interval is read from the fit's ln L, with ages the expansion puts above it counted inside\n",
				t.AgeProfileUnconfirmed, how)
		}
		if b := t.AgeBootstrap; len(b.Ages) > 0 {
			p := t.AgeIntervalProfile
			fmt.Fprintf(w, "burst age refitted on %d mocks of the with-burst fit (drawn at %.3f Gyr): median %.3f Gyr (bias %+.3f), central 95%% %.3f–%.3f Gyr; the profile's 95%% interval holds %.0f%% of them\n",
				len(b.Ages), b.Truth, b.Median, b.Bias(), b.Lo95, b.Hi95, 100*b.Holds(p.Lo95, p.Hi95))
		}
	}
	h := r.Heights
	fmt.Fprintf(w, "height check (split at the %.2f Gyr gyrochrone):", h.SplitAgeGyr)
	for _, x := range h.Hypotheses {
		fmt.Fprintf(w, " %s ln L = %.1f;", x.Name, x.LogL)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w)
	fmt.Fprintln(w, t.Verdict)
}

// warnRoundLimits says which joint fits stopped at their round limit
// while ln L was still rising: their answers may not be maxima.
func warnRoundLimits(w io.Writer, names []string, fits []compare.FitResult) {
	for i, f := range fits {
		if f.StillRising() {
			fmt.Fprintf(w, "warning: the %s stopped at its limit of %d expansions while ln L was still rising (by %.2f in its last): it may not be the maximum, and what follows is reported where the search stopped (--max-rounds lets it run longer)\n", names[i], f.Rounds, f.LastGain)
		}
	}
}

// ageIntervalText gives the burst age's intervals and what they hold: the
// profile likelihood, and the law's calibration where it is known.
func ageIntervalText(t *compare.BurstResult) string {
	iv, p := t.AgeInterval, t.AgeIntervalProfile
	if !(t.AgeCalibrationSigma > 0) {
		return fmt.Sprintf("68%% %.3f–%.3f, 95%% %.3f–%.3f Gyr (profile likelihood)", iv.Lo68, iv.Hi68, iv.Lo95, iv.Hi95)
	}
	return fmt.Sprintf("68%% %.3f–%.3f, 95%% %.3f–%.3f Gyr (profile likelihood %.3f–%.3f at 95%%, with the spin-down law's calibration, ±%.0f%% in age at 1σ)",
		iv.Lo68, iv.Hi68, iv.Lo95, iv.Hi95, p.Lo95, p.Hi95, 100*t.AgeCalibrationSigma)
}
