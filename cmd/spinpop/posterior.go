package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"spinpop/compare"
	"spinpop/internal/figure"
	"spinpop/internal/grid"
	"spinpop/internal/outset"
	"spinpop/internal/report"
	"spinpop/pipeline"
)

func runPosterior(args []string, stdout, stderr io.Writer) error {
	ctx, stop := signalContext()
	defer stop()
	return posteriorCmd(ctx, args, stdout, stderr)
}

// posteriorCmd is the command with its context: cancelling ctx (Ctrl-C) stops it
// and leaves no partial output.
func posteriorCmd(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("posterior", "posterior SCENARIO --out DIR [--walkers 32] [--steps 4000] [--burn 1000] [--seed N]\n"+
		"         [--json] [--templates DIR] [--force] [--threads N]",
		"Sample the posterior of the burst model's free parameters (compare.free) given the observed\n"+
			"catalog, with the affine-invariant ensemble sampler (Goodman & Weare 2010) and priors uniform or\n"+
			"log-uniform inside the compare.free ranges. Writes into DIR: posterior.json (medians, 16/84 %\n"+
			"quantiles, the best sample, acceptance, autocorrelation times, convergence), chain.csv (every\n"+
			"walker's position after burn-in), corner.png (marginal and pairwise densities) and sfh.png (the\n"+
			"star-formation history with its 16–84 % band). SCENARIO needs a [data] section (see spinpop\n"+
			"examples fit). --threads only speeds up building templates; the sampler is serial.", stdout)
	cf := addCompareFlags(fs)
	walkers := fs.Int("walkers", 32, "walkers of the ensemble (even; more than twice the number of free parameters)")
	steps := fs.Int("steps", 4000, "steps per walker")
	burn := fs.Int("burn", 1000, "first steps of each walker dropped as burn-in")
	seed := fs.Uint64("seed", 0, "random seed of the sampler (0: run.seed); the templates always use run.seed")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "posterior")
	if err != nil {
		return err
	}
	if *walkers < 2 || *walkers%2 != 0 {
		return usageErrorf("--walkers %d: want an even number of walkers, at least twice the number of free parameters (32 is usual)", *walkers)
	}
	if *steps < 2 {
		return usageErrorf("--steps must be at least 2 (thousands are usual)")
	}
	if *burn < 1 || *burn >= *steps {
		return usageErrorf("--burn %d: want at least 1 and fewer than --steps (%d) steps of burn-in", *burn, *steps)
	}

	of := newOutFolder(cf, "posterior.json", stdout, stderr)
	defer of.close()
	c, err := setupComparison(ctx, path, cf, of, stderr)
	if err != nil {
		return err
	}
	out := of.set
	d := c.Burst.Dim()
	if d == 0 {
		return usageErrorf("%s: the burst model has no free parameter; list some in [[compare.free]]", path)
	}
	if *walkers < 2*d {
		return usageErrorf("--walkers %d is too few for %d free parameters; use at least %d", *walkers, d, 2*d)
	}
	bar := newProgressBar("sampling", int64(*steps))
	post, rep, err := c.Posterior(ctx, pipeline.PosteriorOptions{Walkers: *walkers, Steps: *steps, Burn: *burn, Seed: *seed,
		Progress: func(done, _ int) { bar.Update(int64(done)) }})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		return fmt.Errorf("posterior: %w", err)
	}

	if err := writeChainCSV(out, "chain.csv", post); err != nil {
		return err
	}
	first := post.Burn * post.Walkers * d
	grid, err := cornerGrid(rep, post.Chain[first:])
	if err != nil {
		return err
	}
	side := vg.Length(max(14, 6.5*float64(d))) * vg.Centimeter
	if err := writeFigure(out, "corner.png", cornerLayout(grid), side, side); err != nil {
		return err
	}
	sp, err := sfhPlots(c, post, rep)
	if err != nil {
		return err
	}
	if err := writeFigure(out, "sfh.png", figure.Layout{figure.Of(sp...)}, 36*vg.Centimeter, 12*vg.Centimeter); err != nil {
		return err
	}
	rep.Outputs = append(out.Names(), "posterior.json", reportFile)
	if err := writeJSON(out, "posterior.json", rep); err != nil {
		return err
	}
	var text strings.Builder
	printPosteriorReport(&text, rep)
	page := newReport("posterior", "posterior of the burst model's free parameters", c.Resolved, strings.Join(c.Resolved.Files, " ← "))
	page.Data = reportData(rep.Data)
	var medians []string
	var rows []report.Row
	for _, p := range rep.Parameters {
		medians = append(medians, fmt.Sprintf("%s %s", paramLabel(p.Name), formatInterval(p.Median, p.Q16, p.Q84)))
		conv := "converged"
		if !p.Converged {
			conv = "not converged"
		}
		rows = append(rows, row(paramLabel(p.Name), formatInterval(p.Median, p.Q16, p.Q84),
			fmt.Sprintf("best sample %.4g; prior %s [%g, %g]; %s", p.MAP, p.Prior, p.PriorMin, p.PriorMax, conv)))
	}
	page.Verdict = report.Line{Tone: report.Neutral, Text: "Posterior medians with their 16–84 % ranges: " + strings.Join(medians, "; ") + "."}
	page.Warnings = rep.Warnings
	if len(rep.Warnings) > 0 {
		page.Verdict.Tone = report.Caution
	}
	page.Tables = []report.Table{{Title: fmt.Sprintf("%d walkers × %d steps, first %d dropped; mean acceptance %.2f", rep.Walkers, rep.Steps, rep.Burn, rep.AcceptanceMean), Rows: rows}}
	return finishReport(out, page, text.String(), rep.Outputs, captions, nil, *cf.asJSON, rep, stdout, "corner.png", "sfh.png")
}

