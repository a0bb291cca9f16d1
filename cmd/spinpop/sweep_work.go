package main

import (
	"context"
	"fmt"
	"io"
	"slices"

	"spinpop/compare"
	"spinpop/internal/outset"
	"spinpop/pipeline"
	"spinpop/scenarios"
	"spinpop/sweep"
)

// pointWorker does a sweep's work at one point, writing what the single
// commands write into the point's folder:
//   - simulate: catalog.csv, manifest.json and plots (as spinpop simulate);
//     headline: catalog stars.
//   - compare: compare.json (as spinpop compare, the history as written,
//     goodness of fit from compare.bootstrap replicates); headline: stars
//     compared, ln L, adequacy.
//   - test-burst: test.json and figures (as spinpop test-burst, with
//     compare.bootstrap replicates), and the burst fraction's profile
//     interval made as the age's; headline: burst age and fraction with
//     their 68 % intervals, Δln L, bootstrap p, significance, the verdict's
//     strength, and the burst model's adequacy (which replaces the
//     as-written one of compare, kept as as_written_adequacy_p).
//   - test-alternatives: alternatives.json (as spinpop test-alternatives:
//     the point's scenario against each of its [[compare.alternatives]],
//     compare.bootstrap replicates under each); headline: the preferred
//     explanation and the outcome, each one's ln L and adequacy p.
type pointWorker struct {
	templates string
	threads   int
	log       io.Writer // nil: quiet
}

func (w *pointWorker) logf(format string, args ...any) {
	if w.log != nil {
		fmt.Fprintf(w.log, format+"\n", args...)
	}
}

func (w *pointWorker) Work(ctx context.Context, p *sweep.Point, steps []string, dir string) (sweep.Headline, error) {
	var h sweep.Headline
	label := fmt.Sprintf("sweep point %d (%.12s)", p.Index, p.Hash)
	// A point's files are one output set, published when the point's work
	// is done (the sweep's own records beside them are the runner's).
	set, err := outset.Open(dir, outset.Options{Force: true})
	if err != nil {
		return h, err
	}
	defer set.Close()
	if err := w.work(ctx, p, steps, label, set, &h); err != nil {
		return h, err
	}
	return h, set.Commit()
}

func (w *pointWorker) work(ctx context.Context, p *sweep.Point, steps []string, label string, set *outset.Set, hp *sweep.Headline) error {
	h := hp
	if slices.Contains(steps, sweep.StepSimulate) {
		m, err := simulate(ctx, p.Scenario, label, set, "", w.threads, nil) // a sweep was planned: no estimate per point
		if err != nil {
			return err
		}
		h.CatalogStars = sweep.I(m.CatalogStars)
		w.logf("point %d: simulated, %d catalog stars", p.Index, m.CatalogStars)
	}
	if !slices.Contains(steps, sweep.StepCompare) && !slices.Contains(steps, sweep.StepTestBurst) && !slices.Contains(steps, sweep.StepAlternatives) {
		return nil
	}
	c, err := pipeline.SetupComparison(ctx, p.Scenario, pipeline.ComparisonOptions{
		Source: label, Workers: w.threads, TemplateDir: w.templates,
		WriteRejected: func(write func(io.Writer) error) error {
			return set.Write("rejected.csv", write)
		},
		Warn: func(msg string) { w.logf("point %d: warning: %s", p.Index, msg) },
	})
	if err != nil {
		return err
	}
	h.DataStars = sweep.I(int64(c.DataSummary().Compared))
	reps := c.Scenario.Compare.Bootstrap
	if slices.Contains(steps, sweep.StepCompare) {
		sc, err := c.Score(ctx, pipeline.ScoreOptions{Replicates: reps})
		if err != nil {
			return err
		}
		h.LnL = sweep.F(sc.LogL)
		out := map[string]any{
			"tool": "spinpop", "version": version, "scenario": label, "scenario_sha256": c.Resolved.Hash(), "data": c.DataSummary(),
			"history": sc.Label, "log_l": pipeline.Finite(sc.LogL), "pearson_chi2": sc.PearsonChi2, "bins_with_model": sc.NumBins,
			"marginal_tests": sc.Marginals, "synthetic_catalog_stars": sc.SyntheticStars,
		}
		if g := sc.GoodnessOfFit; g != nil {
			out["goodness_of_fit"] = pipeline.AdequacyReport(*g)
			h.AdequacyP, h.Adequacy = sweep.F(g.PValue), adequacyWord(*g)
		}
		if err := writeJSON(set, "compare.json", out); err != nil {
			return err
		}
		w.logf("point %d: compared, ln L = %.2f", p.Index, sc.LogL)
	}
	if slices.Contains(steps, sweep.StepTestBurst) {
		if err := w.burst(ctx, c, reps, set, h); err != nil {
			return err
		}
		w.logf("point %d: burst test, %s", p.Index, h.Verdict)
	}
	if slices.Contains(steps, sweep.StepAlternatives) {
		if err := w.alternatives(ctx, p, c, reps, label, set, h); err != nil {
			return err
		}
		w.logf("point %d: alternatives, %s %s", p.Index, h.AlternativesOutcome, h.Preferred)
	}
	return nil
}

