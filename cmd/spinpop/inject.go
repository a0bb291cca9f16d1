package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"gonum.org/v1/plot/vg"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/compare/stats"
	"spinpop/scenarios"
)

// detectionP is the p-value below which the burst test counts as a
// detection (the threshold; common practice, no source).
const detectionP = 0.01

func runInject(args []string, stdout, stderr io.Writer) error {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
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
	ageParam, fracParam, err := checkInjections(&res.Scenario, ages, fracs)
	if err != nil {
		return err
	}

	c, err := setupComparison(ctx, path, cf, stderr)
	if err != nil {
		return err
	}
	n := *stars
	if n == 0 {
		n = c.obs.N
	}
	sweep := compare.InjectionSweep{
		BurstAgesGyr: ages, BurstFractions: fracs, Replicates: *reps, NStars: n,
		Seed: c.s.Run.Seed, Workers: c.workers, Bootstrap: *boot, NullMocks: *nullMocks,
		AgeParam: ageParam, FractionParam: fracParam,
	}
	if *seed != 0 {
		sweep.Seed = *seed
	}
	jobs := *reps * (1 + len(ages)*len(fracs))
	if *boot == 0 {
		jobs += *nullMocks
	}
	bar := newProgressBar("injection", int64(jobs))
	sweep.Progress = func(done, _ int) { bar.Update(int64(done)) }
	start := time.Now()
	ir, err := compare.InjectRecover(ctx, c.tpl, assemble.LikeOptions(c.s), c.smooth, c.burst, sweep)
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("interrupted; nothing but rejected.csv was written to %s", *cf.out)
		}
		return fmt.Errorf("injection–recovery: %w", err)
	}
	rep, err := newInjectReport(c, sweep, ir, n == c.obs.N)
	if err != nil {
		return err
	}
	rep.Seconds = time.Since(start).Seconds()

	dir := *cf.out
	mp, err := recoveryMapPlot(rep)
	if err != nil {
		return err
	}
	w := vg.Length(max(16, 4+3.2*float64(len(ages)))) * vg.Centimeter
	h := vg.Length(max(11, 5+2.2*float64(len(fracs)))) * vg.Centimeter
	if err := writePlot(filepath.Join(dir, "recovery_map.png"), mp, w, h); err != nil {
		return err
	}
	bp, err := ageBiasPlotInject(rep)
	if err != nil {
		return err
	}
	if err := writePlot(filepath.Join(dir, "age_bias.png"), bp, 18*vg.Centimeter, 12*vg.Centimeter); err != nil {
		return err
	}
	rep.Outputs = []string{"rejected.csv", "recovery_map.png", "age_bias.png", "inject.json"}
	if err := writeJSON(filepath.Join(dir, "inject.json"), rep); err != nil {
		return err
	}
	if *cf.asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	printInjectReport(stdout, rep)
	return nil
}

func hasDuplicates(x []float64) bool {
	s := slices.Sorted(slices.Values(x))
	return len(slices.Compact(s)) != len(x)
}

