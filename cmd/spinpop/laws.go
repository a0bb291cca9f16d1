package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"

	"spinpop/internal/figure"
	"spinpop/pipeline"

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
	if *stars < 0 {
		return usageErrorf("--stars must be positive")
	}
	if err := prepareOutDir(*out, *force); err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()

	bars := func(label string, total int64) (func(int64), func()) {
		bar := newProgressBar(label, total)
		return bar.Update, bar.Done
	}
	fmt.Fprintf(stdout, "%-34s %10s %12s\n", "spin-down law", "catalog", "median age")
	runs, err := pipeline.CompareLaws(ctx, res, path, *stars, runtime.GOMAXPROCS(0), bars)
	if err != nil {
		if pipeline.IsInputError(err) {
			return err
		}
		return fmt.Errorf("interrupted; nothing was written to %s", *out)
	}
	var panels []*figure.Panel
	for _, lr := range runs {
		t := lr.Tally
		p, err := periodColorPlot(fmt.Sprintf("%s: %s stars", lr.Label, thousands(t.Selected())), t, gyroCurves(lr.Gyrochrones))
		if err != nil {
			return err
		}
		panels = append(panels, p)
		fmt.Fprintf(stdout, "%-34s %10d %9.2f Gyr\n", lr.Label, t.Selected(), pipeline.MedianFromBins(t.AgeEdgesGyr, t.AgeSelected))
	}
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
	name := filepath.Join(*out, "laws.png")
	if err := writeFigure(name, grid, 64*vg.Centimeter, vg.Length(14*len(grid))*vg.Centimeter); err != nil {
		return err
	}
	fmt.Fprintln(stdout, "wrote:", name)
	return nil
}
