package pipeline

import (
	"context"
	"fmt"
	"math"
	"time"

	"spinpop/assemble"
	"spinpop/internal/grid"
	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/scenarios"
)

// Version is the tool's version, recorded in every manifest and report.
const Version = "0.1.0"

// SimulateOptions tune Simulate. The zero value runs on every core and
// keeps nothing but the tally.
type SimulateOptions struct {
	// Source is how the user named the scenario (a path, or example:NAME);
	// it is recorded in the manifest and prefixes errors.
	Source string
	// Workers is the number of worker goroutines; 0 means GOMAXPROCS.
	// Results do not depend on it.
	Workers int
	// KeepCatalog keeps the catalog stars in memory (Simulation.Catalog),
	// unless there are more than output.catalog_max_stars of them.
	KeepCatalog bool
	// Visit, if set, is handed every chunk in chunk order, after the tally
	// has counted it (for instance to stream the catalog to a file with
	// a CatalogWriter). It must not keep the chunk.
	Visit func(c *model.Chunk) error
	// Progress, if set, is told how many stars are done.
	Progress func(done, total int64)
	// Chunks, if set, runs only these chunks of the run, exactly as the
	// whole run would make them (one part of a run split across machines;
	// see MergeParts). The tally and catalog are then the part's.
	Chunks *model.ChunkRange
	// Estimated, if set, is handed the run's estimated cost (EstimateRun)
	// before any star is made; an error from it stops the run (for
	// instance Estimate.Refusal).
	Estimated func(Estimate) error
}

// Simulation is what a simulated scenario gives: the run objects, the
// tally of every selection step, the gyrochrones, the manifest's numbers
// and, when asked for, the catalog itself.
type Simulation struct {
	Resolved *scenarios.Resolved
	Built    *assemble.Built
	Tally    *model.Tally
	// Catalog holds the catalog stars (every row Selected), with
	// SimulateOptions.KeepCatalog; nil otherwise or when there were too
	// many (CatalogTooLarge).
	Catalog *model.Chunk
	// CatalogTooLarge says that the catalog held more than
	// output.catalog_max_stars stars: a catalog file must not be written.
	CatalogTooLarge bool
	Gyrochrones     []model.Gyrochrone
	// Manifest holds the numbers of manifest.json; its Outputs and
	// Resolved are left for the writer of the files to fill.
	Manifest Manifest
}

// Manifest is what a run reports, on stdout and in manifest.json.
type Manifest struct {
	Tool           string           `json:"tool"`
	Version        string           `json:"version"`
	Scenario       string           `json:"scenario"`
	ScenarioName   string           `json:"scenario_name"`
	ScenarioHash   string           `json:"scenario_sha256"`
	Files          []string         `json:"scenario_files"`
	Seed           uint64           `json:"seed"`
	Threads        int              `json:"threads"`
	Counts         []StepCount      `json:"counts"`
	CatalogStars   int64            `json:"catalog_stars"`
	CatalogWritten bool             `json:"catalog_written"`
	Binaries       int64            `json:"catalog_binaries"`
	Evolved        int64            `json:"catalog_evolved"`
	Aliased        int64            `json:"catalog_aliased_periods"`
	MedianAgeGyr   AgeMedians       `json:"median_age_gyr"`
	DetectedByAge  []AgeFraction    `json:"detected_fraction_by_age"`
	DetectedByBV   []ColorFraction  `json:"detected_fraction_by_color"`
	Warnings       []string         `json:"warnings"`
	Outputs        []string         `json:"outputs"`
	Seconds        float64          `json:"seconds"`
	StarsPerSecond float64          `json:"stars_per_second"`
	Resolved       string           `json:"resolved_scenario,omitempty"`
	Gyrochrones    []GyrochroneJSON `json:"gyrochrones,omitempty"`
}

// StepCount is the number of stars left after one selection step.
type StepCount struct {
	Step  string `json:"step"`
	Stars int64  `json:"stars"`
}

// AgeMedians are the median ages of the field's dwarfs and of the
// catalog: the selection's age bias in one pair of numbers.
type AgeMedians struct {
	Generated float64 `json:"generated_dwarfs"`
	Catalog   float64 `json:"catalog"`
}

// AgeFraction is the survey's detection efficiency in one age bin.
type AgeFraction struct {
	AgeLoGyr float64 `json:"age_lo_gyr"`
	AgeHiGyr float64 `json:"age_hi_gyr"`
	InRange  int64   `json:"dwarfs_passing_cuts"`
	Detected int64   `json:"period_detected"`
}

