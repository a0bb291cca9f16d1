package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/model"
	"spinpop/scenarios"
)

// comparison is everything the comparison commands share: the scenario's
// run objects, templates, the observed catalog and its likelihood, and the
// two hypotheses of the burst test.
type comparison struct {
	res          *scenarios.Resolved
	path         string
	s            *scenarios.Scenario
	built        *assemble.Built
	space        compare.Space
	tpl          *compare.Templates
	tplReused    bool
	tplFile      string
	obs          *compare.Observed
	like         *compare.Likelihood
	smooth       compare.HistoryModel
	burst        compare.HistoryModel
	workers      int
	setupSeconds float64
	// Data stars left out because no template star reached their
	// (color, period) cell, and how many such cells there were.
	droppedStars, droppedBins int
}

// compareFlags are the flags every comparison command takes.
type compareFlags struct {
	out, templates *string
	force, asJSON  *bool
	threads        *int
	sets           *stringList // --set overrides; nil for none
}

func addCompareFlags(fs *flag.FlagSet) compareFlags {
	var sets *stringList
	if f := fs.Lookup("set"); f != nil {
		sets, _ = f.Value.(*stringList)
	}
	return compareFlags{
		sets:      sets,
		out:       fs.String("out", "", "output folder (created if missing; must be empty unless --force)"),
		templates: fs.String("templates", defaultTemplateDir(), "folder of cached templates (reused while the scenario parts they depend on are unchanged); \"none\" disables the cache"),
		force:     fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there"),
		asJSON:    fs.Bool("json", false, "print every number as JSON"),
		threads:   fs.Int("threads", runtime.GOMAXPROCS(0), "worker threads (results do not depend on it)"),
	}
}

func defaultTemplateDir() string {
	if d, err := os.UserCacheDir(); err == nil {
		return filepath.Join(d, "spinpop", "templates")
	}
	return filepath.Join(os.TempDir(), "spinpop-templates")
}

// setupComparison loads the scenario, builds or reuses its templates,
// reads and cuts its catalog (rejected rows go to DIR/rejected.csv) and
// prepares the likelihood and the hypotheses.
func setupComparison(ctx context.Context, arg string, f compareFlags, stderr io.Writer) (*comparison, error) {
	start := time.Now()
	var sets []string
	if f.sets != nil {
		sets = *f.sets
	}
	res, err := loadScenario(arg, sets)
	if err != nil {
		return nil, err
	}
	if *f.threads < 1 {
		return nil, usageErrorf("--threads must be at least 1")
	}
	s := &res.Scenario
	if s.Data.File == "" {
		return nil, usageErrorf("%s has no [data] section: name an observed catalog with data.file and map its columns in [data.columns] (see spinpop examples fit)", arg)
	}
	if err := prepareOutDir(*f.out, *f.force); err != nil {
		return nil, err
	}
	c := &comparison{res: res, path: arg, s: s, workers: *f.threads}
	if c.built, err = scenariosBuild(s, arg); err != nil {
		return nil, err
	}
	if c.space, err = assemble.Space(s); err != nil {
		return nil, inputError{fmt.Errorf("%s: %w", arg, err)}
	}
	key, err := assemble.TemplateKey(res)
	if err != nil {
		return nil, err
	}
	build := func() (*compare.Templates, error) {
		bar := newProgressBar("templates", s.Compare.TemplateStars)
		defer bar.Done()
		ints := make([]float64, len(c.built.AgeEdgesGyr)-1)
		for k := range ints {
			ints[k] = c.built.Sampler.BinIntegral(k)
		}
		t, err := compare.BuildTemplates(ctx, c.built.Population, ints, c.built.AgeEdgesGyr, c.space, compare.TemplateOptions{
			Stars: s.Compare.TemplateStars, Seed: s.Run.Seed, ChunkStars: s.Run.ChunkStars, Workers: c.workers,
			Progress: func(done, total int64) { bar.Update(done) },
		})
		if err != nil {
			return nil, err
		}
		t.Key = key
		return t, nil
	}
	if *f.templates == "none" {
		c.tpl, err = build()
	} else {
		c.tpl, c.tplReused, err = compare.Cached(*f.templates, key, build)
		c.tplFile = filepath.Join(*f.templates, key+".tpl")
	}
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted while building templates; nothing was written")
		}
		return nil, fmt.Errorf("templates: %w", err)
	}

	spec := compare.DataSpec{
		Path: res.DataPath, SHA256: s.Data.SHA256, Mapping: assemble.Mapping(s), SunZPc: s.Disk.SunHeightPc,
		Format: s.Data.Format, Extension: s.Data.Extension,
		Cuts: assemble.Cuts(s), Relations: c.built.Relations,
		Open: func() (io.ReadCloser, error) {
			f, err := res.OpenData()
			if err != nil {
				return nil, err
			}
			return f, nil
		},
	}
	err = writeFileAtomic(filepath.Join(*f.out, "rejected.csv"), func(w io.Writer) error {
		var err error
		c.obs, err = compare.ReadObserved(spec, c.space, w)
		return err
	})
	if err != nil {
		return nil, inputError{err}
	}
	if c.obs.N == 0 {
		return nil, inputError{fmt.Errorf("%s: no star of the catalog passes the cuts and lies in the comparison space (cut away: %v; unusable: %v)", res.DataPath, c.obs.CutAway, c.obs.Rejected)}
	}
	c.droppedStars, c.droppedBins = c.obs.DropUnreached(c.tpl)
	if c.like, err = compare.NewLikelihood(c.tpl, c.obs.Counts, assemble.LikeOptions(s)); err != nil {
		return nil, inputError{fmt.Errorf("%s: %w", arg, err)}
	}
	if c.smooth, c.burst, err = assemble.Hypotheses(s, c.built.AgeEdgesGyr); err != nil {
		return nil, inputError{fmt.Errorf("%s: %w", arg, err)}
	}
	c.setupSeconds = time.Since(start).Seconds()
	return c, nil
}

