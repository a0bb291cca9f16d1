package sweep

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"time"
)

// Slurm. A sweep goes to a cluster as one job array (one task per batch of
// points) plus a merge job that depends on it (afterany: it runs when every
// task has ended, failed ones included, so the table always shows what
// failed). Tasks find their points through environment variables and a
// list file; a point's folder is its only output, so resubmitting lists
// again only the points without a finished result.

// SlurmOptions are passed through to sbatch.
type SlurmOptions struct {
	Partition string // --partition; "" for the cluster's default
	Account   string // --account
	Time      string // --time per task, in Slurm's format (e.g. "2:00:00")
	Memory    string // --mem per task (e.g. "4G")
	// CPUsPerTask is --cpus-per-task (0: not set).
	CPUsPerTask int
	// PointsPerTask batches points into one array task (0 or 1: one point
	// per task). Batching amortises a task's start-up on clusters that
	// schedule slowly.
	PointsPerTask int
	// MaxRunning limits the array's tasks running at once (--array=…%N; 0:
	// no limit).
	MaxRunning int
	// ExtraArgs are further sbatch options, given as they are
	// ("--qos=short").
	ExtraArgs []string
	// Env is more environment for the tasks and the merge job ("K=V").
	Env []string
	// TaskCommand is what each array task runs; it finds its points
	// through TaskFromEnv. MergeCommand is what the merge job runs; it
	// finds the sweep through MergeFromEnv.
	TaskCommand, MergeCommand []string
	// Sbatch is the sbatch program ("" : sbatch on PATH).
	Sbatch string
}

// Environment variables a task and the merge job read.
const (
	EnvSweepFile = "SPINPOP_SWEEP_FILE"
	EnvOut       = "SPINPOP_SWEEP_OUT"
	EnvTodo      = "SPINPOP_SWEEP_TODO"
	EnvBatch     = "SPINPOP_SWEEP_BATCH"
	envTaskID    = "SLURM_ARRAY_TASK_ID"
)

// Submission is what Submit sent.
type Submission struct {
	ArrayJobID  string `json:"array_job_id,omitempty"`
	MergeJobID  string `json:"merge_job_id,omitempty"`
	Points      int    `json:"points"` // points submitted: missing or failed ones
	Tasks       int    `json:"tasks"`
	Todo        string `json:"todo,omitempty"`
	ArrayScript string `json:"array_script,omitempty"`
	MergeScript string `json:"merge_script,omitempty"`
}

// Submit writes the plan into out, lists the points that have no finished
// result (never run, failed, interrupted), and submits them as a job array
// with a dependent merge job. With nothing left to do it submits nothing
// and returns a Submission with Points = 0.
func Submit(ctx context.Context, sweepFile string, plan *Plan, out string, opt SlurmOptions) (*Submission, error) {
	if len(opt.TaskCommand) == 0 || len(opt.MergeCommand) == 0 {
		return nil, errors.New("sweep: SlurmOptions needs a TaskCommand and a MergeCommand")
	}
	absOut, err := filepath.Abs(out)
	if err != nil {
		return nil, err
	}
	absSweep := sweepFile // a built-in sweep file stays example:NAME
	if !isExample(sweepFile) {
		if absSweep, err = filepath.Abs(sweepFile); err != nil {
			return nil, err
		}
	}
	if err := WritePlan(filepath.Join(absOut, "plan.json"), plan); err != nil {
		return nil, err
	}
	var todo bytes.Buffer
	n := 0
	for _, pp := range plan.Points {
		if st, _ := PointStatus(absOut, pp.Hash, plan.Work); st != StatusDone {
			fmt.Fprintf(&todo, "%d %s\n", pp.Index, pp.Hash)
			n++
		}
	}
	sub := &Submission{Points: n}
	if n == 0 {
		return sub, nil
	}
	batch := max(opt.PointsPerTask, 1)
	sub.Tasks = (n + batch - 1) / batch
	dir := filepath.Join(absOut, "slurm")
	seq, err := nextSubmission(dir)
	if err != nil {
		return nil, err
	}
	sub.Todo = filepath.Join(dir, fmt.Sprintf("todo-%d.txt", seq))
	if err := writeFileAtomic(sub.Todo, todo.Bytes()); err != nil {
		return nil, err
	}
	env := []string{EnvSweepFile + "=" + absSweep, EnvOut + "=" + absOut, EnvTodo + "=" + sub.Todo, EnvBatch + "=" + strconv.Itoa(batch)}
	job := ArrayJob{
		Name: "spinpop-" + plan.Name, Dir: dir, Seq: seq, Tasks: sub.Tasks,
		Env: append(env, opt.Env...), Command: opt.TaskCommand, MergeCommand: opt.MergeCommand, Options: opt,
	}
	ids, err := SubmitArray(ctx, job)
	if err != nil {
		return nil, err
	}
	sub.ArrayJobID, sub.MergeJobID, sub.ArrayScript, sub.MergeScript = ids.ArrayJobID, ids.MergeJobID, ids.ArrayScript, ids.MergeScript
	if err := writeJSON(filepath.Join(dir, fmt.Sprintf("submission-%d.json", seq)), sub); err != nil {
		return nil, err
	}
	return sub, nil
}

