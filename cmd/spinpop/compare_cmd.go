package main

import (
	"fmt"
	"io"
	"strings"

	"spinpop/compare"
	"spinpop/internal/report"
	"spinpop/pipeline"

	"gonum.org/v1/plot/vg"
)

func runCompare(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("compare", "compare SCENARIO --out DIR [--fit] [--json] [--templates DIR] [--force]",
		"Score one scenario against its observed catalog: the binned likelihood of the scenario's\n"+
			"star-formation history as written (or, with --fit, at the best-fitting values of the\n"+
			"parameters in [[compare.free]]), Pearson residual maps, period histograms of data and\n"+
			"model per color range, and two-sample Kolmogorov–Smirnov and Anderson–Darling tests of\n"+
			"the period, color and height distributions against a synthetic catalog of the scenario.", stdout)
	cf := addCompareFlags(fs)
	cf.addRoundsFlag(fs)
	doFit := fs.Bool("fit", false, "fit the free parameters first")
	reps := fs.Int("replicates", 200, "bootstrap replicates calibrating the goodness of fit (0: none)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "compare")
	if err != nil {
		return err
	}
	ctx, stop := signalContext()
	defer stop()
	of := newOutFolder(cf, "compare.json", stdout, stderr)
	defer of.close()
	c, err := setupComparison(ctx, path, cf, of, stderr)
	if err != nil {
		return err
	}
	out := of.set
	if *reps < 0 {
		return usageErrorf("--replicates must be ≥ 0")
	}
	var bar *progressBar
	sc, err := c.Score(ctx, pipeline.ScoreOptions{Fit: *doFit, Replicates: *reps, Progress: func(done, total int) {
		if bar == nil {
			bar = newProgressBar("goodness of fit", int64(total))
		}
		bar.Update(int64(done))
	}})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		return err
	}
	name := c.Scenario.Name
	sp := c.Likelihood.Space()
	if err := writeFigure(out, "residuals.png", dataModelResiduals(sp, sc.Counts, sc.Mu, sc.Resid, name+", "+sc.Label), 44*vg.Centimeter, 12*vg.Centimeter); err != nil {
		return err
	}
	grid, err := periodHistsDataModel(sp, sc.Counts, map[string][]float64{name: sc.Mu}, []string{name}, 6)
	if err != nil {
		return err
	}
	if err := writeFigure(out, "period_histograms.png", grid, 34*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return err
	}
	outputs := append(out.Names(), "compare.json", reportFile)
	params := map[string]float64{}
	for i, n := range sc.Names {
		params["history."+n] = sc.Theta[i]
	}
	for i, n := range sc.NuisanceNames {
		params[n] = sc.Nuisance[i]
	}
	cmp := c.Scenario.Compare
	rep := map[string]any{
		"tool": "spinpop", "version": version, "scenario": path, "scenario_sha256": c.Resolved.Hash(), "data": c.DataSummary(),
		"history": sc.Label, "params": params, "log_l": pipeline.Finite(sc.LogL), "normalisation": cmp.Normalisation,
		"template_noise": cmp.TemplateNoise, "pearson_chi2": sc.PearsonChi2, "bins_with_model": sc.NumBins,
		"marginal_tests": sc.Marginals, "synthetic_catalog_stars": sc.SyntheticStars, "outputs": outputs,
	}
	if sc.GoodnessOfFit != nil {
		rep["goodness_of_fit"] = pipeline.AdequacyReport(*sc.GoodnessOfFit)
	}
	strains := compare.Strains(compare.FitResult{NuisanceNames: sc.NuisanceNames, Nuisance: sc.Nuisance}, c.Nuisance)
	rep["nuisance_strains"] = pipeline.StrainsReport(strains)
	if *doFit {
		rep["fit"] = pipeline.RoundsReport(sc.Fit)
	}
	if err := writeJSON(out, "compare.json", rep); err != nil {
		return err
	}
	var text strings.Builder
	w := &text
	gof := sc.GoodnessOfFit
	if gof != nil && !gof.Adequate(compare.AdequacyLevel) {
		fmt.Fprintf(w, "The scenario does not describe the catalog: deviance %.0f where its own replicates give %.0f ± %.0f (bootstrap p = %.3g, dispersion %.2f)%s.\n\n",
			gof.Deviance, gof.ReplicateMean, gof.ReplicateSD, gof.PValue, gof.Dispersion, compare.WorstRegions(*gof))
	}
	gaussian := compare.GaussianPriors(c.Nuisance)
	if s := compare.StrainWarning("the fit", strains, gaussian); s != "" {
		fmt.Fprintf(w, "warning: %s\n\n", s)
	}
	warnRoundLimits(w, []string{"history fit"}, []compare.FitResult{sc.Fit})
	printDataSummary(w, c.DataSummary())
	fmt.Fprintf(w, "\nhistory %s:", sc.Label)
	for i, n := range sc.Names {
		fmt.Fprintf(w, " history.%s = %.4g", n, sc.Theta[i])
	}
	for i, n := range sc.NuisanceNames {
		fmt.Fprintf(w, " %s = %.4g", n, sc.Nuisance[i])
	}
	fmt.Fprintf(w, "\nln L = %.2f (%s normalisation, template noise: %s); Pearson χ² = %.1f over %d bins\n", sc.LogL, cmp.Normalisation, cmp.TemplateNoise, sc.PearsonChi2, sc.NumBins)
	if gof != nil {
		fmt.Fprintf(w, "goodness of fit: deviance %.1f against %.1f ± %.1f from %d bootstrap replicates (p = %.3g, dispersion %.2f)\n",
			gof.Deviance, gof.ReplicateMean, gof.ReplicateSD, gof.Replicates, gof.PValue, gof.Dispersion)
	}
	fmt.Fprintf(w, "marginals against a synthetic catalog of %d stars (two-sample KS; Anderson–Darling k-sample, Scholz & Stephens 1987):\n", sc.SyntheticStars)
	for _, k := range pipeline.MarginalNames {
		if m, ok := sc.Marginals[k]; ok {
			fmt.Fprintf(w, "  %-13s KS D = %.4f p = %.3g; AD = %.2f p ≈ %.3g\n", k, m.KSD, m.KSP, m.ADStat, m.ADP)
		}
	}
	// The report: the goodness of fit is the verdict of a comparison.
	page := newReport("compare", "the scenario against its catalog", c.Resolved, strings.Join(c.Resolved.Files, " ← "))
	page.Data = reportData(c.DataSummary())
	if gof != nil {
		page.Verdict = adequacyLine("The scenario ("+sc.Label+")", *gof)
	} else {
		page.Verdict = report.Line{Text: "Goodness of fit not calibrated (--replicates 0): the numbers below say how well the scenario fits, not whether the fit is adequate.", Tone: report.Caution}
	}
	if s := compare.StrainWarning("The fit", strains, gaussian); s != "" {
		page.Warnings = append(page.Warnings, s+".")
	}
	rows := []report.Row{
		row("ln L", fmt.Sprintf("%.2f", sc.LogL), fmt.Sprintf("%s normalisation, template noise: %s", cmp.Normalisation, cmp.TemplateNoise)),
		row("Pearson χ²", fmt.Sprintf("%.1f", sc.PearsonChi2), fmt.Sprintf("over %d bins", sc.NumBins)),
	}
	for i, n := range sc.Names {
		rows = append(rows, row("history."+n, fmt.Sprintf("%.4g", sc.Theta[i]), sc.Label))
	}
	for i, n := range sc.NuisanceNames {
		rows = append(rows, row(n, fmt.Sprintf("%.4g", sc.Nuisance[i]), "nuisance parameter"))
	}
	for _, k := range pipeline.MarginalNames {
		if m, ok := sc.Marginals[k]; ok {
			rows = append(rows, row("marginal: "+k, fmt.Sprintf("KS p = %.3g; AD p ≈ %.3g", m.KSP, m.ADP),
				fmt.Sprintf("KS D = %.4f, AD = %.2f, against %d synthetic stars", m.KSD, m.ADStat, sc.SyntheticStars)))
		}
	}
	page.Tables = []report.Table{{Title: "The comparison", Rows: rows}}
	return finishReport(out, page, text.String(), outputs, captions, outputs, *cf.asJSON, rep, stdout, "residuals.png", "period_histograms.png")
}
