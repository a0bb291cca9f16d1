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
	"runtime"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"spinpop/assemble"
	"spinpop/model"
	"spinpop/scenarios"
)

func runSimulate(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("simulate", "simulate SCENARIO --out DIR [--seed N] [--json] [--force]",
		"Make the scenario's synthetic population, observe it through its survey and write into DIR:\n"+
			"catalog.csv (catalogue stars), manifest.json (what was run, counts after each selection step)\n"+
			"and PNG plots. SCENARIO is a file or example:NAME (see spinpop examples).", stdout)
	out := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
	seed := fs.Uint64("seed", 0, "random seed, overriding run.seed (0 keeps the scenario's)")
	asJSON := fs.Bool("json", false, "print the summary as JSON")
	force := fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there")
	workers := fs.Int("threads", runtime.GOMAXPROCS(0), "worker threads (results do not depend on it)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "simulate")
	if err != nil {
		return err
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
	sum, err := simulate(res, path, *out, *workers, stderr)
	if err != nil {
		return err
	}
	return printSummary(stdout, sum, *asJSON)
}

// summary is what a run reports, on stdout and in manifest.json.
type summary struct {
	Tool           string          `json:"tool"`
	Version        string          `json:"version"`
	Scenario       string          `json:"scenario"`
	ScenarioName   string          `json:"scenario_name"`
	ScenarioHash   string          `json:"scenario_sha256"`
	Files          []string        `json:"scenario_files"`
	Seed           uint64          `json:"seed"`
	Threads        int             `json:"threads"`
	Counts         []stepCount     `json:"counts"`
	CatalogStars   int64           `json:"catalog_stars"`
	CatalogWritten bool            `json:"catalog_written"`
	Binaries       int64           `json:"catalog_binaries"`
	Evolved        int64           `json:"catalog_evolved"`
	Aliased        int64           `json:"catalog_aliased_periods"`
	MedianAgeGyr   ageMedians      `json:"median_age_gyr"`
	DetectedByAge  []binFraction   `json:"detected_fraction_by_age"`
	DetectedByBV   []colorFraction `json:"detected_fraction_by_color"`
	Warnings       []string        `json:"warnings"`
	Outputs        []string        `json:"outputs"`
	Seconds        float64         `json:"seconds"`
	StarsPerSecond float64         `json:"stars_per_second"`
	Resolved       string          `json:"resolved_scenario,omitempty"`
	Gyrochrones    []gyroCurveJSON `json:"gyrochrones,omitempty"`
}

type stepCount struct {
	Step  string `json:"step"`
	Stars int64  `json:"stars"`
}

type ageMedians struct {
	Generated float64 `json:"generated_dwarfs"`
	Catalog   float64 `json:"catalog"`
}

type binFraction struct {
	AgeLoGyr float64 `json:"age_lo_gyr"`
	AgeHiGyr float64 `json:"age_hi_gyr"`
	InRange  int64   `json:"dwarfs_passing_cuts"`
	Detected int64   `json:"period_detected"`
}

type colorFraction struct {
	BVLo     float64 `json:"b_v_lo"`
	BVHi     float64 `json:"b_v_hi"`
	Eligible int64   `json:"dwarfs_passing_cuts"`
	Detected int64   `json:"period_detected"`
}

type gyroCurveJSON struct {
	AgeGyr  float64   `json:"age_gyr"`
	BV      []float64 `json:"b_v"`
	PeriodD []float64 `json:"period_d"`
}

// Comparison-space edges of the plots: B−V and log10 period.
func plotEdges(s *scenarios.Scenario) (color, logPer, absZ []float64) {
	color = linspace(s.Cuts.BVMin, s.Cuts.BVMax, 46)
	// Field stars with spot modulation rotate in ~0.3–100 d; wider windows
	// would squash the structure users look for into a few pixels.
	lo := math.Log10(max(s.Cuts.PeriodMinD, 0.3))
	hi := math.Log10(min(s.Cuts.PeriodMaxD, 100))
	logPer = linspace(lo, hi, 61)
	zmax := 1500.0
	if f := s.Survey.Field; f.DistanceMaxPc > 0 {
		zmax = f.DistanceMaxPc + math.Abs(s.Disk.SunHeightPc)
	}
	absZ = linspace(0, zmax, 31)
	return
}

func linspace(a, b float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = a + (b-a)*float64(i)/float64(n-1)
	}
	return out
}

func simulate(res *scenarios.Resolved, path, dir string, workers int, stderr io.Writer) (*summary, error) {
	s := &res.Scenario
	built, err := assemble.Build(s)
	if err != nil {
		return nil, inputError{fmt.Errorf("%s: %w", path, err)}
	}
	ce, pe, ze := plotEdges(s)
	tally := model.NewTally(built.AgeEdgesGyr, ce, pe, ze)

	var cat *catalogWriter
	var catTmp *os.File
	catPath := filepath.Join(dir, "catalog.csv")
	if s.Output.Catalog {
		if catTmp, err = os.CreateTemp(dir, ".catalog.csv.partial-*"); err != nil {
			return nil, fmt.Errorf("writing %s: %w", catPath, err)
		}
		defer func() {
			if catTmp != nil {
				catTmp.Close()
				os.Remove(catTmp.Name())
			}
		}()
		cat = newCatalogWriter(catTmp)
	}
	catalogDropped := false

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgressBar("simulating", s.Run.StarsGenerated)
	var done int64
	start := time.Now()
	err = model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, workers, built.Population.Fill,
		func(c *model.Chunk) error {
			tally.Add(c)
			if cat != nil && !catalogDropped {
				if err := cat.add(c); err != nil {
					return fmt.Errorf("writing %s: %w", catPath, err)
				}
				if cat.rows > s.Output.CatalogMaxStars {
					catalogDropped = true
				}
			}
			done += int64(c.N)
			bar.Update(done)
			return nil
		})
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted; nothing was written to %s", dir)
		}
		return nil, err
	}
	elapsed := time.Since(start).Seconds()

	sum := &summary{
		Tool: "spinpop", Version: version, Scenario: path, ScenarioName: s.Name, ScenarioHash: res.Hash(), Files: res.Files,
		Seed: s.Run.Seed, Threads: workers, CatalogStars: tally.Selected(),
		Binaries: tally.Binaries, Evolved: tally.Evolved, Aliased: tally.Aliased,
		Seconds: elapsed, StarsPerSecond: float64(s.Run.StarsGenerated) / max(elapsed, 1e-9),
		Warnings: []string{},
	}
	for i, name := range model.Steps {
		sum.Counts = append(sum.Counts, stepCount{name, tally.StepCounts[i]})
	}
	sum.MedianAgeGyr = ageMedians{medianFromBins(tally.AgeEdgesGyr, tally.AgeGenerated), medianFromBins(tally.AgeEdgesGyr, tally.AgeSelected)}
	for k := range tally.AgeEligible {
		sum.DetectedByAge = append(sum.DetectedByAge, binFraction{tally.AgeEdgesGyr[k], tally.AgeEdgesGyr[k+1], tally.AgeEligible[k], tally.AgeDetected[k]})
	}
	for k := range tally.ColorEligible {
		sum.DetectedByBV = append(sum.DetectedByBV, colorFraction{tally.ColorEdges[k], tally.ColorEdges[k+1], tally.ColorEligible[k], tally.ColorDetected[k]})
	}
	sum.Warnings = append(sum.Warnings, rangeWarnings(s, built, tally)...)

	curves := model.Gyrochrones(built.Law, built.Relations, s.Output.GyrochroneAgesGyr, s.Cuts.BVMin, s.Cuts.BVMax, 60)
	var gc []gyroCurve
	for _, g := range curves {
		gc = append(gc, gyroCurve{AgeGyr: g.AgeGyr, BV: g.BV, PeriodD: g.PeriodD})
		sum.Gyrochrones = append(sum.Gyrochrones, gyroCurveJSON{g.AgeGyr, g.BV, nanToZero(g.PeriodD)})
	}

	// Outputs: the catalogue is renamed into place only now, whole.
	if cat != nil {
		if catalogDropped {
			sum.Warnings = append(sum.Warnings, fmt.Sprintf("the catalogue has %d stars, more than output.catalog_max_stars = %d: catalog.csv was not written (raise the limit or lower run.stars_generated)", tally.Selected(), s.Output.CatalogMaxStars))
		} else {
			if err := cat.flush(); err != nil {
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
	}
	if s.Output.Plots {
		names, err := writeSimulationPlots(dir, s, tally, gc)
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

func nanToZero(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		if !math.IsNaN(v) {
			out[i] = v
		}
	}
	return out
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
	title := fmt.Sprintf("%s: catalogue stars, %d", s.Name, t.Selected())
	pc, err := periodColorPlot(title, t, gc)
	if err != nil {
		return nil, err
	}
	if err := writePlot(filepath.Join(dir, "period_color.png"), pc, 18*vg.Centimeter, 13*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "period_color.png")
	grid := periodHistograms(t, 6)
	if err := writeGrid(filepath.Join(dir, "period_histograms.png"), grid, 27*vg.Centimeter, 16*vg.Centimeter); err != nil {
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
	if err := writeGrid(filepath.Join(dir, "age_selection.png"), [][]*plot.Plot{{ap, dp, cp}}, 36*vg.Centimeter, 11*vg.Centimeter); err != nil {
		return nil, err
	}
	names = append(names, "age_selection.png")
	return names, nil
}

// medianFromBins is the median of a binned distribution, interpolated
// linearly inside the bin that holds it.
func medianFromBins(edges []float64, n []int64) float64 {
	var tot int64
	for _, v := range n {
		tot += v
	}
	if tot == 0 {
		return math.NaN()
	}
	half := float64(tot) / 2
	acc := 0.0
	for k, v := range n {
		if acc+float64(v) >= half && v > 0 {
			return edges[k] + (edges[k+1]-edges[k])*(half-acc)/float64(v)
		}
		acc += float64(v)
	}
	return edges[len(edges)-1]
}

// rangeWarnings says where a result could mislead: the model used outside
// the range it was calibrated on.
func rangeWarnings(s *scenarios.Scenario, b *assemble.Built, t *model.Tally) []string {
	var w []string
	if t.OutsideLaw > 0 {
		frac := float64(t.OutsideLaw) / float64(max(t.StepCounts[4], 1))
		w = append(w, fmt.Sprintf("%d dwarfs that pass the magnitude, color and main-sequence cuts (%.1f%%) lie outside the calibrated color or age range of spin-down law %q and have no period; they are flagged and never enter the catalogue", t.OutsideLaw, 100*frac, s.Spin.Law))
	}
	if s.Spin.Law != "torque" && s.Disk.AgeBinEdgesGyr[0] < 0.1 {
		w = append(w, "empirical gyrochronology laws are calibrated on stars older than about 0.1 Gyr; younger stars get no period")
	}
	if s.Spin.Law == "torque" {
		w = append(w, "the torque law keeps the moment of inertia constant: periods of stars younger than about 0.1 Gyr (no pre-main-sequence contraction) are crude")
	}
	w = append(w, "the main-sequence relation table is recalled from memory of a published mean dwarf sequence, not read from it (see testdata/SOURCES-dwarf-sequence.md); treat absolute magnitudes as uncertain at the 0.1–0.2 mag level")
	return w
}

func printSummary(w io.Writer, s *summary, asJSON bool) error {
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
	fmt.Fprintf(w, "\ncatalogue: %d stars (%d unresolved binaries, %d evolved, %d aliased periods)\n", s.CatalogStars, s.Binaries, s.Evolved, s.Aliased)
	fmt.Fprintf(w, "median age: %.2f Gyr of dwarfs in the field, %.2f Gyr in the catalogue\n", s.MedianAgeGyr.Generated, s.MedianAgeGyr.Catalog)
	for _, warn := range s.Warnings {
		fmt.Fprintln(w, "warning:", warn)
	}
	if len(s.Outputs) > 0 {
		fmt.Fprintf(w, "wrote: %v\n", s.Outputs)
	}
	return nil
}

func printJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