// ColorFraction is the survey's detection efficiency in one color bin.
type ColorFraction struct {
	BVLo     float64 `json:"b_v_lo"`
	BVHi     float64 `json:"b_v_hi"`
	Eligible int64   `json:"dwarfs_passing_cuts"`
	Detected int64   `json:"period_detected"`
}

// GyrochroneJSON is a gyrochrone as the manifest holds it (no NaN).
type GyrochroneJSON struct {
	AgeGyr  float64   `json:"age_gyr"`
	BV      []float64 `json:"b_v"`
	PeriodD []float64 `json:"period_d"`
}

// TallyEdges are the edges of a run's summary histograms: B−V across the
// catalog's color cut, log10 period and |z|.
func TallyEdges(s *scenarios.Scenario) (color, logPer, absZ []float64) {
	color = grid.Linspace(s.Cuts.BVMin, s.Cuts.BVMax, 46)
	// Field stars with spot modulation rotate in ~0.3–100 d; wider windows
	// would squash the structure users look for into a few pixels.
	lo := math.Log10(max(s.Cuts.PeriodMinD, 0.3))
	hi := math.Log10(min(s.Cuts.PeriodMaxD, 100))
	logPer = grid.Linspace(lo, hi, 61)
	zmax := 1500.0
	if f := s.Survey.Field; f.DistanceMaxPc > 0 {
		zmax = f.DistanceMaxPc + math.Abs(s.Disk.SunHeightPc)
	}
	absZ = grid.Linspace(0, zmax, 31)
	return
}

// Build builds a scenario's run objects; its errors are the user's
// (combinations of keys the loader cannot judge alone), prefixed with
// source.
func Build(s *scenarios.Scenario, source string) (*assemble.Built, error) {
	b, err := assemble.Build(s)
	if err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", source, err)}
	}
	return b, nil
}

// Simulate makes and observes the scenario's population: every star of
// run.stars_generated, in chunks whose random streams depend only on the
// seed and the chunk, so the result is the same for any number of workers.
func Simulate(ctx context.Context, res *scenarios.Resolved, opts SimulateOptions) (*Simulation, error) {
	s := &res.Scenario
	built, err := Build(s, opts.Source)
	if err != nil {
		return nil, err
	}
	workers := opts.Workers
	if workers <= 0 {
		workers = defaultWorkers()
	}
	ce, pe, ze := TallyEdges(s)
	sim := &Simulation{Resolved: res, Built: built, Tally: model.NewTally(built.AgeEdgesGyr, ce, pe, ze)}
	tally := sim.Tally
	var catalog *model.Chunk
	if opts.KeepCatalog {
		catalog = model.NewChunk(0)
	}
	var done int64
	start := time.Now()
	total := s.Run.StarsGenerated
	run := func(fill model.FillFunc, visit func(*model.Chunk) error) error {
		return model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, workers, fill, visit)
	}
	if r := opts.Chunks; r != nil {
		if n := model.NumChunks(s.Run.StarsGenerated, s.Run.ChunkStars); r.First < 0 || r.Last > n || r.Last <= r.First {
			return nil, InputError{fmt.Errorf("%s: chunks %s are not a non-empty part of the run's %d chunks", opts.Source, r, n)}
		}
		total = min(int64(r.Last)*int64(s.Run.ChunkStars), s.Run.StarsGenerated) - int64(r.First)*int64(s.Run.ChunkStars)
		run = func(fill model.FillFunc, visit func(*model.Chunk) error) error {
			return model.RunChunkRange(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, *r, workers, fill, visit)
		}
	}
	if opts.Estimated != nil {
		if err := opts.Estimated(EstimateRun(built, total, s.Run.ChunkStars, workers, opts.KeepCatalog)); err != nil {
			return nil, err
		}
	}
	err = run(built.Population.Fill,
		func(c *model.Chunk) error {
			tally.Add(c)
			if catalog != nil && tally.Selected() <= s.Output.CatalogMaxStars {
				for i := 0; i < c.N; i++ {
					if c.Flags[i].Selected() {
						catalog.AppendRow(c, i)
					}
				}
			}
			if opts.Visit != nil {
				if err := opts.Visit(c); err != nil {
					return err
				}
			}
			done += int64(c.N)
			if opts.Progress != nil {
				opts.Progress(done, total)
			}
			return nil
		})
	if err != nil {
		return nil, err
	}
	elapsed := time.Since(start).Seconds()
	sim.CatalogTooLarge = tally.Selected() > s.Output.CatalogMaxStars
	if !sim.CatalogTooLarge {
		sim.Catalog = catalog
	}
	sim.fillManifest(opts.Source, workers, elapsed, total)
	return sim, nil
}