// nextSubmission claims the next submission number in dir.
func nextSubmission(dir string) (int, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return 0, err
	}
	for seq := 1; ; seq++ {
		f, err := os.OpenFile(filepath.Join(dir, fmt.Sprintf(".claim-%d", seq)), os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
		if errors.Is(err, fs.ErrExist) {
			continue
		}
		if err != nil {
			return 0, err
		}
		return seq, f.Close()
	}
}

// ArrayJob is a job array plus a merge job that runs after every task has
// ended: the shape of a sweep and of a run split by chunk ranges.
type ArrayJob struct {
	Name  string // job name
	Dir   string // scripts and logs go here (absolute)
	Seq   int    // distinguishes the scripts of successive submissions
	Tasks int    // array tasks 0 … Tasks−1
	// Env is the environment of the tasks and of the merge job ("K=V");
	// each task also has SLURM_ARRAY_TASK_ID.
	Env          []string
	Command      []string // run by each task
	MergeCommand []string // run by the merge job
	Options      SlurmOptions
}

// ArrayIDs are the submitted jobs and their scripts.
type ArrayIDs struct {
	ArrayJobID, MergeJobID   string
	ArrayScript, MergeScript string
}

// SubmitArray writes the two batch scripts into job.Dir and submits them.
func SubmitArray(ctx context.Context, job ArrayJob) (*ArrayIDs, error) {
	if job.Tasks < 1 {
		return nil, errors.New("sweep: a job array needs at least one task")
	}
	if err := checkOptions(job.Options); err != nil {
		return nil, err
	}
	logs := filepath.Join(job.Dir, "logs")
	if err := os.MkdirAll(logs, 0o755); err != nil {
		return nil, err
	}
	ids := &ArrayIDs{
		ArrayScript: filepath.Join(job.Dir, fmt.Sprintf("array-%d.sh", job.Seq)),
		MergeScript: filepath.Join(job.Dir, fmt.Sprintf("merge-%d.sh", job.Seq)),
	}
	arraySpec := fmt.Sprintf("0-%d", job.Tasks-1)
	if job.Options.MaxRunning > 0 {
		arraySpec += "%" + strconv.Itoa(job.Options.MaxRunning)
	}
	task := batchScript(job, job.Name, []string{"--array=" + arraySpec, "--output=" + filepath.Join(logs, "task-%A_%a.log")}, job.Command)
	merge := batchScript(job, job.Name+"-merge", []string{"--output=" + filepath.Join(logs, "merge-%j.log")}, job.MergeCommand)
	for path, text := range map[string]string{ids.ArrayScript: task, ids.MergeScript: merge} {
		if err := writeFileAtomic(path, []byte(text)); err != nil {
			return nil, err
		}
		if err := os.Chmod(path, 0o755); err != nil {
			return nil, err
		}
	}
	var err error
	if ids.ArrayJobID, err = sbatch(ctx, job.Options.Sbatch, ids.ArrayScript); err != nil {
		return nil, err
	}
	// afterany: the merge runs when every task has ended, failed or not;
	// kill-on-invalid-dep: if the array is cancelled, so is the merge.
	if ids.MergeJobID, err = sbatch(ctx, job.Options.Sbatch, "--dependency=afterany:"+ids.ArrayJobID, "--kill-on-invalid-dep=yes", ids.MergeScript); err != nil {
		return ids, fmt.Errorf("the array job %s was submitted, but its merge job was not: %w", ids.ArrayJobID, err)
	}
	return ids, nil
}

