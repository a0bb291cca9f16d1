package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"

	"gonum.org/v1/plot/vg"

	"spinpop/internal/figure"
	"spinpop/internal/outset"
	"spinpop/internal/report"
	"spinpop/model"
	"spinpop/pipeline"
	"spinpop/scenarios"
)

func runSimulate(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("simulate", "simulate SCENARIO --out DIR [--seed N] [--json] [--force]",
		"Make the scenario's synthetic population, observe it through its survey and write into DIR:\n"+
			"catalog.csv (catalog stars), manifest.json (what was run, counts after each selection step)\n"+
			"and PNG plots. SCENARIO is a file or example:NAME (see spinpop examples).", stdout)
	outDir := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
	seed := fs.Uint64("seed", 0, "random seed, overriding run.seed (0 keeps the scenario's)")
	asJSON := fs.Bool("json", false, "print the summary as JSON")
	force := fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there")
	workers := fs.Int("threads", runtime.GOMAXPROCS(0), "worker threads (results do not depend on it)")
	split := addSplitFlags(fs) // simulate_split.go: one run across machines
	yes := fs.Bool("yes", false, "start the run even when its estimated memory or time is beyond this machine")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "simulate")
	if err != nil {
		return err
	}
	if split.active() {
		if *workers < 1 {
			return usageErrorf("--threads must be at least 1")
		}
		return runSimulateSplit(split, path, scenarioSets(fs), *seed, *outDir, *force, *workers, *asJSON, stdout, stderr)
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	if *seed != 0 {
		res.Scenario.Run.Seed = *seed
	}
	if *workers < 1 {
		return usageErrorf("--threads must be at least 1")
	}
	out, err := openOutDir(*outDir, *force, stderr)
	if err != nil {
		return err
	}
	defer out.Close()
	ctx, stop := signalContext()
	defer stop()
	sum, err := simulate(ctx, res, path, out, "", *workers, estimateGate(stderr, *yes))
	if err != nil {
		return err
	}
	if _, err := publish(out); err != nil {
		return err
	}
	if err := printSummary(stdout, sum, *asJSON); err != nil {
		return err
	}
	if sum.CatalogStars == 0 {
		return inputError{fmt.Errorf("%w; wrote only %s", &pipeline.EmptySelection{What: "the catalog", Counts: sum.Counts}, out.Final("manifest.json"))}
	}
	return nil
}

// simulate runs the scenario and writes its outputs into the output set,
// under prefix (a subfolder such as "smooth/", or ""); the caller
// publishes them. A catalog that is empty is no catalog: only the
// manifest is written, which says where the stars went. gate, if not nil,
// sees the run's estimate before it starts (estimateGate).
func simulate(ctx context.Context, res *scenarios.Resolved, path string, out *outset.Set, prefix string, workers int, gate func(pipeline.Estimate) error) (*pipeline.Manifest, error) {
	s := &res.Scenario
	catName := prefix + "catalog.csv"
	var cat *pipeline.CatalogWriter
	var catFile *outset.File
	if s.Output.Catalog {
		var err error
		if catFile, err = out.Create(catName); err != nil {
			return nil, err
		}
		defer func() {
			if catFile != nil {
				catFile.Close()
			}
		}()
		cat = pipeline.NewCatalogWriter(catFile)
	}

	bar := newProgressBar("simulating", s.Run.StarsGenerated)
	sim, err := pipeline.Simulate(ctx, res, pipeline.SimulateOptions{
		Source: path, Workers: workers,
		Progress:  func(done, _ int64) { bar.Update(done) },
		Estimated: gate,
		Visit: func(c *model.Chunk) error {
			// Streamed, so memory does not grow with the catalog; a
			// catalog over the limit stops being written.
			if cat == nil || cat.Rows() > s.Output.CatalogMaxStars {
				return nil
			}
			return cat.Add(c)
		},
	})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return nil, interrupted(out.Dir())
		}
		return nil, err
	}
	sum := &sim.Manifest
	empty := sim.Tally.Selected() == 0

	// Outputs, staged: the output set publishes them together.
	if cat != nil {
		if err := cat.Flush(); err != nil {
			return nil, err
		}
		err := catFile.Close()
		catFile = nil
		if err != nil {
			return nil, err
		}
		if sim.CatalogTooLarge || empty {
			if err := out.Discard(catName); err != nil {
				return nil, err
			}
		} else {
			sum.CatalogWritten = true
			sum.Outputs = append(sum.Outputs, "catalog.csv")
		}
	}
	if s.Output.Plots && !empty {
		names, err := writeSimulationPlots(out, prefix, s, sim.Tally, gyroCurves(sim.Gyrochrones))
		if err != nil {
			return nil, err
		}
		sum.Outputs = append(sum.Outputs, names...)
	}
	sum.Outputs = append(sum.Outputs, "manifest.json", reportFile)
	man := *sum
	man.Resolved = string(res.Canonical())
	if err := writeJSON(out, prefix+"manifest.json", man); err != nil {
		return nil, err
	}
	if err := writeSimulationReport(out, prefix, res, path, sum); err != nil {
		return nil, err
	}
	sum.Gyrochrones = nil
	return sum, nil
}

