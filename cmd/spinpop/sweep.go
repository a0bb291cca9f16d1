package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/plot"

	"spinpop/sweep"
)

// The sweep command: one scenario over a grid of choices (a sweep file,
// see package sweep), run here on a worker pool or sent to a Slurm
// cluster as a job array, one folder per point, merged into one table
// with plots and, when the work holds the burst test, a systematic-error
// table.

// Environment a sweep's array tasks read besides the sweep package's own.
const (
	envSweepTemplates = "SPINPOP_SWEEP_TEMPLATES"
	envSweepThreads   = "SPINPOP_SWEEP_THREADS"
)

func runSweep(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("sweep", "sweep SWEEP.toml --out DIR [--dry-run] [--workers N] [--threads N] [--slurm …]\n"+
		"       spinpop sweep --merge DIR\n"+
		"       spinpop sweep --task   (inside a Slurm job array only)",
		"Run one scenario over a grid of choices. SWEEP.toml names a base scenario, the keys to vary\n"+
			"(axes of values, ranges, every choice of a key, seeds; crossed or zipped) and the work at each\n"+
			"point (simulate, compare, test-burst, test-alternatives). Each point runs in\n"+
			"DIR/points/<scenario hash>/; the points are merged into DIR/results.csv and results.json,\n"+
			"plots of the headline numbers against each axis (DIR/plots/), and, when the work holds the\n"+
			"burst test, a systematic-error table (systematics.md, .csv, .json). Run it again to go on:\n"+
			"finished points are skipped, failed and missing ones are run. --dry-run lists the points and\n"+
			"their hashes (with --out, their status).\n"+
			"--slurm sends the points that are not finished to a Slurm cluster as one job array plus a merge\n"+
			"job that runs after it; DIR must be on a file system every node sees.", stdout)
	out := fs.String("out", "", "the sweep's folder (created if missing; an existing one must hold this sweep, and is resumed)")
	dry := fs.Bool("dry-run", false, "list the points and their scenario hashes; run nothing")
	asJSON := fs.Bool("json", false, "print the plan (dry run) or the summary as JSON")
	workers := fs.Int("workers", 1, "points run at the same time on this machine")
	threads := fs.Int("threads", 0, "threads per point (0: this machine's threads divided among the workers; results do not depend on it)")
	templates := fs.String("templates", defaultTemplateDir(), "folder of cached templates, shared by every point (and by concurrent Slurm tasks); \"none\" disables the cache")
	merge := fs.String("merge", "", "merge the points already in this sweep folder (table, plots, systematics) and exit; what the Slurm merge job runs")
	task := fs.Bool("task", false, "run this Slurm array task's points (the job array's scripts call this; it reads SPINPOP_SWEEP_* and SLURM_ARRAY_TASK_ID)")
	var so slurmFlags
	so.add(fs)
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	switch {
	case *task:
		if len(pos) > 0 || *merge != "" || *dry || so.slurm {
			return usageErrorf("sweep --task takes nothing else: it reads its share from the environment the job array sets")
		}
		return sweepTask(stderr)
	case *merge != "":
		if len(pos) > 0 || *dry || so.slurm {
			return usageErrorf("sweep --merge DIR takes no sweep file and no other mode: it merges what DIR holds")
		}
		return sweepMerge(*merge, stdout)
	}
	if len(pos) != 1 {
		return usageErrorf("sweep takes one sweep file; got %d arguments (see spinpop sweep --help)", len(pos))
	}
	if !so.slurm && so.stray() != "" {
		return usageErrorf("%s apply only with --slurm", so.stray())
	}
	if *workers < 1 {
		return usageErrorf("--workers must be at least 1")
	}
	if *threads < 0 {
		return usageErrorf("--threads must be 0 (automatic) or more")
	}
	if *threads == 0 {
		*threads = max(1, runtime.GOMAXPROCS(0)/(*workers))
	}
	s, err := sweep.Load(pos[0])
	if err != nil {
		return inputError{err}
	}
	plan, err := s.Plan(0)
	if err != nil {
		return inputError{err}
	}
	if *dry {
		return printPlan(stdout, plan, *out, *asJSON)
	}
	if err := prepareSweepDir(*out, plan); err != nil {
		return err
	}
	if so.slurm {
		return sweepSubmit(s, plan, *out, so, *templates, *threads, stdout)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	progressOff = *workers > 1 // parallel points would draw their bars over each other
	log := io.Writer(stderr)
	if progressOff {
		sp := newSweepProgress(stderr, len(plan.Points), time.Second)
		defer sp.Close()
		log = sp
	}
	r := &sweep.Runner{Out: *out, Workers: *workers, Log: log,
		Worker: &pointWorker{templates: *templates, threads: *threads}}
	sum, runErr := r.Run(ctx, s, plan)
	if runErr != nil && ctx.Err() != nil {
		return fmt.Errorf("interrupted: the points that finished are kept in %s; run the same command again to go on", *out)
	}
	if runErr != nil {
		return runErr
	}
	t, written, err := finishSweep(*out, plan)
	if err != nil {
		return err
	}
	if *asJSON {
		if err := printJSON(stdout, map[string]any{"ran": sum.Ran, "skipped": sum.Skipped, "failed": sum.Failed,
			"failures": sum.Failures, "done": t.Done, "missing": t.Missing, "outputs": written}); err != nil {
			return err
		}
	} else {
		printSweepSummary(stdout, *out, sum, t, written)
	}
	if sum.Failed > 0 {
		return fmt.Errorf("%d of %d points failed (see %s); fix the cause and run the same command again: finished points are skipped",
			sum.Failed, len(plan.Points), filepath.Join(*out, "results.csv"))
	}
	return nil
}

// prepareSweepDir makes the sweep's folder, or checks that an existing one
// is this sweep's (its plan.json names the same sweep) or empty: a sweep
// resumes in its folder, but never writes into someone else's.
func prepareSweepDir(dir string, plan *sweep.Plan) error {
	if dir == "" {
		return usageErrorf("--out DIR is required: name the sweep's folder")
	}
	entries, err := os.ReadDir(dir)
	switch {
	case os.IsNotExist(err):
		return os.MkdirAll(dir, 0o755)
	case err != nil:
		return usageErrorf("sweep folder %s cannot be read: %v", dir, err)
	case len(entries) == 0:
		return nil
	}
	old, err := sweep.ReadPlan(filepath.Join(dir, "plan.json"))
	if err != nil {
		return usageErrorf("folder %s is not empty and holds no sweep (no readable plan.json); choose a new folder", dir)
	}
	if old.Name != plan.Name {
		return usageErrorf("folder %s holds sweep %q, not %q; choose another folder (a sweep resumes only in its own)", dir, old.Name, plan.Name)
	}
	return nil
}

func printPlan(w io.Writer, plan *sweep.Plan, out string, asJSON bool) error {
	status := func(sweep.PlanPoint) string { return "" }
	if out != "" {
		status = func(pp sweep.PlanPoint) string {
			st, _ := sweep.PointStatus(out, pp.Hash, plan.Work)
			return st
		}
	}
	if asJSON {
		type row struct {
			sweep.PlanPoint
			Status string `json:"status,omitempty"`
		}
		rows := make([]row, len(plan.Points))
		for i, pp := range plan.Points {
			rows[i] = row{pp, status(pp)}
		}
		return printJSON(w, map[string]any{"sweep": plan.Sweep, "name": plan.Name, "scenario": plan.Scenario,
			"work": plan.Work, "axes": plan.Axes, "points": rows})
	}
	fmt.Fprintf(w, "sweep %q: %d points of %s, work %s\n", plan.Name, len(plan.Points), plan.Scenario, strings.Join(plan.Work, ", "))
	head := []string{"point", "hash"}
	if out != "" {
		head = append(head, "status")
	}
	head = append(head, plan.Axes...)
	rows := [][]string{head}
	counts := map[string]int{}
	for _, pp := range plan.Points {
		r := []string{strconv.Itoa(pp.Index), pp.Hash[:12]}
		if out != "" {
			st := status(pp)
			counts[st]++
			r = append(r, st)
		}
		for _, v := range pp.Values {
			r = append(r, axisCell(v))
		}
		rows = append(rows, r)
	}
	printColumns(w, rows)
	if out != "" {
		fmt.Fprintf(w, "in %s: %d done, %d failed, %d missing (a run or a Slurm submission does the failed and missing ones)\n",
			out, counts[sweep.StatusDone], counts[sweep.StatusFailed], counts[sweep.StatusMissing])
	}
	return nil
}

// printColumns prints rows as left-aligned columns.
func printColumns(w io.Writer, rows [][]string) {
	var width []int
	for _, r := range rows {
		for i, c := range r {
			if i >= len(width) {
				width = append(width, 0)
			}
			width[i] = max(width[i], len([]rune(c)))
		}
	}
	for _, r := range rows {
		var b strings.Builder
		for i, c := range r {
			if i > 0 {
				b.WriteString("  ")
			}
			b.WriteString(c)
			if i < len(r)-1 {
				b.WriteString(strings.Repeat(" ", width[i]-len([]rune(c))))
			}
		}
		fmt.Fprintln(w, b.String())
	}
}

// finishSweep merges the points into the table and writes the plots and,
// for a burst test, the systematics. It returns the table and the files
// written (relative to out).
func finishSweep(out string, plan *sweep.Plan) (*sweep.Table, []string, error) {
	t, err := sweep.Merge(out, plan)
	if err != nil {
		return nil, nil, err
	}
	written := []string{"plan.json", "results.csv", "results.json"}
	plots, err := writeSweepPlots(out, t)
	if err != nil {
		return nil, nil, err
	}
	written = append(written, plots...)
	if sy := sweep.NewSystematics(t); sy != nil {
		names, err := sweep.WriteSystematics(out, sy)
		if err != nil {
			return nil, nil, err
		}
		written = append(written, names...)
		row, err := systematicsPlot(sy)
		if err != nil {
			return nil, nil, err
		}
		if row != nil {
			if err := writeFigureFile(filepath.Join(out, "systematics.png"), legendsInside([][]*plot.Plot{row}), systematicsWidth, systematicsHeight(len(sy.Choices))); err != nil {
				return nil, nil, err
			}
			written = append(written, "systematics.png")
		}
	}
	return t, written, nil
}

func printSweepSummary(w io.Writer, out string, sum *sweep.Summary, t *sweep.Table, written []string) {
	if t.Failed > 0 {
		fmt.Fprintf(w, "warning: %d point(s) failed; their rows in results.csv say why, and the plots and tables leave them out\n", t.Failed)
	}
	fmt.Fprintf(w, "sweep %q in %s: %d points ran, %d were already done, %d failed\n", t.Name, out, sum.Ran, sum.Skipped, sum.Failed)
	idx := make([]int, 0, len(sum.Failures))
	for i := range sum.Failures {
		idx = append(idx, i)
	}
	sort.Ints(idx)
	for _, i := range idx {
		fmt.Fprintf(w, "  point %d failed: %s\n", i, firstLineOf(sum.Failures[i]))
	}
	fmt.Fprintf(w, "table: %d done, %d failed, %d missing\n", t.Done, t.Failed, t.Missing)
	fmt.Fprintf(w, "wrote: %s\n", wordList(written))
}

func firstLineOf(s string) string {
	first, _, _ := strings.Cut(s, "\n")
	return first
}

// sweepMerge is the merge job: the table, plots and systematics of what
// the folder holds.
func sweepMerge(out string, stdout io.Writer) error {
	plan, err := sweep.ReadPlan(filepath.Join(out, "plan.json"))
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return usageErrorf("%s holds no sweep (no plan.json); run spinpop sweep SWEEP.toml --out %s first", out, out)
		}
		return err
	}
	t, written, err := finishSweep(out, plan)
	if err != nil {
		return err
	}
	if t.Failed > 0 || t.Missing > 0 {
		fmt.Fprintf(stdout, "warning: %d point(s) failed and %d are missing; the table says which, and the plots leave them out\n", t.Failed, t.Missing)
	}
	fmt.Fprintf(stdout, "sweep %q in %s: %d done, %d failed, %d missing\nwrote: %s\n", t.Name, out, t.Done, t.Failed, t.Missing, wordList(written))
	return nil
}

