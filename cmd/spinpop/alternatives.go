package main

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"spinpop/scenarios"

	"gonum.org/v1/plot/vg"

	"spinpop/compare"
	"spinpop/internal/figure"
	"spinpop/internal/report"
	"spinpop/pipeline"
)

func runTestAlternatives(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("test-alternatives", "test-alternatives SCENARIO [SCENARIO...] --out DIR [--replicates N] [--json] [--templates DIR] [--force]",
		"Which explanation does the catalog prefer? Each SCENARIO is one explanation — a burst, a\n"+
			"stalled spin-down, both, neither — with its own physics, its history as written and the\n"+
			"parameters of its [[compare.free]] (history and nuisance parameters) fitted to the same\n"+
			"catalog; so is each of its [[compare.alternatives]] (the scenario with some keys set and\n"+
			"some history parts dropped), so one scenario that names alternatives is enough\n"+
			"(example:fit names a stall and a burst with a stall). Every pair is compared by the\n"+
			"likelihood ratio, calibrated by a parametric bootstrap under each member (the bootstrap\n"+
			"form of Cox's test of non-nested models), with AIC, BIC and a grid evidence; each\n"+
			"explanation's goodness of fit is calibrated by its own replicates. The verdict says which\n"+
			"explanation the catalog prefers, that it cannot tell, or that none fits. Every\n"+
			"explanation must read the same catalog with the same cuts and comparison space; their\n"+
			"names (the name key, or the alternative's name) label them.", stdout)
	cf := addCompareFlags(fs)
	cf.addRoundsFlag(fs)
	reps := fs.Int("replicates", 200, "bootstrap replicates under each explanation")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) < 1 {
		return usageErrorf("test-alternatives takes the scenarios to compare, one per explanation, or one scenario with [[compare.alternatives]]; got none (see spinpop test-alternatives --help)")
	}
	if *reps < 20 {
		return usageErrorf("--replicates = %d: the bootstrap needs at least 20 replicates per explanation (200 or more for p-values of a few per cent and below)", *reps)
	}
	ctx, stop := signalContext()
	defer stop()
	explanations, err := explanationsOf(pos, cf)
	if err != nil {
		return err
	}
	if len(explanations) < 2 {
		return usageErrorf("test-alternatives needs at least two explanations; %s names no [[compare.alternatives]], so give a second scenario or add alternatives to it (see example:fit)", pos[0])
	}
	// One output folder for every explanation: each setup writes the same
	// rejected.csv (the explanations must read the same catalog with the
	// same cuts), the last one kept.
	of := newOutFolder(cf, "alternatives.json", stdout, stderr)
	defer of.close()
	var comps []*pipeline.Comparison
	for _, e := range explanations {
		c, err := setupResolved(ctx, e.res, e.arg, cf, of, stderr)
		if err != nil {
			return err
		}
		comps = append(comps, c)
	}
	out := of.set
	bar := newProgressBar("bootstrap", int64(*reps*len(comps)))
	o, err := pipeline.TestAlternatives(ctx, comps, pipeline.AlternativesOptions{Replicates: *reps,
		Progress: func(done, _ int) { bar.Update(int64(done)) },
		WriteRejected: func(write func(io.Writer) error) error {
			return out.Write(of.sub+"rejected.csv", write)
		}})
	bar.Done()
	if err == nil {
		comps = o.Comparisons // every explanation on the same stars
	}
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		return err
	}
	res := o.Result
	models := map[string][]float64{}
	var names []string
	for i, a := range o.Alternatives {
		models[a.Name] = o.Expected[i]
		names = append(names, a.Name)
	}
	grid, err := periodHistsDataModel(comps[0].Likelihood.Space(), comps[0].Likelihood.Counts(), models, names, 6)
	if err != nil {
		return err
	}
	if err := writeFigure(out, "alternatives_period_histograms.png", grid, 34*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return err
	}
	// Where each alternative differs from the first, on the plane.
	var diffs []*figure.Panel
	for i := 1; i < len(names); i++ {
		dp, err := modelDifferenceMap(comps[0].Likelihood.Space(), models[names[i]], models[names[0]], names[i], names[0])
		if err != nil {
			return err
		}
		diffs = append(diffs, dp)
	}
	if len(diffs) > 0 {
		g := figure.Rows(diffs, min(len(diffs), 3))
		if err := writeFigure(out, "alternatives_difference.png", g,
			vg.Length(20*min(len(diffs), 3))*vg.Centimeter, vg.Length(13*len(g))*vg.Centimeter); err != nil {
			return err
		}
	}
	outputs := append(out.Names(), "alternatives.json", reportFile)
	rep := o.Report(outputs)
	if err := writeJSON(out, "alternatives.json", rep); err != nil {
		return err
	}
	var text strings.Builder
	w := &text
	if res.Outcome != "prefers" {
		fmt.Fprintf(w, "%s\n\n", res.Verdict)
	}
	pageWarnings := printAltWarnings(w, res)
	printDataSummary(w, comps[0].DataSummary())
	fmt.Fprintln(w)
	for _, f := range res.Fits {
		fmt.Fprintf(w, "%-24s ln L = %10.2f  k = %2d  AIC = %10.1f  BIC = %10.1f  deviance %.0f vs %.0f ± %.0f (p = %.3g)\n",
			f.Name, f.LogL, f.K, f.AIC, f.BIC, f.Adequacy.Deviance, f.Adequacy.ReplicateMean, f.Adequacy.ReplicateSD, f.Adequacy.PValue)
	}
	for _, p := range res.Pairs {
		fmt.Fprintf(w, "%s vs %s: 2Δln L = %.1f; bootstrap p under %s = %.3g, under %s = %.3g", p.B, p.A, p.LR, p.A, p.PUnderA, p.B, p.PUnderB)
		if !math.IsNaN(p.LogBayesBOver) {
			fmt.Fprintf(w, "; ln B = %.1f", p.LogBayesBOver)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintf(w, "\n%s\n", res.Verdict)
	page := newReport("test-alternatives", "which explanation does the catalog prefer?", comps[0].Resolved, strings.Join(comps[0].Resolved.Files, " ← "))
	page.Verdict = report.Line{Text: res.Verdict, Tone: map[string]report.Tone{"prefers": report.Good, "cannot-tell": report.Caution, "neither-fits": report.Bad}[res.Outcome]}
	if page.Verdict.Tone == "" {
		page.Verdict.Tone = report.Neutral
	}
	if best, preferred := res.BestFit(); preferred && page.Verdict.Tone == report.Good && (!best.Adequacy.Adequate(compare.AdequacyLevel) || len(best.AgesOnEdge) > 0) {
		page.Verdict.Tone = report.Caution // preferred, but it does not describe the catalog, or its age is its range's
	}
	page.Warnings = append(page.Warnings, pageWarnings...)
	var fits, pairs []report.Row
	for _, f := range res.Fits {
		page.Adequacy = append(page.Adequacy, adequacyLine(fmt.Sprintf("%q", f.Name), f.Adequacy))
		fits = append(fits, row(f.Name, fmt.Sprintf("ln L = %.2f", f.LogL), fmt.Sprintf("k = %d, AIC = %.1f, BIC = %.1f", f.K, f.AIC, f.BIC)))
	}
	for _, p := range res.Pairs {
		note := fmt.Sprintf("bootstrap p under %s = %.3g, under %s = %.3g", p.A, p.PUnderA, p.B, p.PUnderB)
		if !math.IsNaN(p.LogBayesBOver) {
			note += fmt.Sprintf("; ln B = %.1f", p.LogBayesBOver)
		}
		pairs = append(pairs, row(p.B+" vs "+p.A, fmt.Sprintf("2Δln L = %.1f", p.LR), note))
	}
	page.Tables = []report.Table{{Title: "Each explanation fitted", Rows: fits}, {Title: "Pairs", Rows: pairs}}
	page.Data = reportData(comps[0].DataSummary())
	return finishReport(out, page, text.String(), outputs, captions, outputs, *cf.asJSON, rep, stdout, "alternatives_difference.png", "alternatives_period_histograms.png")
}

// explanation is one scenario to compare: a file (or example) as the user
// gave it, or one of its alternatives (arg then says which).
type explanation struct {
	arg string
	res *scenarios.Resolved
}

// printAltWarnings prints, before test-alternatives' numbers, the fits
// that stopped still rising, the nuisance parameters each fit strains,
// and the preferred fit's ages on an edge of their range; it returns the
// last two as sentences for the report page.
func printAltWarnings(w io.Writer, res *compare.AltResult) []string {
	var fitNames []string
	var fitResults []compare.FitResult
	for _, f := range res.Fits {
		fitNames, fitResults = append(fitNames, fmt.Sprintf("fit of %q", f.Name)), append(fitResults, f.Fit)
	}
	warnRoundLimits(w, fitNames, fitResults)
	var page []string
	for _, f := range res.Fits {
		if s := compare.StrainWarning(fmt.Sprintf("the fit of %q", f.Name), f.Strains, f.GaussianPriors); s != "" {
			fmt.Fprintf(w, "warning: %s\n", s)
			page = append(page, strings.ToUpper(s[:1])+s[1:]+".")
		}
	}
	if best, preferred := res.BestFit(); preferred {
		if s := best.EdgeWarning(); s != "" {
			fmt.Fprintf(w, "warning: %s (the preferred explanation; read the verdict at the end)\n", s)
			page = append(page, strings.ToUpper(s[:1])+s[1:]+".")
		}
	}
	return page
}

// explanationsOf resolves each scenario argument (with the --set
// overrides) and, after each, its [[compare.alternatives]].
func explanationsOf(args []string, cf compareFlags) ([]explanation, error) {
	var sets []string
	if cf.sets != nil {
		sets = *cf.sets
	}
	overrides, err := scenarios.ParseOverrides(sets)
	if err != nil {
		return nil, inputError{err}
	}
	var out []explanation
	for _, arg := range args {
		res, err := loadScenario(arg, sets)
		if err != nil {
			return nil, err
		}
		out = append(out, explanation{arg, res})
		for i := range res.Scenario.Compare.Alternatives {
			alt, err := scenarios.AlternativeOverrides(&res.Scenario, i)
			if err != nil {
				return nil, inputError{err}
			}
			ares, err := scenarios.Resolve(arg, append(slices.Clone(overrides), alt...)...)
			if err != nil {
				return nil, inputError{err}
			}
			out = append(out, explanation{fmt.Sprintf("%s, alternative %q", arg, res.Scenario.Compare.Alternatives[i].Name), ares})
		}
	}
	return out, nil
}