// alternatives compares the point's scenario with each of its
// [[compare.alternatives]] (each resolved on the point, so the axis values
// hold in every explanation), as spinpop test-alternatives does, with
// compare.bootstrap replicates under each; it writes alternatives.json.
func (w *pointWorker) alternatives(ctx context.Context, p *sweep.Point, c *pipeline.Comparison, reps int, label string, set *outset.Set, h *sweep.Headline) error {
	comps := []*pipeline.Comparison{c}
	for i, a := range p.Scenario.Scenario.Compare.Alternatives {
		ov, err := scenarios.AlternativeOverrides(&p.Scenario.Scenario, i)
		if err != nil {
			return err
		}
		res, err := p.With(ov...)
		if err != nil {
			return err
		}
		ac, err := pipeline.SetupComparison(ctx, res, pipeline.ComparisonOptions{
			Source: fmt.Sprintf("%s, alternative %q", label, a.Name), Workers: w.threads, TemplateDir: w.templates,
			Warn: func(msg string) { w.logf("point %d: warning: %s", p.Index, msg) },
		})
		if err != nil {
			return err
		}
		comps = append(comps, ac)
	}
	o, err := pipeline.TestAlternatives(ctx, comps, pipeline.AlternativesOptions{Replicates: reps})
	if err != nil {
		return err
	}
	r := o.Result
	h.Preferred, h.AlternativesOutcome = r.Best, r.Outcome
	if h.Extra == nil {
		h.Extra = map[string]float64{}
	}
	for _, f := range r.Fits {
		h.Extra["ln_l["+f.Name+"]"] = f.LogL
		h.Extra["adequacy_p["+f.Name+"]"] = f.Adequacy.PValue
	}
	return writeJSON(set, "alternatives.json", o.Report([]string{"alternatives.json"}))
}

func (w *pointWorker) burst(ctx context.Context, c *pipeline.Comparison, reps int, set *outset.Set, h *sweep.Headline) error {
	res, err := c.BurstTest(ctx, reps, nil)
	if err != nil {
		return err
	}
	if _, err := writeBurstOutputs(set, "", c, res); err != nil {
		return err
	}
	t := res.Test
	h.Extra = map[string]float64{sweep.ExtraReplicates: float64(t.Replicates)}
	if h.AdequacyP != nil {
		h.Extra["as_written_adequacy_p"] = *h.AdequacyP
	}
	h.AdequacyP, h.Adequacy = sweep.F(t.AdequacyBurst.PValue), adequacyWord(t.AdequacyBurst)
	h.DeltaLnL, h.PValue, h.SignificanceSigma = sweep.F(t.DeltaLogL), sweep.F(t.PValue), sweep.F(t.Significance)
	h.Verdict = t.Strength
	if t.AgeParam != "" {
		// The profile's interval: the sweep itself is the account of the
		// systematics, so the law's calibration is not added per point.
		iv := t.AgeIntervalProfile
		h.BurstAgeGyr, h.BurstAgeLoGyr, h.BurstAgeHiGyr = sweep.F(iv.Best), sweep.F(iv.Lo68), sweep.F(iv.Hi68)
	}
	param, iv, err := c.BurstFraction(res)
	if err != nil {
		return fmt.Errorf("profile of the burst fraction: %w", err)
	}
	if param != "" {
		h.BurstFraction, h.BurstFractionLo, h.BurstFractionHi = sweep.F(iv.Best), sweep.F(iv.Lo68), sweep.F(iv.Hi68)
	}
	return nil
}

// adequacyWord is the plain-words adequacy of a fit at the verdict's
// level (a deviance reached by more than compare.AdequacyLevel of its own replicates).
func adequacyWord(a compare.Adequacy) string {
	if a.Replicates == 0 {
		return ""
	}
	if a.Adequate(compare.AdequacyLevel) {
		return "adequate"
	}
	return "inadequate"
}