// sweepTask is one array task: its points, one after the other.
func sweepTask(stderr io.Writer) error {
	t, err := sweep.TaskFromEnv()
	if err != nil {
		return usageErrorf("%v", err)
	}
	threads := runtime.GOMAXPROCS(0)
	if v := os.Getenv(envSweepThreads); v != "" {
		if n, err := strconv.Atoi(v); err == nil && n > 0 {
			threads = n
		}
	}
	templates := os.Getenv(envSweepTemplates)
	if templates == "" {
		templates = defaultTemplateDir()
	}
	progressOff = true
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	return sweep.RunTask(ctx, t, &pointWorker{templates: templates, threads: threads, log: stderr})
}

// slurmFlags are the options passed through to sbatch.
type slurmFlags struct {
	slurm                         bool
	partition, account, time, mem string
	cpus, perTask, maxRunning     int
	sbatchArgs                    stringList
	fs                            *flag.FlagSet
}

func (f *slurmFlags) add(fs *flag.FlagSet) {
	f.fs = fs
	fs.BoolVar(&f.slurm, "slurm", false, "submit to Slurm as a job array (one task per point, or --points-per-task) plus a dependent merge job, instead of running here")
	fs.StringVar(&f.partition, "partition", "", "with --slurm: sbatch --partition")
	fs.StringVar(&f.account, "account", "", "with --slurm: sbatch --account")
	fs.StringVar(&f.time, "time", "", "with --slurm: sbatch --time, per task (e.g. 2:00:00)")
	fs.StringVar(&f.mem, "mem", "", "with --slurm: sbatch --mem, per task (e.g. 4G)")
	fs.IntVar(&f.cpus, "cpus-per-task", 0, "with --slurm: sbatch --cpus-per-task, also the threads of each point (0: the cluster's default, one thread)")
	fs.IntVar(&f.perTask, "points-per-task", 1, "with --slurm: points run one after another in one array task (batches cheap points)")
	fs.IntVar(&f.maxRunning, "max-running", 0, "with --slurm: array tasks running at once (--array=…%N; 0: no limit)")
	fs.Var(&f.sbatchArgs, "sbatch-arg", "with --slurm: a further sbatch option, as written (--sbatch-arg=--qos=short), repeatable")
}

