package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The program itself through a real Slurm: a sweep and a split simulate
// submitted with --slurm, their merged outputs compared byte for byte with
// the same work run here. .ci/slurm-up starts a one-node Slurm (as root);
// without one these tests skip, unless SPINPOP_REQUIRE_SLURM is set (as
// .ci/run sets it), when they fail.

func needSlurmCLI(t *testing.T) {
	t.Helper()
	skip := t.Skipf
	if os.Getenv("SPINPOP_REQUIRE_SLURM") != "" {
		skip = t.Fatalf
	}
	if _, err := exec.LookPath("sbatch"); err != nil {
		skip("skipping: sbatch is not on PATH; start a one-node Slurm with .ci/slurm-up (as root) to run this test")
	}
	out, err := probeSlurmCLI()
	if err != nil || !regexp.MustCompile(`idle|mix|alloc`).Match(out) {
		skip("skipping: no Slurm controller answers with a usable node (sinfo: %v %s); start one with .ci/slurm-up", err, strings.TrimSpace(string(out)))
	}
}

var probeSlurmCLI = sync.OnceValues(func() ([]byte, error) {
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	return exec.CommandContext(ctx, "sinfo", "-h", "-o", "%T").CombinedOutput()
})

// binDir holds the program built for the jobs; TestMain removes it.
var binDir string

func TestMain(m *testing.M) {
	code := m.Run()
	if binDir != "" {
		os.RemoveAll(binDir)
	}
	os.Exit(code)
}

// builtSpinpop builds the program once into a folder the jobs can reach.
var builtSpinpop = sync.OnceValues(func() (string, error) {
	dir, err := os.MkdirTemp("", "spinpop-slurm-bin-")
	if err != nil {
		return "", err
	}
	binDir = dir
	exe := filepath.Join(dir, "spinpop")
	if out, err := exec.Command("go", "build", "-o", exe, ".").CombinedOutput(); err != nil {
		return "", fmt.Errorf("go build: %v\n%s", err, out)
	}
	return exe, nil
})

func spinpopExe(t *testing.T) string {
	exe, err := builtSpinpop()
	require.NoError(t, err)
	return exe
}

func runExe(t *testing.T, exe string, args ...string) string {
	t.Helper()
	cmd := exec.Command(exe, args...)
	var o, e bytes.Buffer
	cmd.Stdout, cmd.Stderr = &o, &e
	require.NoError(t, cmd.Run(), "spinpop %v\nstdout: %s\nstderr: %s", args, o.String(), e.String())
	return o.String()
}

var jobIDs = regexp.MustCompile(`job array (\d+).*merge job (\d+)`)

// waitSlurm waits until squeue lists none of the jobs named in a
// submission's message.
func waitSlurm(t *testing.T, msg string, limit time.Duration) {
	t.Helper()
	m := jobIDs.FindStringSubmatch(msg)
	require.NotNil(t, m, "no job ids in %q", msg)
	deadline := time.Now().Add(limit)
	for time.Now().Before(deadline) {
		out, err := exec.Command("squeue", "-h", "-o", "%i", "-j", m[1]+","+m[2]).CombinedOutput()
		if (err == nil && strings.TrimSpace(string(out)) == "") || (err != nil && strings.Contains(string(out), "Invalid job id")) {
			return
		}
		time.Sleep(300 * time.Millisecond)
	}
	out, _ := exec.Command("squeue").CombinedOutput()
	t.Fatalf("jobs %s, %s still queued after %v:\n%s", m[1], m[2], limit, out)
}

