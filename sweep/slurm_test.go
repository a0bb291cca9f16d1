package sweep

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The Slurm tests submit real job arrays whose tasks are this test binary
// in another role (envRole), with work that does nothing but report, so
// that the package's own machinery is tested alone; cmd/spinpop's
// slurm_test.go sends the program itself (spinpop sweep --slurm,
// simulate --slurm).
const envRole = "SPINPOP_SWEEP_TEST_ROLE"

func TestMain(m *testing.M) {
	switch os.Getenv(envRole) {
	case "":
		os.Exit(m.Run())
	case "task":
		t, err := TaskFromEnv()
		if err == nil {
			err = RunTask(context.Background(), t, slurmFakeWork(t.Out))
		}
		exitWith(err)
	case "merge":
		_, err := MergeFromEnv()
		exitWith(err)
	case "split-part":
		exitWith(splitPart())
	case "split-merge":
		exitWith(splitMerge())
	default:
		exitWith(fmt.Errorf("unknown %s %q", envRole, os.Getenv(envRole)))
	}
}

func exitWith(err error) {
	if err != nil {
		fmt.Fprintln(os.Stderr, "error:", err)
		os.Exit(1)
	}
	os.Exit(0)
}

// slurmFakeWork reports numbers from the scenario and fails at seed 3
// until the file "fixed" exists in the sweep's folder.
func slurmFakeWork(out string) Worker {
	f := &fakeWork{fail: func(p *Point) error {
		if _, err := os.Stat(filepath.Join(out, "fixed")); err == nil {
			return nil
		}
		if p.Scenario.Scenario.Run.Seed == 3 {
			return errors.New("deliberate failure at seed 3")
		}
		return nil
	}}
	return f
}

// needSlurm skips the test unless sbatch is on PATH and a controller
// answers with a usable node.
// With SPINPOP_REQUIRE_SLURM set (as .ci/run sets it after starting
// Slurm) a missing Slurm fails the test instead.
func needSlurm(t *testing.T) {
	t.Helper()
	skip := t.Skipf
	if os.Getenv("SPINPOP_REQUIRE_SLURM") != "" {
		skip = t.Fatalf
	}
	if _, err := exec.LookPath("sbatch"); err != nil {
		skip("skipping: sbatch is not on PATH; start a one-node Slurm with .ci/slurm-up (as root) to run this test")
	}
	out, err := probeSlurm()
	if err != nil || !strings.Contains(string(out), "idle") && !strings.Contains(string(out), "mix") && !strings.Contains(string(out), "alloc") {
		skip("skipping: no Slurm controller answers with a usable node (sinfo: %v %s); start one with .ci/slurm-up", err, strings.TrimSpace(string(out)))
	}
}

// probeSlurm asks the controller once per test binary: when none answers,
// sinfo retries for several seconds.
var probeSlurm = sync.OnceValues(func() ([]byte, error) {
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	return exec.CommandContext(ctx, "sinfo", "-h", "-o", "%T").CombinedOutput()
})

// waitJobs waits until squeue lists none of the jobs.
func waitJobs(t *testing.T, limit time.Duration, ids ...string) {
	t.Helper()
	deadline := time.Now().Add(limit)
	for time.Now().Before(deadline) {
		out, err := exec.Command("squeue", "-h", "-o", "%i %T %r", "-j", strings.Join(ids, ",")).CombinedOutput()
		if err == nil && strings.TrimSpace(string(out)) == "" {
			return
		}
		// squeue errors on ids it no longer knows: finished too.
		if err != nil && strings.Contains(string(out), "Invalid job id") {
			return
		}
		time.Sleep(300 * time.Millisecond)
	}
	out, _ := exec.Command("squeue").CombinedOutput()
	t.Fatalf("jobs %v still queued after %v:\n%s", ids, limit, out)
}