var jobNameOK = regexp.MustCompile(`[^A-Za-z0-9_.-]`)

// batchScript is a bash script with the job's #SBATCH options, its
// environment and its command, every value shell-quoted.
func batchScript(job ArrayJob, name string, extra []string, command []string) string {
	o := job.Options
	var b strings.Builder
	b.WriteString("#!/bin/bash\n")
	opts := []string{"--job-name=" + jobNameOK.ReplaceAllString(name, "_"), "--chdir=" + job.Dir}
	opts = append(opts, extra...)
	if o.Partition != "" {
		opts = append(opts, "--partition="+o.Partition)
	}
	if o.Account != "" {
		opts = append(opts, "--account="+o.Account)
	}
	if o.Time != "" {
		opts = append(opts, "--time="+o.Time)
	}
	if o.Memory != "" {
		opts = append(opts, "--mem="+o.Memory)
	}
	if o.CPUsPerTask > 0 {
		opts = append(opts, "--cpus-per-task="+strconv.Itoa(o.CPUsPerTask))
	}
	opts = append(opts, o.ExtraArgs...)
	for _, opt := range opts {
		b.WriteString("#SBATCH " + opt + "\n")
	}
	b.WriteString("# Written by spinpop's sweep package.\nset -eu\n")
	for _, kv := range job.Env {
		k, v, _ := strings.Cut(kv, "=")
		b.WriteString("export " + k + "=" + shellQuote(v) + "\n")
	}
	b.WriteString("exec")
	for _, a := range command {
		b.WriteString(" " + shellQuote(a))
	}
	b.WriteString("\n")
	return b.String()
}

// checkOptions refuses values that would break the script's lines.
func checkOptions(o SlurmOptions) error {
	for _, v := range append([]string{o.Partition, o.Account, o.Time, o.Memory}, o.ExtraArgs...) {
		if strings.ContainsAny(v, "\n\r") {
			return fmt.Errorf("sweep: Slurm option %q spans lines", v)
		}
	}
	for _, kv := range o.Env {
		k, _, ok := strings.Cut(kv, "=")
		if !ok || k == "" || strings.ContainsAny(k, " \t\n'\"$=") {
			return fmt.Errorf("sweep: environment entry %q is not NAME=value", kv)
		}
	}
	return nil
}

