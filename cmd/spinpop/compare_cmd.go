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
	"spinpop/compare/stats"
	"spinpop/model"
	"spinpop/scenarios"
)

func runCompare(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("compare", "compare SCENARIO --out DIR [--fit] [--json] [--templates DIR] [--force]",
		"Score one scenario against its observed catalog: the binned likelihood of the scenario's\n"+
			"star-formation history as written (or, with --fit, at the best-fitting values of the\n"+
			"parameters in [[compare.free]]), Pearson residual maps, period histograms of data and\n"+
			"model per color range, and two-sample Kolmogorov–Smirnov and Anderson–Darling tests of\n"+
			"the period, color and height distributions against a synthetic catalog of the scenario.", stdout)
	cf := addCompareFlags(fs)
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
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	c, err := setupComparison(ctx, path, cf, stderr)
	if err != nil {
		return err
	}
	hm, err := scenarios.AsWritten(c.s, c.built.AgeEdgesGyr)
	if err != nil {
		return inputError{fmt.Errorf("%s: %w", path, err)}
	}
	theta := hm.Default()
	label := "as written"
	var fr compare.FitResult
	if *doFit {
		if fr, err = compare.FitJoint(ctx, c.like, hm, c.nuisance, compare.FitOptions{Seed: c.s.Run.Seed}); err != nil {
			return err
		}
		theta, label = fr.Theta, "fitted"
	} else {
		w, err := hm.Weights(theta)
		if err != nil {
			return err
		}
		fr = compare.FitResult{Theta: theta, Names: hm.Names(), Weights: w, LogL: c.like.LogL(w)}
	}
	w := fr.Weights
	logL := fr.LogL
	var gof *compare.Adequacy
	if *reps > 0 {
		bar := newProgressBar("goodness of fit", int64(*reps))
		a, err := compare.GoodnessOfFit(ctx, c.like, hm, fr, compare.GoFOptions{Replicates: *reps, Seed: c.s.Run.Seed, Workers: c.workers,
			Refit: *doFit, Nuisance: c.nuisance, Progress: func(done, _ int) { bar.Update(int64(done)) }})
		bar.Done()
		if err != nil {
			return err
		}
		gof = &a
	}
	if err := c.like.UseFit(fr); err != nil {
		return err
	}
	sp := c.like.Space()
	data := c.like.Counts()
	mu := c.like.Expected(w, nil)
	resid := c.like.PearsonResiduals(w)
	chi2, nb := 0.0, 0
	for i, r := range resid {
		if mu[i] > 0 {
			chi2 += r * r
			nb++
		}
	}

	// Unbinned marginals against a synthetic catalog of the scenario.
	hist, err := hm.History(theta)
	if err != nil {
		return err
	}
	synth, err := syntheticMarginals(ctx, c, hist)
	if err != nil {
		return err
	}
	var dP, dC, dZ []float64
	for _, st := range c.obs.Stars {
		dP = append(dP, math.Log10(st.PeriodD))
		dC = append(dC, st.BV)
		dZ = append(dZ, math.Abs(st.ZPc))
	}
	tests := map[string]any{}
	for _, m := range []struct {
		name string
		d, s []float64
	}{{"log10_period", dP, synth.logP}, {"b_v", dC, synth.bv}, {"abs_z_pc", dZ, synth.absZ}} {
		ks, err1 := stats.KS2Sample(m.d, m.s)
		ad, err2 := stats.AndersonKSample(m.d, m.s)
		if err1 != nil || err2 != nil {
			continue
		}
		tests[m.name] = map[string]any{"ks_d": ks.D, "ks_p": ks.PValue, "ad_statistic": ad.Statistic, "ad_p": ad.PValue, "ad_p_clamped": ad.Clamped}
	}

	dir := *cf.out
	var outputs []string
	if err := writeGrid(filepath.Join(dir, "residuals.png"), dataModelResiduals(sp, data, mu, resid, c.s.Name+" ("+label+")"), 36*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return err
	}
	grid, err := periodHistsDataModel(sp, data, map[string][]float64{c.s.Name: mu}, []string{c.s.Name}, 6)
	if err != nil {
		return err
	}
	if err := writeGrid(filepath.Join(dir, "period_histograms.png"), grid, 30*vg.Centimeter, 18*vg.Centimeter); err != nil {
		return err
	}
	outputs = append(outputs, "rejected.csv", "residuals.png", "period_histograms.png", "compare.json")
	params := map[string]float64{}
	for i, n := range hm.Names() {
		params["history."+n] = theta[i]
	}
	for i, n := range fr.NuisanceNames {
		params[n] = fr.Nuisance[i]
	}
	out := map[string]any{
		"tool": "spinpop", "version": version, "scenario": path, "scenario_sha256": c.res.Hash(), "data": c.dataSummary(),
		"history": label, "params": params, "log_l": finite(logL), "normalisation": c.s.Compare.Normalisation,
		"template_noise": c.s.Compare.TemplateNoise, "pearson_chi2": chi2, "bins_with_model": nb,
		"marginal_tests": tests, "synthetic_catalog_stars": len(synth.logP), "outputs": outputs,
	}
	if gof != nil {
		out["goodness_of_fit"] = adequacyJSON(*gof)
	}
	if err := writeJSON(filepath.Join(dir, "compare.json"), out); err != nil {
		return err
	}
	if *cf.asJSON {
		return printJSON(stdout, out)
	}
	if gof != nil && !gof.Adequate(0.01) {
		fmt.Fprintf(stdout, "The scenario does not describe the catalog: deviance %.0f where its own replicates give %.0f ± %.0f (bootstrap p = %.3g, dispersion %.2f)%s.\n\n",
			gof.Deviance, gof.ReplicateMean, gof.ReplicateSD, gof.PValue, gof.Dispersion, compare.WorstRegions(*gof))
	}
	printDataSummary(stdout, c.dataSummary())
	fmt.Fprintf(stdout, "\nhistory %s:", label)
	for i, n := range hm.Names() {
		fmt.Fprintf(stdout, " history.%s = %.4g", n, theta[i])
	}
	for i, n := range fr.NuisanceNames {
		fmt.Fprintf(stdout, " %s = %.4g", n, fr.Nuisance[i])
	}
	fmt.Fprintf(stdout, "\nln L = %.2f (%s normalisation, template noise: %s); Pearson χ² = %.1f over %d bins\n", logL, c.s.Compare.Normalisation, c.s.Compare.TemplateNoise, chi2, nb)
	if gof != nil {
		fmt.Fprintf(stdout, "goodness of fit: deviance %.1f against %.1f ± %.1f from %d bootstrap replicates (p = %.3g, dispersion %.2f)\n",
			gof.Deviance, gof.ReplicateMean, gof.ReplicateSD, gof.Replicates, gof.PValue, gof.Dispersion)
	}
	fmt.Fprintf(stdout, "marginals against a synthetic catalog of %d stars (two-sample KS; Anderson–Darling k-sample, Scholz & Stephens 1987):\n", len(synth.logP))
	for _, k := range []string{"log10_period", "b_v", "abs_z_pc"} {
		if m, ok := tests[k].(map[string]any); ok {
			fmt.Fprintf(stdout, "  %-13s KS D = %.4f p = %.3g; AD = %.2f p ≈ %.3g\n", k, m["ks_d"], m["ks_p"], m["ad_statistic"], m["ad_p"])
		}
	}
	fmt.Fprintf(stdout, "wrote: %v\n", outputs)
	return nil
}