// sfhPlots are two panels: the whole history, on a logarithmic rate axis
// so the smooth part and the burst both show, and a zoom on the burst on a
// linear one.
func sfhPlots(c *pipeline.Comparison, post *compare.Posterior, rep *pipeline.PosteriorReport) ([]*plot.Plot, error) {
	b := rep.SFH
	logY := true
	for i := range b.AgeGyr {
		if !(b.Q16[i] > 0 && b.MAPRate[i] > 0) {
			logY = false
		}
	}
	whole, err := sfhBandPlot("Star-formation history: the whole disk age", b.AgeGyr, b.Median, b.Q16, b.Q84, b.MAPRate, logY)
	if err != nil {
		return nil, err
	}
	// The zoom spans the burst age's 16–84 % range widened by four burst
	// widths each side (see pipeline.Comparison.BurstZoom).
	age, lo, hi, ok := c.BurstZoom(rep)
	if !ok {
		return []*plot.Plot{whole}, nil
	}
	zb, err := c.SFHBandAt(post, grid.Linspace(lo, hi, 401))
	if err != nil {
		return nil, err
	}
	zoom, err := sfhBandPlot(fmt.Sprintf("Around the burst: age %s Gyr", formatInterval(age.Median, age.Q16, age.Q84)),
		zb.AgeGyr, zb.Median, zb.Q16, zb.Q84, zb.MAPRate, false)
	if err != nil {
		return nil, err
	}
	return []*plot.Plot{whole, zoom}, nil
}

// writeChainCSV writes every walker's position after burn-in, one row per
// walker and step, with its log-posterior.
func writeChainCSV(out *outset.Set, name string, post *compare.Posterior) error {
	d := len(post.Names)
	return out.Write(name, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString("walker,step")
		for _, n := range post.Names {
			bw.WriteString("," + n)
		}
		bw.WriteString(",log_posterior\n")
		var buf []byte
		for s := post.Burn; s < post.Steps; s++ {
			for wk := range post.Walkers {
				j := s*post.Walkers + wk
				buf = strconv.AppendInt(buf[:0], int64(wk), 10)
				buf = append(buf, ',')
				buf = strconv.AppendInt(buf, int64(s), 10)
				for i := range d {
					buf = append(buf, ',')
					buf = strconv.AppendFloat(buf, post.Chain[j*d+i], 'g', -1, 64)
				}
				buf = append(buf, ',')
				buf = strconv.AppendFloat(buf, post.LogProb[j], 'g', -1, 64)
				buf = append(buf, '\n')
				if _, err := bw.Write(buf); err != nil {
					return err
				}
			}
		}
		return bw.Flush()
	})
}

func printPosteriorReport(w io.Writer, r *pipeline.PosteriorReport) {
	fmt.Fprintf(w, "spinpop %s — posterior of the burst model, scenario %q (sha256 %s…), seed %d\n", r.Version, r.ScenarioName, r.ScenarioHash[:16], r.Seed)
	printDataSummary(w, r.Data)
	fmt.Fprintf(w, "%d walkers × %d steps (first %d dropped) in %.1f s; mean acceptance %.2f\n\n", r.Walkers, r.Steps, r.Burn, r.Seconds, r.AcceptanceMean)
	fmt.Fprintf(w, "  %-32s %-28s %-10s %-22s %-9s %s\n", "parameter", "median +q84 −q16", "MAP", "prior", "τ (steps)", "converged")
	for _, p := range r.Parameters {
		tau := "—"
		if p.Tau != nil {
			tau = fmt.Sprintf("%.0f", *p.Tau)
		}
		conv := "yes"
		if !p.Converged {
			conv = "no"
		}
		fmt.Fprintf(w, "  %-32s %-28s %-10.4g %-22s %-9s %s\n", paramLabel(p.Name), formatInterval(p.Median, p.Q16, p.Q84), p.MAP,
			fmt.Sprintf("%s [%g, %g]", p.Prior, p.PriorMin, p.PriorMax), tau, conv)
	}
	for _, warn := range r.Warnings {
		fmt.Fprintln(w, "warning:", warn)
	}
	fmt.Fprintf(w, "wrote: %s\n", wordList(r.Outputs))
}