// shellQuote quotes s for bash: inside single quotes nothing is special
// but the single quote itself.
func shellQuote(s string) string {
	if s != "" && !strings.ContainsFunc(s, func(r rune) bool {
		return !(r == '/' || r == '.' || r == '_' || r == '-' || r == ':' || r == '=' || r == ',' ||
			('a' <= r && r <= 'z') || ('A' <= r && r <= 'Z') || ('0' <= r && r <= '9'))
	}) {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// sbatch submits a script and returns the job id (--parsable prints
// "id" or "id;cluster").
func sbatch(ctx context.Context, prog string, args ...string) (string, error) {
	if prog == "" {
		prog = "sbatch"
	}
	ctx, cancel := context.WithTimeout(ctx, 2*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, prog, append([]string{"--parsable"}, args...)...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		return "", fmt.Errorf("%s %s: %v: %s", prog, strings.Join(args, " "), err, strings.TrimSpace(stderr.String()))
	}
	id, _, _ := strings.Cut(strings.TrimSpace(stdout.String()), ";")
	if id == "" || strings.ContainsAny(id, " \n") {
		return "", fmt.Errorf("%s printed %q, not a job id", prog, stdout.String())
	}
	return id, nil
}

// Task is one array task's share of a sweep.
type Task struct {
	SweepFile, Out, Todo string
	Index, Batch         int // SLURM_ARRAY_TASK_ID and points per task
}

// TaskFromEnv reads the task's share from the environment the array
// script sets. Its error names what is missing (so a user who runs the
// task command by hand learns how it is meant to be run).
func TaskFromEnv() (Task, error) {
	t := Task{SweepFile: os.Getenv(EnvSweepFile), Out: os.Getenv(EnvOut), Todo: os.Getenv(EnvTodo)}
	var missing []string
	for k, v := range map[string]string{EnvSweepFile: t.SweepFile, EnvOut: t.Out, EnvTodo: t.Todo, EnvBatch: os.Getenv(EnvBatch), envTaskID: os.Getenv(envTaskID)} {
		if v == "" {
			missing = append(missing, k)
		}
	}
	if len(missing) > 0 {
		slices.Sort(missing)
		return t, fmt.Errorf("not inside a sweep's array task: %s not set (tasks are started by the job array that Submit writes)", strings.Join(missing, ", "))
	}
	var err1, err2 error
	t.Index, err1 = strconv.Atoi(os.Getenv(envTaskID))
	t.Batch, err2 = strconv.Atoi(os.Getenv(EnvBatch))
	if err1 != nil || err2 != nil || t.Index < 0 || t.Batch < 1 {
		return t, fmt.Errorf("%s=%q and %s=%q must be a task index and a positive batch size", envTaskID, os.Getenv(envTaskID), EnvBatch, os.Getenv(EnvBatch))
	}
	return t, nil
}

// RunTask runs the task's points (lines [Index·Batch, (Index+1)·Batch) of
// the list file) one after the other. Every point is tried; the error,
// wrapping ErrPointsFailed, lists the ones that failed, so that the task
// exits non-zero and Slurm shows it as failed.
func RunTask(ctx context.Context, t Task, w Worker) error {
	s, err := Load(t.SweepFile)
	if err != nil {
		return err
	}
	plan, err := ReadPlan(filepath.Join(t.Out, "plan.json"))
	if err != nil {
		return err
	}
	mine, err := taskPoints(t)
	if err != nil {
		return err
	}
	var failed []string
	for _, tp := range mine {
		if tp.index < 0 || tp.index >= len(plan.Points) || plan.Points[tp.index].Hash != tp.hash {
			return fmt.Errorf("%s: point %d %.12s… is not in %s; the list and the plan are of different submissions", t.Todo, tp.index, tp.hash, filepath.Join(t.Out, "plan.json"))
		}
		if _, err := RunPoint(ctx, s, t.Out, plan.Points[tp.index], w); err != nil {
			if ctx.Err() != nil {
				return err
			}
			failed = append(failed, fmt.Sprintf("point %d: %s", tp.index, firstLine(err.Error())))
		}
	}
	if len(failed) > 0 {
		return fmt.Errorf("%w: %s", ErrPointsFailed, strings.Join(failed, "; "))
	}
	return nil
}

type todoPoint struct {
	index int
	hash  string
}

func taskPoints(t Task) ([]todoPoint, error) {
	f, err := os.Open(t.Todo)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var out []todoPoint
	sc := bufio.NewScanner(f)
	first, last := t.Index*t.Batch, (t.Index+1)*t.Batch
	for line := 0; sc.Scan(); line++ {
		if line < first || line >= last {
			continue
		}
		fields := strings.Fields(sc.Text())
		if len(fields) != 2 {
			return nil, fmt.Errorf("%s:%d: want \"index hash\"", t.Todo, line+1)
		}
		i, err := strconv.Atoi(fields[0])
		if err != nil {
			return nil, fmt.Errorf("%s:%d: %q is not a point index", t.Todo, line+1, fields[0])
		}
		out = append(out, todoPoint{i, fields[1]})
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s has no line %d: task %d of batch %d has no points", t.Todo, first+1, t.Index, t.Batch)
	}
	return out, nil
}

// MergeFromEnv merges the sweep whose output folder the merge job's
// environment names.
func MergeFromEnv() (*Table, error) {
	out := os.Getenv(EnvOut)
	if out == "" {
		return nil, fmt.Errorf("not inside a sweep's merge job: %s not set", EnvOut)
	}
	plan, err := ReadPlan(filepath.Join(out, "plan.json"))
	if err != nil {
		return nil, err
	}
	return Merge(out, plan)
}
