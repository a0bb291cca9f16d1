package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"

	"gonum.org/v1/plot/vg"

	"spinpop/internal/figure"
	"spinpop/model"
	"spinpop/pipeline"
	"spinpop/scenarios"
)

func runSimulate(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("simulate", "simulate SCENARIO --out DIR [--seed N] [--json] [--force]",
		"Make the scenario's synthetic population, observe it through its survey and write into DIR:\n"+
			"catalog.csv (catalog stars), manifest.json (what was run, counts after each selection step)\n"+
			"and PNG plots. SCENARIO is a file or example:NAME (see spinpop examples).", stdout)
	out := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
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
		return runSimulateSplit(split, path, scenarioSets(fs), *seed, *out, *force, *workers, *asJSON, stdout)
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
	if err := prepareOutDir(*out, *force); err != nil {
		return err
	}
	sum, err := simulate(res, path, *out, *workers, estimateGate(stderr, *yes), stderr)
	if err != nil {
		return err
	}
	return printSummary(stdout, sum, *asJSON)
}

// gate, if not nil, sees the run's estimate before it starts (estimateGate).
func simulate(res *scenarios.Resolved, path, dir string, workers int, gate func(pipeline.Estimate) error, stderr io.Writer) (*pipeline.Manifest, error) {
	s := &res.Scenario
	catPath := filepath.Join(dir, "catalog.csv")
	var cat *pipeline.CatalogWriter
	var catTmp *os.File
	if s.Output.Catalog {
		var err error
		if catTmp, err = os.CreateTemp(dir, ".catalog.csv.partial-*"); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		defer func() {
			if catTmp != nil {
				catTmp.Close()
				os.Remove(catTmp.Name())
			}
		}()
		cat = pipeline.NewCatalogWriter(catTmp)
	}

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
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
			if err := cat.Add(c); err != nil {
				return fmt.Errorf("writing %s: %w", catPath, err)
			}
			return nil
		},
	})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted; nothing was written to %s", dir)
		}
		return nil, err
	}
	sum := &sim.Manifest

	// Outputs: the catalog is renamed into place only now, whole.
	if cat != nil && !sim.CatalogTooLarge {
		if err := cat.Flush(); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		if err := catTmp.Close(); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		if err := os.Chmod(catTmp.Name(), 0o644); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		if err := os.Rename(catTmp.Name(), catPath); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		catTmp = nil
		sum.CatalogWritten = true
		sum.Outputs = append(sum.Outputs, "catalog.csv")
	}
	if s.Output.Plots {
		names, err := writeSimulationPlots(dir, s, sim.Tally, gyroCurves(sim.Gyrochrones))
		if err != nil {
			return nil, err
		}
		sum.Outputs = append(sum.Outputs, names...)
	}
	sum.Outputs = append(sum.Outputs, "manifest.json")
	man := *sum
	man.Resolved = string(res.Canonical())
	if err := writeJSON(filepath.Join(dir, "manifest.json"), man); err != nil {
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

func writeJSON(path string, v any) error {
	return writeFileAtomic(path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}

func writeSimulationPlots(dir string, s *scenarios.Scenario, t *model.Tally, gc []gyroCurve) ([]string, error) {
	var names []string
	title := fmt.Sprintf("%s: %s catalog stars", s.Name, thousands(t.Selected()))
	pc, err := periodColorPlot(title, t, gc)
	if err != nil {
		return nil, err
	}
	if err := writeFigure(filepath.Join(dir, "period_color.png"), figure.One(pc), 20*vg.Centimeter, 13*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "period_color.png")
	if err := writeFigure(filepath.Join(dir, "period_histograms.png"), periodHistograms(t, 6), 27*vg.Centimeter, 16*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "period_histograms.png")
	hp, err := heightPlot(t)
	if err != nil {
		return nil, err
	}
	if err := writePlot(filepath.Join(dir, "height.png"), hp, 15*vg.Centimeter, 10*vg.Centimeter); err != nil {
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
	if err := writeFigure(filepath.Join(dir, "age_selection.png"), figure.Layout{figure.Of(ap, dp, cp)}, 40*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "age_selection.png")
	return names, nil
}

func printSummary(w io.Writer, s *pipeline.Manifest, asJSON bool) error {
	if asJSON {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(s)
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
	fmt.Fprintf(w, "median age: %.2f Gyr of dwarfs in the field, %.2f Gyr in the catalog\n", s.MedianAgeGyr.Generated, s.MedianAgeGyr.Catalog)
	for _, warn := range s.Warnings {
		fmt.Fprintln(w, "warning:", warn)
	}
	if len(s.Outputs) > 0 {
		fmt.Fprintf(w, "wrote: %s\n", wordList(s.Outputs))
	}
	return nil
}

func printJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