// stray lists the Slurm-only flags given, for the error when --slurm is
// not.
func (f *slurmFlags) stray() string {
	var names []string
	f.fs.Visit(func(fl *flag.Flag) {
		switch fl.Name {
		case "partition", "account", "time", "mem", "cpus-per-task", "points-per-task", "max-running", "sbatch-arg":
			names = append(names, "--"+fl.Name)
		}
	})
	return strings.Join(names, ", ")
}

func (f *slurmFlags) options() (sweep.SlurmOptions, error) {
	if f.perTask < 1 {
		return sweep.SlurmOptions{}, usageErrorf("--points-per-task must be at least 1")
	}
	if f.cpus < 0 || f.maxRunning < 0 {
		return sweep.SlurmOptions{}, usageErrorf("--cpus-per-task and --max-running must be 0 or more")
	}
	return sweep.SlurmOptions{Partition: f.partition, Account: f.account, Time: f.time, Memory: f.mem,
		CPUsPerTask: f.cpus, PointsPerTask: f.perTask, MaxRunning: f.maxRunning, ExtraArgs: f.sbatchArgs}, nil
}

// selfForJobs is the path of this program for job scripts that run later
// on other nodes: a binary that go run made in a temporary folder is gone
// by then.
func selfForJobs() (string, error) {
	exe, err := os.Executable()
	if err != nil {
		return "", fmt.Errorf("cannot find this program's path for the job scripts: %w", err)
	}
	if exe, err = filepath.EvalSymlinks(exe); err != nil {
		return "", err
	}
	if strings.Contains(exe, string(filepath.Separator)+"go-build") {
		return "", usageErrorf("this spinpop was built by go run into a temporary folder (%s) that is removed when it exits, but the Slurm jobs run it later: build it first (go build -o spinpop ./cmd/spinpop) and run that binary, from a folder every node sees", exe)
	}
	return exe, nil
}

