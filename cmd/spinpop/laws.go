package main

import (
	"fmt"
	"io"
	"runtime"

	"spinpop/internal/figure"
	"spinpop/internal/outset"
	"spinpop/pipeline"
	"spinpop/scenarios"

	"gonum.org/v1/plot/vg"
)

func runLaws(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("laws", "laws SCENARIO --out DIR [--stars N] [--force]",
		"Observe the scenario's population under each spin-down law in turn — three empirical\n"+
			"gyrochronology laws and the wind-torque law plain, with weakened braking and with a stall —\n"+
			"and draw their period–color densities side by side (laws.png), so you see at a glance how\n"+
			"each law shapes the gap. Everything but the law comes from the scenario; the seed is the\n"+
			"same for every panel, so masses, ages and positions are the same stars.", stdout)
	out := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
	stars := fs.Int64("stars", 0, "stars generated per law (default: the scenario's run.stars_generated)")
	force := fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "laws")
	if err != nil {
		return err
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	if *stars < 0 || *stars > scenarios.MaxStars {
		return usageErrorf("--stars must be between 1 and %g (run.stars_generated's range)", float64(scenarios.MaxStars))
	}
	set, err := openOutDir(*out, *force, stderr)
	if err != nil {
		return err
	}
	defer set.Close()
	ctx, stop := signalContext()
	defer stop()

	bars := func(label string, total int64) (func(int64), func()) {
		bar := newProgressBar(label, total)
		return bar.Update, bar.Done
	}
	runs, err := pipeline.CompareLaws(ctx, res, path, *stars, runtime.GOMAXPROCS(0), bars)
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(*out)
		}
		return err
	}
	type lawJSON struct {
		Label        string               `json:"law"`
		CatalogStars int64                `json:"catalog_stars"`
		MedianAgeGyr *float64             `json:"median_age_gyr"` // null: no catalog star
		Counts       []pipeline.StepCount `json:"counts"`
	}
	var laws []lawJSON
	var panels []*figure.Panel
	var lines, warnings []string
	nonEmpty := 0
	for _, lr := range runs {
		t := lr.Tally
		counts := pipeline.StepCounts(t)
		med := pipeline.MedianFromBins(t.AgeEdgesGyr, t.AgeSelected)
		lj := lawJSON{Label: lr.Label, CatalogStars: t.Selected(), Counts: counts}
		if t.Selected() > 0 {
			nonEmpty++
			lj.MedianAgeGyr = &med
		} else {
			warnings = append(warnings, fmt.Sprintf("%s: %v", lr.Label, &pipeline.EmptySelection{What: "this law's catalog", Counts: counts}))
		}
		laws = append(laws, lj)
		p, err := periodColorPlot(fmt.Sprintf("%s: %s stars", lr.Label, thousands(t.Selected())), t, gyroCurves(lr.Gyrochrones))
		if err != nil {
			return err
		}
		panels = append(panels, p)
		lines = append(lines, fmt.Sprintf("%-34s %10d %12s", lr.Label, t.Selected(), gyr(med)))
	}
	rep := map[string]any{"tool": "spinpop", "version": version, "scenario": path, "scenario_sha256": res.Hash(), "laws": laws}
	var empty error
	if nonEmpty == 0 {
		// Said first: there is nothing to draw.
		empty = &pipeline.EmptySelection{What: "every law's catalog", Counts: laws[0].Counts}
		fmt.Fprintf(stdout, "Every catalog is empty: %v.\n\n", empty)
		rep["outcome"], rep["message"] = "empty_selection", empty.Error()
	} else if err := writeLawsFigure(set, runs, panels); err != nil {
		return err
	}
	outputs := append(set.Names(), "laws.json")
	rep["outputs"] = outputs
	if err := writeJSON(set, "laws.json", rep); err != nil {
		return err
	}
	if _, err := publish(set); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "%-34s %10s %12s\n", "spin-down law", "catalog", "median age")
	for _, l := range lines {
		fmt.Fprintln(stdout, l)
	}
	if nonEmpty > 0 {
		for _, w := range warnings {
			fmt.Fprintln(stdout, "warning:", w)
		}
	}
	fmt.Fprintf(stdout, "wrote into %s: %s\n", *out, wordList(outputs))
	if empty != nil {
		return inputError{empty}
	}
	return nil
}

// writeLawsFigure draws the laws' period–color densities, and the
// difference each switched variant makes, into laws.png.
func writeLawsFigure(set *outset.Set, runs []pipeline.LawRun, panels []*figure.Panel) error {
	// A switched variant (weakened braking, the stall) differs from its
	// law plain in a band of the plane that the densities alone hide: a
	// map of the difference shows it, with both variants' gyrochrones.
	for _, lr := range runs {
		if len(lr.On) == 0 {
			continue
		}
		for _, base := range runs {
			if base.Law != lr.Law || len(base.On) != 0 {
				continue
			}
			z := shareDifference(lr.Tally.PeriodColor, base.Tally.PeriodColor)
			p, err := differencePanel(lr.Label+" minus "+base.Label, "difference in share of stars (%)",
				lr.Tally.ColorEdges, lr.Tally.LogPerEdges, z, 0.01, gyroCurves(lr.Gyrochrones))
			if err != nil {
				return err
			}
			panels = append(panels, p)
		}
	}
	// The gyrochrones' colors mean the same ages in every panel: one
	// legend, at the end of each row, names them.
	for i, pn := range panels {
		if i%4 != 3 && i != len(panels)-1 {
			figure.NoLegend(pn.Plot)
		}
	}
	grid := figure.Rows(panels, 4)
	return writeFigure(set, "laws.png", grid, 64*vg.Centimeter, vg.Length(14*len(grid))*vg.Centimeter)
}
