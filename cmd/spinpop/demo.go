package main

import (
	"fmt"
	"io"
	"path/filepath"
	"runtime"
)

func runDemo(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", "demo --out DIR [--force]",
		"Run the whole job on the built-in examples of the invented Larkspur survey: simulate the\n"+
			"smooth-history and the burst scenarios (DIR/smooth, DIR/burst), then test the invented\n"+
			"Larkspur rotation catalog for a burst with example:fit (DIR/fit): fits, bootstrap,\n"+
			"evidence, burst-age profile and height check. The catalog was drawn from a hidden-truth\n"+
			"scenario (testdata/demo-truth.toml), so you can see whether the method finds it.", stdout)
	out := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
	force := fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there")
	templates := fs.String("templates", defaultTemplateDir(), "folder of cached templates; \"none\" disables the cache")
	replicates := fs.Int("replicates", -1, "bootstrap replicates of the burst test (default: the example's 1000)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usageErrorf("demo takes no scenario; it runs the built-in examples (got %s)", wordList(pos))
	}
	// The whole demo is one output set: its three subfolders appear
	// together at the end, or not at all.
	ctx, stop := signalContext()
	defer stop()
	asJSON := false
	threads := runtime.GOMAXPROCS(0)
	fitDir := filepath.Join(*out, "fit")
	cf := compareFlags{out: out, templates: templates, force: force, asJSON: &asJSON, threads: &threads}
	of := newOutFolder(cf, "fit/test.json", stdout, stderr)
	of.sub = "fit/"
	defer of.close()
	set, err := of.open()
	if err != nil {
		return err
	}
	for _, name := range []string{"smooth", "burst"} {
		res, err := loadScenario("example:"+name, nil)
		if err != nil {
			return err
		}
		fmt.Fprintf(stdout, "== example:%s → %s\n", name, filepath.Join(*out, name))
		sum, err := simulate(ctx, res, "example:"+name, set, name+"/", threads, nil)
		if err != nil {
			return err
		}
		if err := printSummary(stdout, sum, false); err != nil {
			return err
		}
		fmt.Fprintln(stdout)
	}

	fmt.Fprintf(stdout, "== example:fit → %s: does the Larkspur catalog demand a burst?\n", fitDir)
	c, err := setupComparison(ctx, "example:fit", cf, of, stderr)
	if err != nil {
		return err
	}
	b := c.Scenario.Compare.Bootstrap
	if *replicates >= 0 {
		b = *replicates
	}
	res, err := burstTest(ctx, c, b)
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(*out)
		}
		return err
	}
	outputs, err := writeBurstOutputs(set, "fit/", c, res)
	if err != nil {
		return err
	}
	if _, err := publish(set); err != nil {
		return err
	}
	printDataSummary(stdout, c.DataSummary())
	printBurstSummary(stdout, res)
	fmt.Fprintf(stdout, "wrote: %s\n", wordList(outputs))
	fmt.Fprintln(stdout, "\nThe hidden truth (testdata/demo-truth.toml): a burst 0.75 Gyr ago, width 0.06 Gyr, 15 % of the mass, on a smooth history declining with a 6 Gyr timescale.")
	return nil
}