// gyroAt returns the scenario law's gyrochrone of one age as a function of
// B−V, for the height check's young/old split.
func (c *comparison) gyroAt(ageGyr float64) func(bv float64) (float64, bool) {
	return func(bv float64) (float64, bool) {
		m, ok := c.built.Relations.MassFromBV(bv)
		if !ok {
			return 0, false
		}
		pt, _ := c.built.Relations.At(m)
		return model.GyrochronePeriod(c.built.Law, spinStar(m, ageGyr, bv, pt.TeffK))
	}
}

// dataSummary describes the catalog as read.
type dataSummary struct {
	File       string         `json:"file"`
	SHA256     string         `json:"sha256"`
	Rows       int            `json:"rows"`
	Compared   int            `json:"stars_compared"`
	Unusable   map[string]int `json:"unusable_rows"`
	CutAway    map[string]int `json:"cut_away"`
	Templates  string         `json:"templates_file,omitempty"`
	TplReused  bool           `json:"templates_reused"`
	TplStars   int64          `json:"template_stars"`
	AgeBins    int            `json:"age_bins"`
	SpaceBins  int            `json:"comparison_bins"`
	SetupSecs  float64        `json:"setup_seconds"`
	Dropped    int            `json:"stars_in_cells_no_template_reached"`
	ScenarioSH string         `json:"scenario_sha256"`
}

func (c *comparison) dataSummary() dataSummary {
	return dataSummary{
		File: c.res.DataPath, SHA256: c.obs.SHA256, Rows: c.obs.Rows, Compared: c.obs.N, Unusable: c.obs.Rejected, CutAway: c.obs.CutAway,
		Templates: c.tplFile, TplReused: c.tplReused, TplStars: c.tpl.StarsDrawn, AgeBins: c.tpl.NumAgeBins(),
		SpaceBins: c.space.NumColorPeriod(), SetupSecs: c.setupSeconds, ScenarioSH: c.res.Hash(), Dropped: c.droppedStars,
	}
}

func printDataSummary(w io.Writer, d dataSummary) {
	fmt.Fprintf(w, "catalog %s (sha256 %s…): %d rows, %d stars compared\n", d.File, d.SHA256[:16], d.Rows, d.Compared)
	if len(d.Unusable) > 0 {
		fmt.Fprintf(w, "  unusable rows (see rejected.csv): %v\n", d.Unusable)
	}
	fmt.Fprintf(w, "  removed by the catalogue cuts: %v\n", d.CutAway)
	reused := "built"
	if d.TplReused {
		reused = "reused"
	}
	fmt.Fprintf(w, "templates %s: %d age bins × %d comparison bins from %d stars\n", reused, d.AgeBins, d.SpaceBins, d.TplStars)
	if d.Dropped > 0 {
		fmt.Fprintf(w, "warning: %d catalog stars lie in comparison cells that no template star reached; they are left out of the comparison (raise compare.template_stars or use coarser bins to keep them)\n", d.Dropped)
	}
}

// splitAge is the age whose gyrochrone splits young from old stars: the
// user's choice, else compare.split_age_gyr, else the fitted burst age,
// else 0.6 Gyr (the trade's gap; common practice).
func (c *comparison) splitAge(flag float64, burst compare.FitResult) float64 {
	if flag > 0 {
		return flag
	}
	if c.s.Compare.SplitAgeGyr > 0 {
		return c.s.Compare.SplitAgeGyr
	}
	for i, n := range burst.Names {
		if n == c.s.Compare.BurstPart+".age_gyr" {
			return burst.Theta[i]
		}
	}
	return 0.6
}

// heightCheck compares the young fraction against |z| with the two fitted
// hypotheses of the burst test.
func (c *comparison) heightCheck(split float64, smooth, burst compare.FitResult) (*compare.HeightResult, error) {
	return compare.HeightCheck(c.tpl, c.obs, split, c.gyroAt(split), map[string][]float64{
		"smooth history (fit)": smooth.Weights,
		"with burst (fit)":     burst.Weights,
	})
}
