package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"spinpop/assemble"
	"spinpop/model"
	"spinpop/scenarios"
)

// lawVariant is one spin-down prescription to compare.
type lawVariant struct {
	label string
	set   func(s *scenarios.Scenario)
}

func lawVariants() []lawVariant {
	empirical := func(name string) func(*scenarios.Scenario) {
		return func(s *scenarios.Scenario) {
			s.Spin.Law = name
			s.Spin.Stall.Enabled = false
			s.Spin.Weakened.Enabled = false
		}
	}
	return []lawVariant{
		{"Barnes (2007)", empirical("barnes2007")},
		{"Mamajek & Hillenbrand (2008)", empirical("mamajek2008")},
		{"Angus et al. (2015)", empirical("angus2015")},
		{"wind torque", func(s *scenarios.Scenario) {
			s.Spin.Law = "torque"
			s.Spin.Stall.Enabled = false
			s.Spin.Weakened.Enabled = false
		}},
		{"wind torque, weakened braking", func(s *scenarios.Scenario) {
			s.Spin.Law = "torque"
			s.Spin.Stall.Enabled = false
			s.Spin.Weakened.Enabled = true
		}},
		{"wind torque, stalled spin-down", func(s *scenarios.Scenario) {
			s.Spin.Law = "torque"
			s.Spin.Stall.Enabled = true
			s.Spin.Weakened.Enabled = false
		}},
	}
}

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

	var panels []*plot.Plot
	fmt.Fprintf(stdout, "%-34s %10s %12s\n", "spin-down law", "catalogue", "median age")
	for _, v := range lawVariants() {
		s := res.Scenario // a copy: each variant starts from the scenario as given
		v.set(&s)
		if *stars > 0 {
			s.Run.StarsGenerated = *stars
		}
		built, err := assemble.Build(&s)
		if err != nil {
			return inputError{fmt.Errorf("%s (%s): %w", path, v.label, err)}
		}
		ce, pe, ze := plotEdges(&s)
		t := model.NewTally(built.AgeEdgesGyr, ce, pe, ze)
		bar := newProgressBar(v.label, s.Run.StarsGenerated)
		var done int64
		err = model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, runtime.GOMAXPROCS(0), built.Population.Fill,
			func(c *model.Chunk) error {
				t.Add(c)
				done += int64(c.N)
				bar.Update(done)
				return nil
			})
		bar.Done()
		if err != nil {
			return fmt.Errorf("interrupted; nothing was written to %s", *out)
		}
		curves := model.Gyrochrones(built.Law, built.Relations, s.Output.GyrochroneAgesGyr, s.Cuts.BVMin, s.Cuts.BVMax, 50)
		var gc []gyroCurve
		for _, g := range curves {
			gc = append(gc, gyroCurve{AgeGyr: g.AgeGyr, BV: g.BV, PeriodD: g.PeriodD})
		}
		p, err := periodColorPlot(fmt.Sprintf("%s (%d stars)", v.label, t.Selected()), t, gc)
		if err != nil {
			return err
		}
		panels = append(panels, p)
		fmt.Fprintf(stdout, "%-34s %10d %9.2f Gyr\n", v.label, t.Selected(), medianFromBins(t.AgeEdgesGyr, t.AgeSelected))
	}
	grid := [][]*plot.Plot{panels[:3], panels[3:]}
	name := filepath.Join(*out, "laws.png")
	if err := writeGrid(name, grid, 42*vg.Centimeter, 24*vg.Centimeter); err != nil {
		return err
	}
	fmt.Fprintln(stdout, "wrote:", name)
	return nil
}
