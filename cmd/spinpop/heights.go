package main

import (
	"fmt"
	"io"
	"maps"

	"spinpop/compare"
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
	h, err := c.Heights(ctx, *split)
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
	outputs := append(out.Names(), "heights.json")
	rep := map[string]any{
		"tool": "spinpop", "version": version, "scenario": path, "scenario_sha256": c.Resolved.Hash(), "data": c.DataSummary(),
		"outputs": outputs,
	}
	maps.Copy(rep, pipeline.HeightReport(h))
	if err := writeJSON(out, "heights.json", rep); err != nil {
		return err
	}
	if _, err := publish(out); err != nil {
		return err
	}
	if *cf.asJSON {
		return printJSON(stdout, rep)
	}
	printDataSummary(stdout, c.DataSummary())
	printHeightTable(stdout, h)
	fmt.Fprintf(stdout, "wrote: %s\n", wordList(outputs))
	return nil
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
