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

	"spinpop/pipeline"
)

func runTestAlternatives(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("test-alternatives", "test-alternatives SCENARIO SCENARIO... --out DIR [--replicates N] [--json] [--templates DIR] [--force]",
		"Which explanation does the catalog prefer? Each SCENARIO is one explanation — a burst, a\n"+
			"stalled spin-down, both, neither — with its own physics, its history as written and the\n"+
			"parameters of its [[compare.free]] (history and nuisance parameters) fitted to the same\n"+
			"catalog. Every pair is compared by the likelihood ratio, calibrated by a parametric\n"+
			"bootstrap under each member (the bootstrap form of Cox's test of non-nested models),\n"+
			"with AIC, BIC and a grid evidence; each explanation's goodness of fit is calibrated by its\n"+
			"own replicates. The verdict says which explanation the catalog prefers, that it cannot\n"+
			"tell, or that none fits. Every scenario must read the same catalog with the same cuts\n"+
			"and comparison space; their names (the name key) label them.", stdout)
	cf := addCompareFlags(fs)
	reps := fs.Int("replicates", 200, "bootstrap replicates under each explanation")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) < 2 {
		return usageErrorf("test-alternatives takes at least two scenarios, one per explanation; got %d (see spinpop test-alternatives --help)", len(pos))
	}
	if *reps < 20 {
		return usageErrorf("--replicates = %d: the bootstrap needs at least 20 replicates per explanation (200 or more to judge goodness of fit at 1 %%)", *reps)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	var comps []*pipeline.Comparison
	for i, path := range pos {
		f := cf
		if i > 0 {
			force := true
			f.force = &force // the folder is this run's own by now
		}
		c, err := setupComparison(ctx, path, f, stderr)
		if err != nil {
			return err
		}
		comps = append(comps, c)
	}
	bar := newProgressBar("bootstrap", int64(*reps*len(comps)))
	o, err := pipeline.TestAlternatives(ctx, comps, pipeline.AlternativesOptions{Replicates: *reps,
		Progress: func(done, _ int) { bar.Update(int64(done)) }})
	bar.Done()
	if err != nil {
		return err
	}
	res := o.Result
	dir := *cf.out
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
	if err := writeGrid(filepath.Join(dir, "alternatives_period_histograms.png"), grid, 30*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return err
	}
	outputs := []string{"rejected.csv", "alternatives_period_histograms.png", "alternatives.json"}
	rep := o.Report(outputs)
	if err := writeJSON(filepath.Join(dir, "alternatives.json"), rep); err != nil {
		return err
	}
	if *cf.asJSON {
		return printJSON(stdout, rep)
	}
	if res.Outcome != "prefers" {
		fmt.Fprintf(stdout, "%s\n\n", res.Verdict)
	}
	printDataSummary(stdout, comps[0].DataSummary())
	fmt.Fprintln(stdout)
	for _, f := range res.Fits {
		fmt.Fprintf(stdout, "%-24s ln L = %10.2f  k = %2d  AIC = %10.1f  BIC = %10.1f  deviance %.0f vs %.0f ± %.0f (p = %.3g)\n",
			f.Name, f.LogL, f.K, f.AIC, f.BIC, f.Adequacy.Deviance, f.Adequacy.ReplicateMean, f.Adequacy.ReplicateSD, f.Adequacy.PValue)
	}
	for _, p := range res.Pairs {
		fmt.Fprintf(stdout, "%s vs %s: 2Δln L = %.1f; bootstrap p under %s = %.3g, under %s = %.3g", p.B, p.A, p.LR, p.A, p.PUnderA, p.B, p.PUnderB)
		if !math.IsNaN(p.LogBayesBOver) {
			fmt.Fprintf(stdout, "; ln B = %.1f", p.LogBayesBOver)
		}
		fmt.Fprintln(stdout)
	}
	fmt.Fprintf(stdout, "\n%s\nwrote: %s\n", res.Verdict, wordList(outputs))
	return nil
}
