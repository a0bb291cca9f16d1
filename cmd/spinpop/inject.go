package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"spinpop/internal/figure"
	"spinpop/internal/report"
	"spinpop/pipeline"

	"gonum.org/v1/plot/vg"
)

const detectionP = pipeline.DetectionP

func runInject(args []string, stdout, stderr io.Writer) error {
	ctx, stop := signalContext()
	defer stop()
	return injectCmd(ctx, args, stdout, stderr)
}

// injectCmd is the command with its context: cancelling ctx (Ctrl-C) stops it
// and leaves no partial output.
func injectCmd(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inject", "inject SCENARIO --out DIR [--ages-gyr 0.3,0.6,1,2] [--fractions 0.05,0.1,0.2] [--replicates 20]\n"+
		"         [--stars N] [--bootstrap 0] [--null-mocks 200] [--seed N] [--json] [--templates DIR] [--force] [--threads N]",
		"What can the burst test find in a catalog like yours? Mock catalogs of the observed catalog's size\n"+
			"are drawn from the scenario's templates, under its smooth history with a burst injected at each\n"+
			"age and mass fraction, and under the smooth history alone; the whole burst test (both fits, the\n"+
			"calibrated likelihood ratio, the burst age and its 68 % interval) runs on each. Writes into DIR:\n"+
			"inject.json (every number), recovery_map.png (detection rate at p < 0.01 over age × fraction) and\n"+
			"age_bias.png (recovered minus injected burst age); the false-alarm rate of smooth histories is\n"+
			"printed. SCENARIO needs a [data] section (see spinpop examples fit).", stdout)
	cf := addCompareFlags(fs)
	agesS := fs.String("ages-gyr", "0.3,0.6,1,2", "injected burst ages (Gyr, lookback), inside the fit's range of the burst age")
	fracS := fs.String("fractions", "0.05,0.1,0.2", "injected burst mass fractions (share of all mass formed), each in (0, 1)")
	reps := fs.Int("replicates", 20, "mock catalogs per (age, fraction), and of the smooth history for the false-alarm rate")
	stars := fs.Int("stars", 0, "stars per mock catalog (0: as many as the observed catalog compares)")
	boot := fs.Int("bootstrap", 0, "0: calibrate every mock's likelihood ratio against one set of smooth-history mocks (fast);\n"+
		"B ≥ 100: a parametric bootstrap of B replicates per mock, as the burst test does on data (B times slower)")
	nullMocks := fs.Int("null-mocks", 200, "smooth-history mocks that calibrate the likelihood ratio when --bootstrap is 0 (at least 100,\nso that p < 0.01 can be reached)")
	seed := fs.Uint64("seed", 0, "random seed of the mock catalogs (0: run.seed); the templates always use run.seed")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "inject")
	if err != nil {
		return err
	}
	ages, err := floatList(*agesS, "ages-gyr")
	if err != nil {
		return err
	}
	fracs, err := floatList(*fracS, "fractions")
	if err != nil {
		return err
	}
	for _, a := range ages {
		if !(a > 0) {
			return usageErrorf("--ages-gyr: %g is not a burst age; ages are lookback times in Gyr, > 0", a)
		}
	}
	for _, f := range fracs {
		if !(f > 0 && f < 1) {
			return usageErrorf("--fractions: %g is not a burst mass fraction; want a share of all mass in (0, 1), such as 0.1", f)
		}
	}
	if hasDuplicates(ages) || hasDuplicates(fracs) {
		return usageErrorf("--ages-gyr and --fractions must not repeat a value")
	}
	if *reps < 1 {
		return usageErrorf("--replicates must be at least 1 (20 or more give rates to about ±10 %%)")
	}
	if *stars < 0 {
		return usageErrorf("--stars must be a positive number of stars per mock, or 0 for the observed catalog's size")
	}
	if *boot != 0 && *boot < 100 {
		return usageErrorf("--bootstrap %d cannot reach p < %g; use 0 (one calibrated null) or at least 100 replicates", *boot, detectionP)
	}
	if *boot == 0 && *nullMocks < 100 {
		return usageErrorf("--null-mocks %d cannot reach p < %g; use at least 100", *nullMocks, detectionP)
	}
	// Check the injections against the fit's ranges before any template
	// is built: a burst the fit cannot reach would be a wasted hour.
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	if _, _, err := pipeline.CheckInjections(&res.Scenario, ages, fracs); err != nil {
		return injectionUsage(err)
	}

	of := newOutFolder(cf, "inject.json", stdout, stderr)
	defer of.close()
	c, err := setupComparison(ctx, path, cf, of, stderr)
	if err != nil {
		return err
	}
	out := of.set
	opts := pipeline.InjectOptions{AgesGyr: ages, Fractions: fracs, Replicates: *reps, Stars: *stars,
		Bootstrap: *boot, NullMocks: *nullMocks, Seed: *seed}
	bar := newProgressBar("injection", int64(opts.Jobs()))
	opts.Progress = func(done, _ int) { bar.Update(int64(done)) }
	rep, err := c.Inject(ctx, opts)
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return interrupted(of.dir)
		}
		var ie *pipeline.InjectionError
		if errors.As(err, &ie) {
			return injectionUsage(ie)
		}
		return fmt.Errorf("injection–recovery: %w", err)
	}

	mp, err := recoveryMapPlot(rep)
	if err != nil {
		return err
	}
	w := vg.Length(max(16, 4+3.2*float64(len(ages)))) * vg.Centimeter
	h := vg.Length(max(11, 5+2.2*float64(len(fracs)))) * vg.Centimeter
	if err := writeFigure(out, "recovery_map.png", figure.One(mp), w+3*vg.Centimeter, h); err != nil {
		return err
	}
	bp, err := ageBiasPlotInject(rep)
	if err != nil {
		return err
	}
	if err := writePlot(out, "age_bias.png", bp, 18*vg.Centimeter, 12*vg.Centimeter); err != nil {
		return err
	}
	rep.Outputs = append(out.Names(), "inject.json", reportFile)
	if err := writeJSON(out, "inject.json", rep); err != nil {
		return err
	}
	var text strings.Builder
	printInjectReport(&text, rep)
	page := newReport("inject", "what can the burst test find in a catalog like yours?", c.Resolved, strings.Join(c.Resolved.Files, " ← "))
	page.Data = reportData(rep.Data)
	page.Verdict = report.Line{Text: plainWords(text.String()), Tone: report.Neutral}
	if rep.FalseAlarm.Rate > 2*detectionP+0.05 {
		page.Verdict.Tone = report.Caution
		page.Warnings = append(page.Warnings, fmt.Sprintf("Smooth histories raise a false alarm in %s of mocks at p < %g: the test is not calibrated for this catalog.", pct(rep.FalseAlarm.Rate), detectionP))
	}
	return finishReport(out, page, text.String(), rep.Outputs, captions, nil, *cf.asJSON, rep, stdout, "recovery_map.png", "age_bias.png")
}

