package main

import (
	"fmt"
	"io"
	"maps"
	"strings"

	"spinpop/compare"
	"spinpop/internal/report"
	"spinpop/pipeline"

	"gonum.org/v1/plot/vg"
)

func runHeights(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("heights", "heights SCENARIO --out DIR [--split-age-gyr X] [--json] [--templates DIR] [--force]",
		"Check ages against height above the plane: split the catalog at the gyrochrone of one age\n"+
			"(default compare.split_age_gyr, or the fitted burst age), count the young fraction in |z|\n"+
			"bins (Wilson 68 % intervals), and compare it with what the fitted smooth history and the\n"+
			"fitted history with a burst predict, by binomial likelihood. Young stars sit in a thinner\n"+
			"layer than old ones, so the young fraction falls with height; a burst changes how fast.", stdout)
	cf := addCompareFlags(fs)
	cf.addRoundsFlag(fs)
	split := fs.Float64("split-age-gyr", 0, "age of the splitting gyrochrone in Gyr (0: compare.split_age_gyr, else the fitted burst age)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "heights")
	if err != nil {
		return err
	}
	if *split < 0 || *split > 14 {
		return usageErrorf("--split-age-gyr must be an age in (0, 14] Gyr")
	}
	ctx, stop := signalContext()
	defer stop()
	of := newOutFolder(cf, "heights.json", stdout, stderr)
	defer of.close()
	c, err := setupComparison(ctx, path, cf, of, stderr)
	if err != nil {
		return err
	}
	out := of.set
	h, fits, err := c.Heights(ctx, *split)
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		return err
	}
	p, err := heightPlotFit(h)
	if err != nil {
		return err
	}
	if err := writePlot(out, "height_check.png", p, 22*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return err
	}
	outputs := append(out.Names(), "heights.json", reportFile)
	rep := map[string]any{
		"tool": "spinpop", "version": version, "scenario": path, "scenario_sha256": c.Resolved.Hash(), "data": c.DataSummary(),
		"outputs": outputs,
	}
	maps.Copy(rep, pipeline.HeightReport(h))
	rep["fits"] = map[string]any{"smooth_history": pipeline.RoundsReport(fits[0]), "with_burst": pipeline.RoundsReport(fits[1])}
	if err := writeJSON(out, "heights.json", rep); err != nil {
		return err
	}
	var text strings.Builder
	warnRoundLimits(&text, []string{"smooth-history fit", "with-burst fit"}, fits[:])
	printDataSummary(&text, c.DataSummary())
	printHeightTable(&text, h)
	page := newReport("heights", "young fraction against height above the plane", c.Resolved, strings.Join(c.Resolved.Files, " ← "))
	page.Data = reportData(c.DataSummary())
	page.Verdict = heightsVerdict(h)
	var rows []report.Row
	for _, x := range h.Hypotheses {
		rows = append(rows, row(x.Name, fmt.Sprintf("binomial ln L = %.1f", x.LogL), ""))
	}
	page.Tables = []report.Table{{Title: "Each hypothesis against the young fraction by |z|", Rows: rows}}
	return finishReport(out, page, text.String(), outputs, captions, outputs, *cf.asJSON, rep, stdout, "height_check.png")
}

// heightsVerdict names the hypothesis the young fraction by height
// favours, and by how much (a difference in binomial ln L).
func heightsVerdict(h *compare.HeightResult) report.Line {
	if len(h.Hypotheses) < 2 {
		return report.Line{Text: fmt.Sprintf("Young fraction against height, split at the %.2f Gyr gyrochrone.", h.SplitAgeGyr), Tone: report.Neutral}
	}
	best, second := 0, 1
	if h.Hypotheses[1].LogL > h.Hypotheses[0].LogL {
		best, second = 1, 0
	}
	for i := 2; i < len(h.Hypotheses); i++ {
		switch {
		case h.Hypotheses[i].LogL > h.Hypotheses[best].LogL:
			best, second = i, best
		case h.Hypotheses[i].LogL > h.Hypotheses[second].LogL:
			second = i
		}
	}
	d := h.Hypotheses[best].LogL - h.Hypotheses[second].LogL
	return report.Line{Tone: report.Neutral, Text: fmt.Sprintf(
		"The young fraction against height (split at the %.2f Gyr gyrochrone) is described better by %s than by %s: binomial Δln L = %.1f. "+
			"This check uses the hypotheses fitted to the period–color plane; it is a consistency check, not a separate test.",
		h.SplitAgeGyr, h.Hypotheses[best].Name, h.Hypotheses[second].Name, d)}
}

// printHeightTable prints the young fraction per |z| bin, data and each
// hypothesis; a bin without stars (or without a prediction) reads n/a.
func printHeightTable(w io.Writer, h *compare.HeightResult) {
	fmt.Fprintf(w, "\nyoung fraction (period below the %.2f Gyr gyrochrone) against |z|:\n", h.SplitAgeGyr)
	fmt.Fprintf(w, "  %-13s %7s %7s %9s", "|z| (pc)", "young", "total", "fraction")
	for _, x := range h.Hypotheses {
		fmt.Fprintf(w, "  %22s", x.Name)
	}
	fmt.Fprintln(w)
	for i := range h.Total {
		fmt.Fprintf(w, "  %5.0f–%-7.0f %7d %7d %s", h.ZEdgesPc[i], h.ZEdgesPc[i+1], h.Young[i], h.Total[i], fixedOrNA("%9.3f", h.Fraction[i]))
		for _, x := range h.Hypotheses {
			fmt.Fprintf(w, "  %s", fixedOrNA("%22.3f", x.Fraction[i]))
		}
		fmt.Fprintln(w)
	}
	for _, x := range h.Hypotheses {
		fmt.Fprintf(w, "binomial ln L, %s: %.1f\n", x.Name, x.LogL)
	}
}