// checkInjections returns the burst model's age and fraction parameter
// names, and says which injected values the fit could not recover: an
// injected age outside the free age's range, a fraction outside the free
// fraction's range, or ages beyond the history.
func checkInjections(s *scenarios.Scenario, ages, fracs []float64) (ageParam, fracParam string, err error) {
	part := s.Compare.BurstPart
	ageParam, fracParam = part+".age_gyr", part+".mass_fraction"
	// The same rule as scenarios.Hypotheses: without any free parameter of
	// the burst part, the default ones are freed.
	free := s.Compare.Free
	if !slices.ContainsFunc(free, func(f scenarios.FreeParam) bool { return strings.HasPrefix(f.Path, "history."+part+".") }) {
		free = append(slices.Clone(free), scenarios.DefaultFree(part, s.History.MaxAgeGyr)...)
	}
	var ageFree, fracFree *scenarios.FreeParam
	for i, f := range free {
		switch f.Path {
		case "history." + ageParam:
			ageFree = &free[i]
		case "history." + fracParam:
			fracFree = &free[i]
		}
	}
	if ageFree == nil {
		return "", "", usageErrorf("injection–recovery measures how well the burst age is found, but compare.free does not free history.%s; add it", ageParam)
	}
	lo, hi := ageFree.Min, ageFree.Max
	for _, a := range ages {
		if a < lo || a > hi {
			return "", "", usageErrorf("--ages-gyr: %g Gyr lies outside [%g, %g] Gyr, the range in which the fit looks for the burst (compare.free history.%s)", a, lo, hi, ageParam)
		}
	}
	if fracFree != nil {
		for _, f := range fracs {
			if f < fracFree.Min || f > fracFree.Max {
				return "", "", usageErrorf("--fractions: %g lies outside [%g, %g], the range the fit allows (compare.free history.%s)", f, fracFree.Min, fracFree.Max, fracParam)
			}
		}
	}
	return ageParam, fracParam, nil
}

// injectReport is what inject writes to inject.json and prints.
type injectReport struct {
	Tool           string      `json:"tool"`
	Version        string      `json:"version"`
	Scenario       string      `json:"scenario"`
	ScenarioName   string      `json:"scenario_name"`
	ScenarioHash   string      `json:"scenario_sha256"`
	Data           dataSummary `json:"data"`
	Method         string      `json:"calibration"`
	Seed           uint64      `json:"seed"`
	Threads        int         `json:"threads"`
	StarsPerMock   int         `json:"stars_per_mock"`
	LikeYours      bool        `json:"mock_size_is_catalog_size"`
	Replicates     int         `json:"replicates"`
	NullMocks      int         `json:"null_mocks"`
	Bootstrap      int         `json:"bootstrap_per_mock"`
	DetectionP     float64     `json:"detection_p_below"`
	AgeParam       string      `json:"age_parameter"`
	FractionParam  string      `json:"fraction_parameter"`
	AgesGyr        []float64   `json:"injected_ages_gyr"`
	Fractions      []float64   `json:"injected_fractions"`
	FalseAlarm     falseAlarms `json:"false_alarms"`
	Cells          []injCell   `json:"cells"`
	NullLRs        []float64   `json:"null_likelihood_ratios,omitempty"`
	Seconds        float64     `json:"seconds"`
	Outputs        []string    `json:"outputs"`
	FalseAlarmNote string      `json:"false_alarm_note"`
}

// falseAlarms are the smooth-history mocks' results.
type falseAlarms struct {
	Mocks   int       `json:"mocks"`
	Rate    float64   `json:"rate_p_below_0_01"`
	Lo68    float64   `json:"rate_p_below_0_01_lo68"`
	Hi68    float64   `json:"rate_p_below_0_01_hi68"`
	Rate05  float64   `json:"rate_p_below_0_05"`
	Lo68_05 float64   `json:"rate_p_below_0_05_lo68"`
	Hi68_05 float64   `json:"rate_p_below_0_05_hi68"`
	PValues []float64 `json:"p_values"`
}

// injCell is one injected (age, fraction) and what became of it.
type injCell struct {
	AgeGyr           float64   `json:"injected_age_gyr"`
	Fraction         float64   `json:"injected_fraction"`
	Detected         int       `json:"detected"`
	DetectionRate    float64   `json:"detection_rate"`
	DetLo68          float64   `json:"detection_rate_lo68"`
	DetHi68          float64   `json:"detection_rate_hi68"`
	MedianAgeGyr     float64   `json:"recovered_age_median_gyr"`
	AgeQ16Gyr        float64   `json:"recovered_age_q16_gyr"`
	AgeQ84Gyr        float64   `json:"recovered_age_q84_gyr"`
	AgeBiasMedianGyr float64   `json:"age_bias_median_gyr"`
	AgeBiasQ16Gyr    float64   `json:"age_bias_q16_gyr"`
	AgeBiasQ84Gyr    float64   `json:"age_bias_q84_gyr"`
	Coverage68       float64   `json:"coverage_of_68_interval"`
	PValues          []float64 `json:"p_values"`
	LRs              []float64 `json:"likelihood_ratios"`
	RecoveredAgesGyr []float64 `json:"recovered_ages_gyr"`
}