// A sweep through a real Slurm: a job array of 6 tasks (2 points each)
// and a dependent merge job; the task with the failing point fails and
// Slurm shows it; the table matches a local run byte for byte once the
// failure is fixed and only the failed points are resubmitted.
func TestSlurmSweepArrayAndResubmit(t *testing.T) {
	needSlurm(t)
	sweepFile := writeSweep(t, "name = \"slurm-test\"\nscenario = \"example:burst\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = 6\n[[axis]]\nkey = \"history.burst.age_gyr\"\nvalues = [0.5, 0.8]\n")
	s, err := Load(sweepFile)
	require.NoError(t, err)
	plan, err := s.Plan(0)
	require.NoError(t, err)
	out := t.TempDir()
	opt := SlurmOptions{
		PointsPerTask: 2, Time: "0:10:00", Memory: "200M",
		TaskCommand:  []string{os.Args[0]},
		MergeCommand: []string{os.Args[0]},
	}
	// The array's tasks and the merge job take their role from the
	// environment.
	opt.TaskCommand = []string{"/usr/bin/env", envRole + "=task", os.Args[0]}
	opt.MergeCommand = []string{"/usr/bin/env", envRole + "=merge", os.Args[0]}

	start := time.Now()
	sub, err := Submit(context.Background(), sweepFile, plan, out, opt)
	require.NoError(t, err)
	assert.Equal(t, 12, sub.Points)
	assert.Equal(t, 6, sub.Tasks)
	waitJobs(t, 3*time.Minute, sub.ArrayJobID, sub.MergeJobID)
	t.Logf("job array of %d tasks and its merge: %.1f s from submission to merged table", sub.Tasks, time.Since(start).Seconds())

	// Slurm reports the failed task (seed 3 is points 4 and 5: task 2).
	info, err := exec.Command("scontrol", "show", "job", "-o", sub.ArrayJobID).CombinedOutput()
	require.NoError(t, err, "%s", info)
	failedTasks := 0
	for _, line := range strings.Split(string(info), "\n") {
		if strings.Contains(line, "JobState=FAILED") {
			failedTasks++
			assert.Contains(t, line, "ArrayTaskId=2 ")
		}
	}
	assert.Equal(t, 1, failedTasks, "%s", info)
	logs, err := filepath.Glob(filepath.Join(out, "slurm", "logs", fmt.Sprintf("task-%s_2.log", sub.ArrayJobID)))
	require.NoError(t, err)
	require.Len(t, logs, 1)
	logText, _ := os.ReadFile(logs[0])
	assert.Contains(t, string(logText), "deliberate failure at seed 3")

	table := Collect(out, plan)
	assert.Equal(t, 10, table.Done)
	assert.Equal(t, 2, table.Failed)
	_, err = os.Stat(filepath.Join(out, "results.csv"))
	require.NoError(t, err, "the merge job wrote the table")
	firstRun, err := os.ReadFile(filepath.Join(PointDir(out, plan.Points[0].Hash), resultFile))
	require.NoError(t, err)

	// Fix and resubmit: only the two failed points go out again.
	require.NoError(t, os.WriteFile(filepath.Join(out, "fixed"), nil, 0o644))
	start = time.Now()
	sub, err = Submit(context.Background(), sweepFile, plan, out, opt)
	require.NoError(t, err)
	assert.Equal(t, 2, sub.Points)
	assert.Equal(t, 1, sub.Tasks)
	waitJobs(t, 3*time.Minute, sub.ArrayJobID, sub.MergeJobID)
	t.Logf("resubmission of %d task: %.1f s", sub.Tasks, time.Since(start).Seconds())
	again, err := os.ReadFile(filepath.Join(PointDir(out, plan.Points[0].Hash), resultFile))
	require.NoError(t, err)
	assert.Equal(t, firstRun, again, "a finished point is not run again")
	table = Collect(out, plan)
	assert.Equal(t, 12, table.Done)

	// Nothing left: nothing submitted.
	sub, err = Submit(context.Background(), sweepFile, plan, out, opt)
	require.NoError(t, err)
	assert.Zero(t, sub.Points)
	assert.Empty(t, sub.ArrayJobID)

	// The same sweep run here gives the same table, byte for byte.
	local := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(local, "fixed"), nil, 0o644))
	_, err = (&Runner{Out: local, Worker: slurmFakeWork(local)}).Run(context.Background(), s, plan)
	require.NoError(t, err)
	want, err := os.ReadFile(filepath.Join(local, "results.csv"))
	require.NoError(t, err)
	got, err := os.ReadFile(filepath.Join(out, "results.csv"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(want, got), "Slurm table:\n%s\nlocal table:\n%s", got, want)
}

func TestBatchScript(t *testing.T) {
	job := ArrayJob{Name: "spinpop-my sweep", Dir: "/shared/out/slurm", Seq: 2, Tasks: 10,
		Env:     []string{"A=plain", "B=it's $HOME"},
		Command: []string{"/opt/spinpop", "sweep", "task"},
		Options: SlurmOptions{Partition: "short", Account: "proj-1", Time: "1:00:00", Memory: "4G", CPUsPerTask: 2, ExtraArgs: []string{"--qos=low"}}}
	text := batchScript(job, job.Name, []string{"--array=0-9%4"}, job.Command)
	for _, want := range []string{
		"#SBATCH --job-name=spinpop-my_sweep\n", "#SBATCH --chdir=/shared/out/slurm\n", "#SBATCH --array=0-9%4\n",
		"#SBATCH --partition=short\n", "#SBATCH --account=proj-1\n", "#SBATCH --time=1:00:00\n",
		"#SBATCH --mem=4G\n", "#SBATCH --cpus-per-task=2\n", "#SBATCH --qos=low\n",
		"export A=plain\n", `export B='it'\''s $HOME'` + "\n", "exec /opt/spinpop sweep task\n",
	} {
		assert.Contains(t, text, want)
	}
	// The quoting survives bash.
	if _, err := exec.LookPath("bash"); err == nil {
		out, err := exec.Command("bash", "-c", "echo "+shellQuote(`it's "$HOME" \ ok`)).Output()
		require.NoError(t, err)
		assert.Equal(t, "it's \"$HOME\" \\ ok\n", string(out))
	}
	assert.Error(t, checkOptions(SlurmOptions{Time: "1:00\n#SBATCH --x"}))
	assert.Error(t, checkOptions(SlurmOptions{Env: []string{"NOVALUE"}}))
}

func TestTaskFromEnvSaysWhatIsMissing(t *testing.T) {
	for _, k := range []string{EnvSweepFile, EnvOut, EnvTodo, EnvBatch, envTaskID} {
		t.Setenv(k, "")
	}
	_, err := TaskFromEnv()
	assert.ErrorContains(t, err, "not inside a sweep's array task: SLURM_ARRAY_TASK_ID, SPINPOP_SWEEP_BATCH, SPINPOP_SWEEP_FILE, SPINPOP_SWEEP_OUT, SPINPOP_SWEEP_TODO not set")
}