// gyroCurves are the gyrochrones to overlay on a plot.
func gyroCurves(gs []model.Gyrochrone) []gyroCurve {
	var gc []gyroCurve
	for _, g := range gs {
		gc = append(gc, gyroCurve{AgeGyr: g.AgeGyr, BV: g.BV, PeriodD: g.PeriodD})
	}
	return gc
}

func writeJSON(out *outset.Set, name string, v any) error {
	return out.Write(name, func(w io.Writer) error {
		return encodeJSON(w, v)
	})
}

func writeSimulationPlots(out *outset.Set, prefix string, s *scenarios.Scenario, t *model.Tally, gc []gyroCurve) ([]string, error) {
	var names []string
	title := fmt.Sprintf("%s: %s catalog stars", s.Name, thousands(t.Selected()))
	pc, err := periodColorPlot(title, t, gc)
	if err != nil {
		return nil, err
	}
	if err := writeFigure(out, prefix+"period_color.png", figure.One(pc), 20*vg.Centimeter, 13*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "period_color.png")
	if err := writeFigure(out, prefix+"period_histograms.png", periodHistograms(t, 6), 27*vg.Centimeter, 16*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "period_histograms.png")
	hp, err := heightPlot(t)
	if err != nil {
		return nil, err
	}
	if err := writePlot(out, prefix+"height.png", hp, 15*vg.Centimeter, 10*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "height.png")
	ap, err := ageBiasPlot(t)
	if err != nil {
		return nil, err
	}
	dp, err := detectedFractionPlot(t)
	if err != nil {
		return nil, err
	}
	cp, err := detectedByColorPlot(t)
	if err != nil {
		return nil, err
	}
	if err := writeFigure(out, prefix+"age_selection.png", figure.Layout{figure.Of(ap, dp, cp)}, 40*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "age_selection.png")
	return names, nil
}

// writeJSONFile writes v as indented JSON to a file of its own, whole
// (outside an output set).
func writeJSONFile(path string, v any) error {
	return writeFileAtomic(path, func(w io.Writer) error {
		return encodeJSON(w, v)
	})
}

func printSummary(w io.Writer, s *pipeline.Manifest, asJSON bool) error {
	if asJSON {
		return encodeJSON(w, s)
	}
	if s.CatalogStars == 0 {
		// Said first: every number below describes a survey that saw nothing.
		fmt.Fprintf(w, "The catalog is empty: %v.\n\n", &pipeline.EmptySelection{What: "the catalog", Counts: s.Counts})
	}
	fmt.Fprintf(w, "spinpop %s — scenario %q (sha256 %s…), seed %d\n", s.Version, s.ScenarioName, s.ScenarioHash[:16], s.Seed)
	fmt.Fprintf(w, "%d stars in %.1f s (%.2g stars/s on %d threads)\n\n", s.Counts[0].Stars, s.Seconds, s.StarsPerSecond, s.Threads)
	fmt.Fprintln(w, "selection step           stars      fraction of previous")
	for i, c := range s.Counts {
		frac := ""
		if i > 0 && s.Counts[i-1].Stars > 0 {
			frac = fmt.Sprintf("%6.1f%%", 100*float64(c.Stars)/float64(s.Counts[i-1].Stars))
		}
		fmt.Fprintf(w, "  %-20s %11d   %s\n", c.Step, c.Stars, frac)
	}
	fmt.Fprintf(w, "\ncatalog: %d stars (%d unresolved binaries, %d evolved, %d aliased periods)\n", s.CatalogStars, s.Binaries, s.Evolved, s.Aliased)
	fmt.Fprintf(w, "median age: %s of dwarfs in the field, %s in the catalog\n", gyr(s.MedianAgeGyr.Generated), gyr(s.MedianAgeGyr.Catalog))
	for i, warn := range s.Warnings {
		if i == 0 && s.CatalogStars == 0 {
			continue // said first, above
		}
		fmt.Fprintln(w, "warning:", warn)
	}
	if len(s.Outputs) > 0 {
		fmt.Fprintf(w, "wrote: %s\n", wordList(s.Outputs))
	}
	return nil
}