// MergeParts makes the Simulation of a whole run from the tallies of its
// parts (each made with SimulateOptions.Chunks), merged in the order
// given, which must be chunk order: the tally, manifest and gyrochrones of
// the one-machine run, with seconds the parts' summed time. No catalog
// is kept: the parts' catalog rows concatenate in the same order.
func MergeParts(res *scenarios.Resolved, source string, parts []*model.Tally, workers int, seconds float64) (*Simulation, error) {
	s := &res.Scenario
	built, err := Build(s, source)
	if err != nil {
		return nil, err
	}
	ce, pe, ze := TallyEdges(s)
	sim := &Simulation{Resolved: res, Built: built, Tally: model.NewTally(built.AgeEdgesGyr, ce, pe, ze)}
	for i, p := range parts {
		if err := sim.Tally.Merge(p); err != nil {
			return nil, fmt.Errorf("part %d of %d: %w", i+1, len(parts), err)
		}
	}
	if got := sim.Tally.StepCounts[0]; got != s.Run.StarsGenerated {
		return nil, fmt.Errorf("the parts hold %d stars, not the run's %d: a part is missing or counted twice", got, s.Run.StarsGenerated)
	}
	sim.CatalogTooLarge = sim.Tally.Selected() > s.Output.CatalogMaxStars
	sim.fillManifest(source, workers, seconds, s.Run.StarsGenerated)
	return sim, nil
}

// fillManifest fills the manifest's numbers from the tally.
func (sim *Simulation) fillManifest(source string, workers int, elapsed float64, stars int64) {
	res, s, built, tally := sim.Resolved, &sim.Resolved.Scenario, sim.Built, sim.Tally
	m := &sim.Manifest
	*m = Manifest{
		Tool: "spinpop", Version: Version, Scenario: source, ScenarioName: s.Name, ScenarioHash: res.Hash(), Files: res.Files,
		Seed: s.Run.Seed, Threads: workers, CatalogStars: tally.Selected(),
		Binaries: tally.Binaries, Evolved: tally.Evolved, Aliased: tally.Aliased,
		Seconds: elapsed, StarsPerSecond: float64(stars) / max(elapsed, 1e-9),
		Warnings: []string{},
	}
	for i, name := range model.Steps {
		m.Counts = append(m.Counts, StepCount{name, tally.StepCounts[i]})
	}
	m.MedianAgeGyr = AgeMedians{MedianFromBins(tally.AgeEdgesGyr, tally.AgeGenerated), MedianFromBins(tally.AgeEdgesGyr, tally.AgeSelected)}
	for k := range tally.AgeEligible {
		m.DetectedByAge = append(m.DetectedByAge, AgeFraction{tally.AgeEdgesGyr[k], tally.AgeEdgesGyr[k+1], tally.AgeEligible[k], tally.AgeDetected[k]})
	}
	for k := range tally.ColorEligible {
		m.DetectedByBV = append(m.DetectedByBV, ColorFraction{tally.ColorEdges[k], tally.ColorEdges[k+1], tally.ColorEligible[k], tally.ColorDetected[k]})
	}
	if tally.Selected() == 0 {
		// First, since every other number describes a survey that saw nothing.
		m.Warnings = append(m.Warnings, (&EmptySelection{What: "the catalog", Counts: m.Counts}).Error())
	}
	m.Warnings = append(m.Warnings, rangeWarnings(s, built, tally)...)

	sim.Gyrochrones = model.Gyrochrones(built.Law, built.Relations, s.Output.GyrochroneAgesGyr, s.Cuts.BVMin, s.Cuts.BVMax, 60)
	for _, g := range sim.Gyrochrones {
		m.Gyrochrones = append(m.Gyrochrones, GyrochroneJSON{g.AgeGyr, g.BV, nanToZero(g.PeriodD)})
	}
	if s.Output.Catalog && sim.CatalogTooLarge {
		m.Warnings = append(m.Warnings, fmt.Sprintf("the catalog has %d stars, more than output.catalog_max_stars = %d: catalog.csv was not written (raise the limit or lower run.stars_generated)", tally.Selected(), s.Output.CatalogMaxStars))
	}
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

// MedianFromBins is the median of a binned distribution, interpolated
// linearly inside the bin that holds it.
func MedianFromBins(edges []float64, n []int64) float64 {
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
		w = append(w, fmt.Sprintf("%d dwarfs that pass the magnitude, color and main-sequence cuts (%.1f%%) lie outside the calibrated color or age range of spin-down law %q and have no period; they are flagged and never enter the catalog", t.OutsideLaw, 100*frac, s.Spin.Law))
	}
	if spec, ok := spin.Lookup(s.Spin.Law); ok && spec.Caveats != nil {
		w = append(w, spec.Caveats(s.Disk.AgeBinEdgesGyr[0])...)
	}
	return w
}
