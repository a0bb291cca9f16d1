package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"

	"spinpop/pipeline"
)

var errNoMockStars = errors.New("no catalog star")

func runMock(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("mock", "mock SCENARIO --out FILE --stars N [--seed N] [--parallax-error-mas X] [--truth]",
		"Draw a mock observed catalog of N catalog stars from a scenario — selection included — in\n"+
			"the form an observed catalog takes: star id, period, B−V, apparent V, parallax (with\n"+
			"Gaussian error) and ICRS position. Use it to make invented test catalogs, or to see what a\n"+
			"catalog of your size would look like under a hypothesis. The first N catalog stars in\n"+
			"chunk order are kept, which is a random subsample. With --truth the file also holds what\n"+
			"only the model knows (true age, mass, binarity, true period, detected) and the observed\n"+
			"stars whose period the survey did not measure (detected = 0, period empty).", stdout)
	out := fs.String("out", "", "catalog file to write (must not exist unless --force)")
	n := fs.Int64("stars", 0, "catalog stars to keep")
	seed := fs.Uint64("seed", 0, "random seed, overriding run.seed (0 keeps the scenario's)")
	plxErr := fs.Float64("parallax-error-mas", 0.02, "standard deviation of the parallax error (mas)")
	force := fs.Bool("force", false, "replace an existing file")
	truth := fs.Bool("truth", false, "add the true age, mass, binarity, period and detection, and list undetected stars too")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "mock")
	if err != nil {
		return err
	}
	if *out == "" {
		return usageErrorf("--out FILE is required")
	}
	if *n <= 0 {
		return usageErrorf("--stars must be a positive number of catalog stars")
	}
	if !(*plxErr >= 0) {
		return usageErrorf("--parallax-error-mas must be ≥ 0")
	}
	if _, err := os.Stat(*out); err == nil && !*force {
		return usageErrorf("%s exists; choose another name or pass --force to replace it", *out)
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	if *seed != 0 {
		res.Scenario.Run.Seed = *seed
	}
	s := &res.Scenario
	ctx, stop := signalContext()
	defer stop()
	built, err := pipeline.Build(&res.Scenario, path)
	if err != nil {
		return err // before the file is created
	}
	var kept int64
	bar := newProgressBar("mock", *n)
	err = writeFileAtomic(*out, func(w io.Writer) error {
		var err error
		kept, err = pipeline.Mock(ctx, res, pipeline.MockOptions{Source: path, Stars: *n, ParallaxErrorMas: *plxErr, Truth: *truth,
			Workers: runtime.GOMAXPROCS(0), Built: built, Progress: func(k, _ int64) { bar.Update(k) }}, w)
		if err == nil && kept == 0 {
			return errNoMockStars // a catalog of no stars is not written
		}
		return err
	})
	bar.Done()
	drawn := s.Run.StarsGenerated * pipeline.MockDrawFactor
	switch {
	case ctx.Err() != nil:
		return runFailuref("interrupted; %s was not written", *out)
	case errors.Is(err, errNoMockStars):
		counts, cerr := pipeline.SelectionCounts(ctx, res, path, min(drawn, 1_000_000), runtime.GOMAXPROCS(0))
		if cerr != nil {
			return cerr
		}
		return inputError{fmt.Errorf("%s was not written: %w (%d stars drawn, %d × run.stars_generated)",
			*out, &pipeline.EmptySelection{What: "the mock catalog", Counts: counts}, drawn, pipeline.MockDrawFactor)}
	case err != nil:
		return err
	}
	if kept < *n {
		// The draw is bounded (pipeline.MockDrawFactor) so that a survey
		// that selects almost nothing cannot run for ever; say so first.
		fmt.Fprintf(stdout, "warning: only %d of the %d stars asked for: the scenario's survey selected %d catalog stars among the %d drawn (at most %d × run.stars_generated); raise run.stars_generated for more\n",
			kept, *n, kept, drawn, pipeline.MockDrawFactor)
	}
	if *truth {
		fmt.Fprintf(stdout, "wrote %d catalog stars to %s, with the truth and the observed stars not in the catalog\n", kept, *out)
	} else {
		fmt.Fprintf(stdout, "wrote %d stars to %s\n", kept, *out)
	}
	return nil
}