type marginals struct{ logP, bv, absZ []float64 }

// syntheticMarginals simulates the scenario with history h (its own seed
// and star count) and keeps the catalogue stars inside the comparison
// space: the unbinned model sample for the marginal tests.
func syntheticMarginals(ctx context.Context, c *comparison, h interface {
	BinWeights([]float64) []float64
}) (*marginals, error) {
	pop := *c.built.Population
	mass := h.BinWeights(c.built.AgeEdgesGyr)
	pop.BinProb = make([]float64, len(mass))
	for k := range mass {
		pop.BinProb[k] = mass[k] * c.built.Sampler.BinIntegral(k)
	}
	// Ages inside each bin: uniform, as in the templates.
	edges := c.built.AgeEdgesGyr
	pop.Age = func(k int, r *randRand) float64 { return edges[k] + (edges[k+1]-edges[k])*r.Float64() }
	if err := pop.Prepare(); err != nil {
		return nil, err
	}
	m := &marginals{}
	sp := c.space
	err := model.RunChunks(ctx, c.s.Run.Seed, c.s.Run.StarsGenerated, c.s.Run.ChunkStars, c.workers, pop.Fill, func(ch *model.Chunk) error {
		for i := 0; i < ch.N; i++ {
			if !ch.Flags[i].Selected() || sp.Index(ch.ObsBV[i], ch.MeasPeriodD[i], math.Abs(ch.ZPc[i])) < 0 {
				continue
			}
			m.logP = append(m.logP, math.Log10(ch.MeasPeriodD[i]))
			m.bv = append(m.bv, ch.ObsBV[i])
			m.absZ = append(m.absZ, math.Abs(ch.ZPc[i]))
		}
		return nil
	})
	return m, err
}