func hasDuplicates(x []float64) bool {
	s := slices.Sorted(slices.Values(x))
	return len(slices.Compact(s)) != len(x)
}

// injectionUsage turns an injection the fit cannot recover into a usage
// error that names the flag.
func injectionUsage(err error) error {
	var ie *pipeline.InjectionError
	if !errors.As(err, &ie) {
		return err
	}
	switch ie.Option {
	case "ages_gyr":
		return usageErrorf("--ages-gyr: %s", ie.Msg)
	case "fractions":
		return usageErrorf("--fractions: %s", ie.Msg)
	}
	return usageErrorf("%s", ie.Msg)
}

func pct(x float64) string { return fmt.Sprintf("%.0f %%", 100*x) }

func printInjectReport(w io.Writer, r *pipeline.InjectReport) {
	fmt.Fprintf(w, "spinpop %s — injection–recovery, scenario %q (sha256 %s…), seed %d\n", r.Version, r.ScenarioName, r.ScenarioHash[:16], r.Seed)
	printDataSummary(w, r.Data)
	calib := fmt.Sprintf("each likelihood ratio calibrated against %d smooth-history mocks", r.NullMocks)
	if r.Bootstrap > 0 {
		calib = fmt.Sprintf("each mock with its own parametric bootstrap of %d replicates", r.Bootstrap)
	}
	fmt.Fprintf(w, "%d mock catalogs of %d stars per cell, %s; %.1f s\n\n", r.Replicates, r.StarsPerMock, calib, r.Seconds)

	nf := len(r.Fractions)
	header := func(title string) {
		fmt.Fprintln(w, title)
		fmt.Fprintf(w, "  %-10s", "age (Gyr)")
		for _, f := range r.Fractions {
			fmt.Fprintf(w, " %-28s", fmt.Sprintf("fraction %g", f))
		}
		fmt.Fprintln(w)
	}
	header(fmt.Sprintf("detection rate at p < %g (68 %% interval)", detectionP))
	for a, age := range r.AgesGyr {
		fmt.Fprintf(w, "  %-10g", age)
		for f := range nf {
			c := r.Cells[a*nf+f]
			fmt.Fprintf(w, " %-28s", fmt.Sprintf("%s (%.0f–%.0f)", pct(c.DetectionRate), 100*c.DetLo68, 100*c.DetHi68))
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w)
	header("recovered burst age in Gyr: median (16–84 % of mocks); share whose 68 % interval holds the truth")
	for a, age := range r.AgesGyr {
		fmt.Fprintf(w, "  %-10g", age)
		for f := range nf {
			c := r.Cells[a*nf+f]
			fmt.Fprintf(w, " %-28s", fmt.Sprintf("%.3g (%.3g–%.3g) %s", c.MedianAgeGyr, c.AgeQ16Gyr, c.AgeQ84Gyr, pct(c.Coverage68)))
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w)

	who := "a catalog like yours"
	if !r.LikeYours {
		who = fmt.Sprintf("a catalog of %d stars", r.StarsPerMock)
	}
	fmt.Fprintln(w, "In plain words:")
	for a, age := range r.AgesGyr {
		row := r.Cells[a*nf : (a+1)*nf]
		same := true
		for _, c := range row {
			same = same && pct(c.DetectionRate) == pct(row[0].DetectionRate)
		}
		var parts []string
		for f, frac := range r.Fractions {
			switch {
			case same:
				parts = append(parts, fmt.Sprintf("%g %%", 100*frac))
			case f == 0:
				parts = append(parts, fmt.Sprintf("holding %g %% of the mass in %s of cases", 100*frac, pct(row[f].DetectionRate)))
			default:
				parts = append(parts, fmt.Sprintf("%g %% in %s", 100*frac, pct(row[f].DetectionRate)))
			}
		}
		if same {
			list := parts[0]
			if n := len(parts); n > 1 {
				list = strings.Join(parts[:n-1], ", ") + " or " + parts[n-1]
			}
			fmt.Fprintf(w, "  %s detects a burst %g Gyr ago holding %s of the mass in %s of cases;\n", who, age, list, pct(row[0].DetectionRate))
			continue
		}
		fmt.Fprintf(w, "  %s detects a burst %g Gyr ago %s;\n", who, age, strings.Join(parts, ", "))
	}
	fa := r.FalseAlarm
	fmt.Fprintf(w, "  smooth histories give a false alarm (p < %g) in %s of cases (68 %% interval %.0f–%.0f %%; at p < 0.05: %s).\n",
		detectionP, pct(fa.Rate), 100*fa.Lo68, 100*fa.Hi68, pct(fa.Rate05))
	if r.Replicates < 20 {
		fmt.Fprintf(w, "note: with %d mocks per cell every rate is uncertain by about ±%.0f %%; raise --replicates\n", r.Replicates, 100*0.5/math.Sqrt(float64(r.Replicates)))
	}
	fmt.Fprintf(w, "wrote: %s\n", wordList(r.Outputs))
}

// plainWords is the "In plain words" part of the printed injection report,
// as one paragraph.
func plainWords(text string) string {
	_, after, ok := strings.Cut(text, "In plain words:\n")
	if !ok {
		return ""
	}
	var parts []string
	for _, l := range strings.Split(after, "\n") {
		l = strings.TrimSpace(l)
		if l == "" || strings.HasPrefix(l, "wrote:") || strings.HasPrefix(l, "note:") {
			continue
		}
		parts = append(parts, l)
	}
	return strings.Join(parts, " ")
}