// gyr formats an age, or a dash when there is none (a median of no stars).
func gyr(x float64) string {
	if math.IsNaN(x) {
		return "— (no stars)"
	}
	return fmt.Sprintf("%.2f Gyr", x)
}

func printJSON(w io.Writer, v any) error {
	return encodeJSON(w, v)
}

// encodeJSON writes v as indented JSON. A number JSON cannot hold (NaN,
// ±Inf) anywhere in v is written null (pipeline.JSONSafe) rather than
// failing the write; values without one are written exactly as
// encoding/json writes them.
func encodeJSON(w io.Writer, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	var uv *json.UnsupportedValueError
	if errors.As(err, &uv) {
		b, err = json.MarshalIndent(pipeline.JSONSafe(v), "", "  ")
	}
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// writeSimulationReport writes simulate's report.html: what the survey saw
// (and any warning) first, then the counts after each selection step.
func writeSimulationReport(out *outset.Set, prefix string, res *scenarios.Resolved, path string, m *pipeline.Manifest) error {
	rep := newReport("simulate", "the population as the survey sees it", res, path)
	first := int64(0)
	if len(m.Counts) > 0 {
		first = m.Counts[0].Stars
	}
	rep.Verdict = report.Line{Tone: report.Neutral, Text: fmt.Sprintf(
		"The survey's catalog holds %s of the %s stars generated (seed %d); the median age is %.2f Gyr in the catalog against %.2f Gyr for all dwarfs in the field.",
		thousands(m.CatalogStars), thousands(first), m.Seed, m.MedianAgeGyr.Catalog, m.MedianAgeGyr.Generated)}
	if len(m.Warnings) > 0 {
		rep.Verdict.Tone = report.Caution
	}
	if m.CatalogStars == 0 {
		rep.Verdict = report.Line{Tone: report.Bad, Text: fmt.Sprintf(
			"The survey's catalog is empty: none of the %s stars generated passed the selection; the table below shows the step that removed the last of them.", thousands(first))}
	}
	rep.Warnings = m.Warnings
	var rows []report.Row
	for i, c := range m.Counts {
		note := ""
		if i > 0 && m.Counts[i-1].Stars > 0 {
			note = fmt.Sprintf("%.1f %% of the step before", 100*float64(c.Stars)/float64(m.Counts[i-1].Stars))
		}
		rows = append(rows, report.Row{Name: c.Step, Value: thousands(c.Stars), Note: note})
	}
	makeup := []report.Row{
		{Name: "catalog stars", Value: thousands(m.CatalogStars)},
		{Name: "unresolved binaries", Value: thousands(m.Binaries)},
		{Name: "evolved", Value: thousands(m.Evolved)},
		{Name: "aliased periods", Value: thousands(m.Aliased), Note: "half or double the true period"},
	}
	rep.Tables = []report.Table{{Title: "Stars after each selection step", Rows: rows}, {Title: "The catalog's make-up", Rows: makeup}}
	var text strings.Builder
	if err := printSummary(&text, m, false); err != nil {
		return err
	}
	rep.Summary = text.String()
	rep.Figures = figures(m.Outputs, captions, "period_color.png", "period_histograms.png", "height.png", "age_selection.png")
	rep.Outputs = otherOutputs(m.Outputs, rep.Figures)
	return writeReport(out, prefix, rep)
}