func sweepSubmit(s *sweep.Sweep, plan *sweep.Plan, out string, f slurmFlags, templates string, threads int, stdout io.Writer) error {
	opt, err := f.options()
	if err != nil {
		return err
	}
	exe, err := selfForJobs()
	if err != nil {
		return err
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return err
	}
	if f.cpus > 0 {
		threads = f.cpus
	} else {
		threads = 1
	}
	if templates != "none" {
		if templates, err = filepath.Abs(templates); err != nil {
			return err
		}
	}
	if busy := activeSubmission(absOut); busy != "" {
		return usageErrorf("%s; submitting again now would run its points twice at once. Wait for it (squeue -j ID) or cancel it (scancel ID), then submit again", busy)
	}
	opt.TaskCommand = []string{exe, "sweep", "--task"}
	opt.MergeCommand = []string{exe, "sweep", "--merge", absOut}
	opt.Env = []string{envSweepTemplates + "=" + templates, envSweepThreads + "=" + strconv.Itoa(threads)}
	sub, err := sweep.Submit(context.Background(), s.File, plan, absOut, opt)
	if err != nil {
		return err
	}
	if sub.Points == 0 {
		fmt.Fprintf(stdout, "sweep %q: every one of its %d points is done in %s; nothing submitted (spinpop sweep --merge %s rewrites the table)\n", plan.Name, len(plan.Points), out, out)
		return nil
	}
	fmt.Fprintf(stdout, "sweep %q: submitted %d of %d points as job array %s (%d tasks) and merge job %s (after the array ends)\n",
		plan.Name, sub.Points, len(plan.Points), sub.ArrayJobID, sub.Tasks, sub.MergeJobID)
	fmt.Fprintf(stdout, "scripts: %s, %s; task logs in %s\n", sub.ArrayScript, sub.MergeScript, filepath.Join(absOut, "slurm", "logs"))
	fmt.Fprintf(stdout, "when the merge job has run: %s/results.csv; submit the same command again to rerun only failed or missing points\n", out)
	return nil
}

// activeSubmission names an earlier submission of this sweep whose jobs
// Slurm still lists (queued or running), or returns "". Without squeue,
// or when it cannot answer, nothing is known and "" is returned.
func activeSubmission(out string) string {
	names, _ := filepath.Glob(filepath.Join(out, "slurm", "submission-*.json"))
	for _, n := range names {
		b, err := os.ReadFile(n)
		if err != nil {
			continue
		}
		var sub sweep.Submission
		if json.Unmarshal(b, &sub) != nil {
			continue
		}
		var ids []string
		for _, id := range []string{sub.ArrayJobID, sub.MergeJobID} {
			if id != "" {
				ids = append(ids, id)
			}
		}
		if len(ids) == 0 {
			continue
		}
		ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
		listed, err := exec.CommandContext(ctx, "squeue", "-h", "-o", "%i", "-j", strings.Join(ids, ",")).Output()
		cancel()
		if err == nil && strings.TrimSpace(string(listed)) != "" {
			return fmt.Sprintf("%s: job array %s (merge job %s) is still queued or running", filepath.Base(n), sub.ArrayJobID, sub.MergeJobID)
		}
	}
	return ""
}