func TestSlurmSweepCommandEqualsLocal(t *testing.T) {
	needSlurmCLI(t)
	exe := spinpopExe(t)
	dir := t.TempDir()
	file := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(file, []byte("name = \"slurm-cli\"\nscenario = \"example:burst\"\nwork = [\"simulate\"]\n[set]\nrun.stars_generated = 40_000\noutput.plots = false\n[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = 3\n[[axis]]\nkey = \"spin.law\"\nvalues = [\"barnes2007\", \"torque\"]\n"), 0o644))
	onSlurm, here := filepath.Join(dir, "slurm-run"), filepath.Join(dir, "local-run")

	start := time.Now()
	msg := runExe(t, exe, "sweep", file, "--out", onSlurm, "--slurm", "--points-per-task", "2", "--time", "0:10:00", "--mem", "500M")
	assert.Contains(t, msg, "submitted 6 of 6 points")
	// While the array is queued or running, submitting again is refused
	// (its points would run twice at once).
	again := exec.Command(exe, "sweep", file, "--out", onSlurm, "--slurm")
	refusal, err := again.CombinedOutput()
	assert.Error(t, err)
	assert.Contains(t, string(refusal), "is still queued or running")
	waitSlurm(t, msg, 3*time.Minute)
	t.Logf("sweep of 6 points in 3 tasks plus merge through Slurm: %.1f s", time.Since(start).Seconds())
	script, err := os.ReadFile(filepath.Join(onSlurm, "slurm", "array-1.sh"))
	require.NoError(t, err)
	assert.Contains(t, string(script), "#SBATCH --mem=500M\n")
	assert.Contains(t, string(script), "#SBATCH --array=0-2\n")

	runExe(t, exe, "sweep", file, "--out", here)
	want, err := os.ReadFile(filepath.Join(here, "results.csv"))
	require.NoError(t, err)
	got, err := os.ReadFile(filepath.Join(onSlurm, "results.csv"))
	require.NoError(t, err, "the merge job wrote no table; see %s", filepath.Join(onSlurm, "slurm", "logs"))
	assert.True(t, bytes.Equal(want, got), "Slurm table:\n%s\nlocal table:\n%s", got, want)
	// Every point's catalog too.
	cats, _ := filepath.Glob(filepath.Join(here, "points", "*", "out", "catalog.csv"))
	require.Len(t, cats, 6)
	for _, c := range cats {
		a, _ := os.ReadFile(c)
		b, err := os.ReadFile(strings.Replace(c, here, onSlurm, 1))
		require.NoError(t, err)
		assert.True(t, bytes.Equal(a, b), c)
	}

	// A point lost (its marker removed) is the only one submitted again.
	hashes, _ := filepath.Glob(filepath.Join(onSlurm, "points", "*", "result.json"))
	require.NoError(t, os.Remove(hashes[0]))
	msg = runExe(t, exe, "sweep", file, "--out", onSlurm, "--slurm")
	assert.Contains(t, msg, "submitted 1 of 6 points")
	waitSlurm(t, msg, 3*time.Minute)
	got, err = os.ReadFile(filepath.Join(onSlurm, "results.csv"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(want, got))
	msg = runExe(t, exe, "sweep", file, "--out", onSlurm, "--slurm")
	assert.Contains(t, msg, "nothing submitted")
}

func TestSlurmSplitSimulateEqualsLocal(t *testing.T) {
	needSlurmCLI(t)
	exe := spinpopExe(t)
	scen := smallScenario(t, 400_000)
	onSlurm, here := t.TempDir(), t.TempDir()
	start := time.Now()
	msg := runExe(t, exe, "simulate", scen, "--out", onSlurm, "--slurm", "--parts", "4", "--set", "run.seed=11", "--time", "0:10:00")
	assert.Contains(t, msg, "4 parts of 49 chunks")
	waitSlurm(t, msg, 3*time.Minute)
	t.Logf("simulate split in 4 array tasks plus merge through Slurm: %.1f s", time.Since(start).Seconds())
	runExe(t, exe, "simulate", scen, "--out", here, "--set", "run.seed=11")
	want, err := os.ReadFile(filepath.Join(here, "catalog.csv"))
	require.NoError(t, err)
	got, err := os.ReadFile(filepath.Join(onSlurm, "catalog.csv"))
	require.NoError(t, err, "the merge job wrote no catalog; see %s", filepath.Join(onSlurm, "slurm", "logs"))
	assert.True(t, bytes.Equal(want, got), "catalog differs from the one-machine run")
	assert.Equal(t, manifestCounts(t, here), manifestCounts(t, onSlurm))
}