func newInjectReport(c *comparison, sw compare.InjectionSweep, ir *compare.InjectionResult, likeYours bool) (*injectReport, error) {
	rep := &injectReport{
		Tool: "spinpop", Version: version, Scenario: c.path, ScenarioName: c.s.Name, ScenarioHash: c.res.Hash(),
		Data: c.dataSummary(), Method: ir.Method, Seed: sw.Seed, Threads: c.workers, StarsPerMock: sw.NStars,
		LikeYours: likeYours, Replicates: sw.Replicates, Bootstrap: sw.Bootstrap, DetectionP: detectionP,
		AgeParam: sw.AgeParam, FractionParam: sw.FractionParam, AgesGyr: sw.BurstAgesGyr, Fractions: sw.BurstFractions,
		NullLRs:        finiteOnly(ir.NullLRs),
		FalseAlarmNote: "share of smooth-history mocks in which the burst test reaches the p-value named; a well-calibrated test gives about that share",
	}
	if sw.Bootstrap == 0 {
		rep.NullMocks = len(ir.NullLRs)
	}
	fa := falseAlarms{Mocks: len(ir.FalseAlarmP), PValues: ir.FalseAlarmP}
	var k01, k05 int
	for _, p := range ir.FalseAlarmP {
		if p < detectionP {
			k01++
		}
		if p < 0.05 {
			k05++
		}
	}
	var err error
	if fa.Mocks > 0 {
		fa.Rate, fa.Rate05 = float64(k01)/float64(fa.Mocks), float64(k05)/float64(fa.Mocks)
		if fa.Lo68, fa.Hi68, err = stats.WilsonInterval(k01, fa.Mocks, 0.6827); err != nil {
			return nil, err
		}
		if fa.Lo68_05, fa.Hi68_05, err = stats.WilsonInterval(k05, fa.Mocks, 0.6827); err != nil {
			return nil, err
		}
	}
	rep.FalseAlarm = fa
	for _, cell := range ir.Cells {
		ages := slices.Sorted(slices.Values(cell.RecoveredAgesGyr))
		bias := make([]float64, len(ages))
		for i, a := range ages {
			bias[i] = a - cell.AgeGyr
		}
		rep.Cells = append(rep.Cells, injCell{
			AgeGyr: cell.AgeGyr, Fraction: cell.Fraction, Detected: cell.Detected, DetectionRate: cell.DetectionRate,
			DetLo68: cell.DetLo68, DetHi68: cell.DetHi68,
			MedianAgeGyr: quantile(ages, 0.5), AgeQ16Gyr: quantile(ages, 0.16), AgeQ84Gyr: quantile(ages, 0.84),
			AgeBiasMedianGyr: quantile(bias, 0.5), AgeBiasQ16Gyr: quantile(bias, 0.16), AgeBiasQ84Gyr: quantile(bias, 0.84),
			Coverage68: cell.Coverage68, PValues: cell.PValues, LRs: finiteOnly(cell.LRs), RecoveredAgesGyr: cell.RecoveredAgesGyr,
		})
	}
	return rep, nil
}

// finiteOnly replaces values JSON cannot hold (NaN, ±Inf) by −1, which no
// likelihood ratio (≥ 0) takes.
func finiteOnly(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			v = -1
		}
		out[i] = v
	}
	return out
}

func pct(x float64) string { return fmt.Sprintf("%.0f %%", 100*x) }

func printInjectReport(w io.Writer, r *injectReport) {
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
	fmt.Fprintf(w, "wrote: %v\n", r.Outputs)
}
