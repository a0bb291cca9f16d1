package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"

	"spinpop/compare"
	"spinpop/internal/outset"
	"spinpop/pipeline"
	"spinpop/scenarios"
)

// compareFlags are the flags every comparison command takes.
type compareFlags struct {
	out, templates *string
	force, asJSON  *bool
	threads        *int
	maxRounds      *int
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

// addRoundsFlag adds --max-rounds to a command whose fits move nuisance
// parameters (compare --fit, test-burst, test-alternatives, heights).
func (f *compareFlags) addRoundsFlag(fs *flag.FlagSet) {
	f.maxRounds = fs.Int("max-rounds", compare.MaxRounds, "most expansions a fit with nuisance parameters makes; raise it when a fit says it stopped still rising")
}

func defaultTemplateDir() string {
	if d, err := os.UserCacheDir(); err == nil {
		return filepath.Join(d, "spinpop", "templates")
	}
	return filepath.Join(os.TempDir(), "spinpop-templates")
}

// outFolder is a command's output folder, opened (locked, checked,
// staged) once the inputs have been checked, so that bad input leaves no
// folder behind.
type outFolder struct {
	dir    string
	force  bool
	sub    string // subfolder of the comparison's files ("fit/" in the demo), or ""
	report string // the command's JSON report, which also tells of an empty selection
	asJSON bool
	set    *outset.Set
	stdout io.Writer
	stderr io.Writer
}

func newOutFolder(f compareFlags, report string, stdout, stderr io.Writer) *outFolder {
	return &outFolder{dir: *f.out, force: *f.force, report: report, asJSON: *f.asJSON, stdout: stdout, stderr: stderr}
}

func (o *outFolder) open() (*outset.Set, error) {
	if o.set != nil {
		return o.set, nil
	}
	var err error
	o.set, err = openOutDir(o.dir, o.force, o.stderr)
	return o.set, err
}

// close removes whatever was not published and unlocks the folder.
func (o *outFolder) close() {
	if o.set != nil {
		o.set.Close()
	}
}

// setupComparison loads the scenario (with its --set overrides), opens the
// output folder and sets the comparison up (see pipeline.SetupComparison);
// rejected catalog rows go to DIR/rejected.csv. A model that selects no
// star is reported in the command's JSON report, published, and an input
// error returned.
func setupComparison(ctx context.Context, arg string, f compareFlags, of *outFolder, stderr io.Writer) (*pipeline.Comparison, error) {
	var sets []string
	if f.sets != nil {
		sets = *f.sets
	}
	res, err := loadScenario(arg, sets)
	if err != nil {
		return nil, err
	}
	return setupResolved(ctx, res, arg, f, of, stderr)
}

// setupResolved is setupComparison for a scenario already resolved (an
// alternative of the scenario arg).
func setupResolved(ctx context.Context, res *scenarios.Resolved, arg string, f compareFlags, of *outFolder, stderr io.Writer) (*pipeline.Comparison, error) {
	if *f.threads < 1 {
		return nil, usageErrorf("--threads must be at least 1")
	}
	maxRounds := 0 // the default
	if f.maxRounds != nil {
		if *f.maxRounds < 1 || *f.maxRounds > 200 {
			return nil, usageErrorf("--max-rounds %d: want 1 to 200 (default %d)", *f.maxRounds, compare.MaxRounds)
		}
		maxRounds = *f.maxRounds
	}
	if err := pipeline.RequireData(res, arg); err != nil {
		return nil, err
	}
	out, err := of.open()
	if err != nil {
		return nil, err
	}
	var bar *progressBar
	defer func() { bar.Done() }()
	c, err := pipeline.SetupComparison(ctx, res, pipeline.ComparisonOptions{
		Source: arg, Workers: *f.threads, TemplateDir: *f.templates, MaxRounds: maxRounds,
		WriteRejected: func(write func(io.Writer) error) error {
			return out.Write(of.sub+"rejected.csv", write)
		},
		TemplateProgress: func(done, total int64) {
			if bar == nil {
				bar = newProgressBar("templates", total)
			}
			bar.Update(done)
		},
		Warn:             func(msg string) { fmt.Fprintln(stderr, "warning:", msg) },
		SequenceProgress: func(msg string) { fmt.Fprintln(stderr, msg) },
	})
	if err != nil {
		if ctx.Err() != nil {
			return nil, interrupted(of.dir)
		}
		if pipeline.IsEmptySelection(err) {
			head := map[string]any{"tool": "spinpop", "version": version, "scenario": arg, "scenario_sha256": res.Hash()}
			return nil, emptyOutcome(out, of.report, head, err, of.stdout, of.asJSON)
		}
		return nil, err
	}
	c.Stage = func(msg string) { fmt.Fprintf(stderr, "fit: %s\n", msg) }
	return c, nil
}

func printDataSummary(w io.Writer, d pipeline.DataSummary) {
	fmt.Fprintf(w, "catalog %s (sha256 %s…): %d rows, %d stars compared, %d left out (each listed in rejected.csv with its reason)\n", d.File, d.SHA256[:16], d.Rows, d.Compared, d.LeftOut)
	if len(d.Unusable) > 0 {
		fmt.Fprintf(w, "  unusable rows: %s\n", tally(d.Unusable))
	}
	fmt.Fprintf(w, "  removed by the catalog cuts: %s\n", tally(d.CutAway))
	reused := "built"
	if d.TplReused {
		reused = "reused"
	}
	fmt.Fprintf(w, "templates %s: %d age bins × %d comparison bins from %d stars\n", reused, d.AgeBins, d.SpaceBins, d.TplStars)
	if s := d.BurstBins.Line(); s != "" {
		fmt.Fprintln(w, s)
	}
	if s := d.Sequence.Line(); s != "" {
		fmt.Fprintln(w, s)
	}
	if d.MaskAgeGyr > 0 {
		fmt.Fprintf(w, "%d catalog stars lie below the gyrochrone of %.3g Gyr (compare.mask_below_age_gyr): cells there hold stars younger than the model describes and are left out, in data and model\n", d.Masked, d.MaskAgeGyr)
	}
	if d.OtherOut > 0 {
		fmt.Fprintf(w, "%d catalog stars lie in cells another explanation leaves out (below its young gyrochrone, in the color columns bluer than its law's reach, or where its templates never reach); every explanation is scored without them\n", d.OtherOut)
	}
	if s := d.ColorReach.Note(); s != "" {
		fmt.Fprintln(w, s)
	}
	if s := d.ColorReach.Warning(); s != "" {
		fmt.Fprintf(w, "warning: %s\n", s)
	}
	if d.Dropped > 0 {
		fmt.Fprintf(w, "warning: %d catalog stars lie in comparison cells that no template star reached; they are left out of the comparison (raise compare.template_stars or use coarser bins to keep them)\n", d.Dropped)
	}
}
