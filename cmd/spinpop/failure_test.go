package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/internal/outset"
	"spinpop/model"
	"spinpop/pipeline"
)

// Tests of how runs fail (issue 13): each exit class, empty selections,
// output folders whole or not at all, interruption by a signal.

// visibleFiles lists a folder's files a user sees (no dot files), with
// paths relative to it; nil when the folder does not exist.
func visibleFiles(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if p != dir && strings.HasPrefix(d.Name(), ".") {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if !d.IsDir() {
			rel, _ := filepath.Rel(dir, p)
			out = append(out, filepath.ToSlash(rel))
		}
		return nil
	})
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	require.NoError(t, err)
	slices.Sort(out)
	return out
}

func TestPanicIsAnInternalErrorExitOne(t *testing.T) {
	var stdout, stderr bytes.Buffer
	code := runCommand(command{name: "boom", run: func([]string, io.Writer, io.Writer) error {
		var m map[string]int
		m["x"] = 1 // a real runtime panic: assignment to entry in nil map
		return nil
	}}, nil, &stdout, &stderr)
	assert.Equal(t, 1, code, "a bug is a failure of the run, never bad input (2)")
	assert.Contains(t, stderr.String(), "spinpop: internal error: assignment to entry in nil map")
	assert.Contains(t, stderr.String(), "Please report it")
	assert.Contains(t, stderr.String(), "failure_test.go", "the trace says where")
}

// A panic on a worker goroutine would kill the process with Go's status 2
// before any recover saw it; the pool carries it to runCommand.
func TestWorkerPanicIsAnInternalErrorExitOne(t *testing.T) {
	var stdout, stderr bytes.Buffer
	code := runCommand(command{name: "boom", run: func([]string, io.Writer, io.Writer) error {
		return model.RunChunks(context.Background(), 1, 50_000, 1024, 2, func(c *model.Chunk, _ *rand.Rand) {
			if c.Index == 7 {
				panic(fmt.Sprintf("bad chunk %d", c.Index))
			}
		}, func(*model.Chunk) error { return nil })
	}}, nil, &stdout, &stderr)
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr.String(), "spinpop: internal error: bad chunk 7")
	assert.Contains(t, stderr.String(), "failure_test.go", "the worker's own stack is shown")
}

// An output folder that cannot be made is a failure of the run (exit 1) in
// every command that writes one. The folder sits below a plain file, which
// fails for root too (root ignores permissions, so a read-only folder
// cannot be made here when the tests run as root; see the next test).
func TestUnwritableOutputFolderExitOneEverywhere(t *testing.T) {
	file := filepath.Join(t.TempDir(), "plain-file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	out := filepath.Join(file, "out")
	small := smallScenario(t, 2000)
	for _, args := range [][]string{
		{"simulate", small},
		{"laws", small, "--stars", "2000"},
		{"compare", "example:fit"},
		{"test-burst", "example:fit"},
		{"test-alternatives", "example:fit"},
		{"heights", "example:fit"},
		{"inject", "example:fit"},
		{"posterior", "example:fit"},
		{"demo"},
	} {
		code, _, errs := runCLI(append(args, "--out", out)...)
		assert.Equal(t, 1, code, "%v: %s", args, errs)
		assert.Contains(t, errs, out, args)
	}
	code, _, errs := runCLI("mock", small, "--stars", "5", "--out", filepath.Join(file, "mock.csv"))
	assert.Equal(t, 1, code, errs)
}

func TestOutputFolderThatIsAFileIsBadInput(t *testing.T) {
	file := filepath.Join(t.TempDir(), "plain-file")
	require.NoError(t, os.WriteFile(file, []byte("mine"), 0o644))
	code, _, errs := runCLI("simulate", smallScenario(t, 2000), "--out", file)
	assert.Equal(t, 2, code, errs)
	assert.Contains(t, errs, "is a file, not a folder")
	b, err := os.ReadFile(file)
	require.NoError(t, err)
	assert.Equal(t, "mine", string(b))
}

func TestReadOnlyOutputFolderExitOne(t *testing.T) {
	parent := t.TempDir()
	require.NoError(t, os.Chmod(parent, 0o555))
	defer os.Chmod(parent, 0o755)
	small := smallScenario(t, 2000)
	cases := [][]string{{"simulate", small}, {"compare", "example:fit"}, {"laws", small, "--stars", "2000"}}
	if os.Geteuid() != 0 {
		for _, args := range cases {
			code, _, errs := runCLI(append(args, "--out", filepath.Join(parent, "out"))...)
			assert.Equal(t, 1, code, "%v: %s", args, errs)
		}
		return
	}
	// Root ignores permissions, so the run is made by an unprivileged
	// user in a process of its own (the test binary, copied where that
	// user may run it); where that cannot be done the test is skipped.
	bin := copyTestBinaryForNobody(t)
	require.NoError(t, os.Chmod(filepath.Dir(small), 0o755))
	require.NoError(t, os.Chmod(filepath.Dir(parent), 0o755))
	for _, args := range cases {
		cmd := exec.Command(bin, "-test.run=^TestHelperMain$")
		cmd.Env = append(os.Environ(), helperEnv+"="+strings.Join(append(args, "--out", filepath.Join(parent, "out")), "\x1f"), "HOME=/nonexistent")
		cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534}}
		out, err := cmd.CombinedOutput()
		var ee *exec.ExitError
		require.True(t, errors.As(err, &ee), "%v: %v %s", args, err, out)
		assert.Equal(t, 1, ee.ExitCode(), "%v: %s", args, out)
		assert.Contains(t, string(out), "permission denied", args)
	}
}

// copyTestBinaryForNobody copies the running test binary into a folder
// every user may enter, for a subprocess run as nobody (uid 65534).
func copyTestBinaryForNobody(t *testing.T) string {
	t.Helper()
	dir, err := os.MkdirTemp("", "spinpop-nobody-")
	require.NoError(t, err)
	t.Cleanup(func() { os.RemoveAll(dir) })
	require.NoError(t, os.Chmod(dir, 0o755))
	b, err := os.ReadFile(os.Args[0])
	require.NoError(t, err)
	bin := filepath.Join(dir, "spinpop.test")
	require.NoError(t, os.WriteFile(bin, b, 0o755))
	probe := exec.Command(bin, "-test.run=^$")
	probe.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534}}
	if out, err := probe.CombinedOutput(); err != nil {
		t.Skipf("cannot run a process as an unprivileged user here (%v: %s); root ignores folder permissions, so a read-only folder cannot be tested", err, out)
	}
	return bin
}

// A full disk fails writes with ENOSPC (internal/outset's test writes to
// /dev/full); wherever that error ends up wrapped — even inside an input
// error, as when rejected.csv is written while the catalog is read — the
// exit status is 1.
func TestWriteFailureBeatsInputErrorInExitClass(t *testing.T) {
	full := &outset.IOError{Op: "writing", Path: "out/rejected.csv", Err: syscall.ENOSPC}
	assert.Equal(t, 1, exitClass(full))
	assert.Equal(t, 1, exitClass(pipeline.InputError{Err: fmt.Errorf("reading the catalog: %w", full)}))
	assert.Equal(t, 1, exitClass(inputError{full}))
	assert.Equal(t, 1, exitClass(runFailuref("interrupted")))
	assert.Equal(t, 2, exitClass(pipeline.InputError{Err: errors.New("catalog.csv line 3: not a number")}))
	assert.Equal(t, 2, exitClass(usageErrorf("--stars must be positive")))
	assert.Equal(t, 1, exitClass(errors.New("anything else")))
}

// emptyLimits make a survey that sees nothing: V between 30 and 31 within
// 1.5 kpc needs M_V ≥ 30 − 10.9 = 19 (distance modulus of 1.5 kpc), and
// the faintest dwarfs a scenario makes (0.2 M☉) have M_V ≈ 12 (fact of the
// trade, from memory; any M dwarf is brighter than M_V 19).
var emptyLimits = []string{"--set", "survey.bright_limit_mag=30", "--set", "survey.faint_limit_mag=31"}

func TestSimulateEmptySelection(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "run")
	code, out, errs := runCLI(append([]string{"simulate", smallScenario(t, 20000), "--out", dir}, emptyLimits...)...)
	assert.Equal(t, 2, code, errs)
	assert.True(t, strings.HasPrefix(out, "The catalog is empty:"), "said first: %s", out)
	assert.Contains(t, out, "the magnitude_range step removed the last")
	assert.Contains(t, errs, "survey.bright_limit_mag")
	assert.NotContains(t, out, "NaN")
	assert.Equal(t, []string{"manifest.json", "report.html"}, visibleFiles(t, dir), "the manifest and its report only: no catalog of no stars, no empty plots")
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	require.NoError(t, err)
	var man map[string]any
	require.NoError(t, json.Unmarshal(b, &man), "valid JSON")
	med := man["median_age_gyr"].(map[string]any)
	assert.Nil(t, med["catalog"], "the median of no stars is null")
	assert.NotNil(t, med["generated_dwarfs"])
	assert.Contains(t, man["warnings"].([]any)[0], "magnitude_range")

	// So few stars that none passes: the message says to generate more.
	dir = filepath.Join(t.TempDir(), "one")
	code, out, _ = runCLI("simulate", smallScenario(t, 1), "--out", dir)
	assert.Equal(t, 2, code)
	assert.Contains(t, out, "only 1 stars were generated (run.stars_generated)")
}

func TestLawsEmptySelection(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "laws")
	code, out, errs := runCLI(append([]string{"laws", smallScenario(t, 20000), "--stars", "20000", "--out", dir}, emptyLimits...)...)
	assert.Equal(t, 2, code, errs)
	assert.True(t, strings.HasPrefix(out, "Every catalog is empty:"), out)
	assert.NotContains(t, out, "NaN")
	assert.Equal(t, []string{"laws.json"}, visibleFiles(t, dir))
	b, err := os.ReadFile(filepath.Join(dir, "laws.json"))
	require.NoError(t, err)
	var rep map[string]any
	require.NoError(t, json.Unmarshal(b, &rep))
	assert.Equal(t, "empty_selection", rep["outcome"])
	for _, l := range rep["laws"].([]any) {
		assert.Nil(t, l.(map[string]any)["median_age_gyr"])
	}
}

func TestMockEmptyAndShortSelections(t *testing.T) {
	p := filepath.Join(t.TempDir(), "mock.csv")
	code, _, errs := runCLI(append([]string{"mock", smallScenario(t, 100), "--stars", "100", "--out", p}, emptyLimits...)...)
	assert.Equal(t, 2, code, errs)
	assert.Contains(t, errs, "was not written")
	assert.Contains(t, errs, "magnitude_range")
	_, err := os.Stat(p)
	assert.ErrorIs(t, err, os.ErrNotExist, "no catalog of no stars")

	// 10 stars generated: at most 10 000 drawn, far fewer catalog stars
	// than the million asked for; the file holds those found, and says so.
	code, out, errs := runCLI("mock", smallScenario(t, 10), "--stars", "1000000", "--out", p)
	require.Equal(t, 0, code, errs)
	assert.True(t, strings.HasPrefix(out, "warning: only "), out)
	assert.Contains(t, out, "of the 1000000 stars asked for")
	assert.Contains(t, out, "raise run.stars_generated")
}

// The model selects nothing while the catalog holds its stars: the
// message blames the model, not the data, and the report is written.
func TestCompareEmptyModelSelection(t *testing.T) {
	if testing.Short() {
		t.Skip("builds templates (seconds)")
	}
	dir := filepath.Join(t.TempDir(), "cmp")
	args := append([]string{"compare", "example:fit", "--out", dir, "--templates", "none", "--replicates", "0",
		"--set", "compare.template_stars=200000"}, emptyLimits...)
	code, _, errs := runCLI(args...)
	assert.Equal(t, 2, code, errs)
	assert.Contains(t, errs, "select no star for the model")
	assert.Contains(t, errs, "magnitude_range")
	assert.Contains(t, errs, "the observed catalog is not at fault")
	assert.NotContains(t, errs, "data hold no stars")
	assert.Equal(t, []string{"compare.json"}, visibleFiles(t, dir))
	b, err := os.ReadFile(filepath.Join(dir, "compare.json"))
	require.NoError(t, err)
	var rep map[string]any
	require.NoError(t, json.Unmarshal(b, &rep))
	assert.Equal(t, "empty_selection", rep["outcome"])
	assert.Equal(t, "magnitude_range", rep["emptied_at_step"])
}

func TestSecondRunIntoABusyFolderIsRefused(t *testing.T) {
	dir := t.TempDir()
	held, err := outset.Open(dir, outset.Options{}) // a first run, still writing
	require.NoError(t, err)
	defer held.Close()
	code, _, errs := runCLI("simulate", smallScenario(t, 2000), "--out", dir, "--force")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "in use by another spinpop run")
}

// --force after a good run replaces the run whole: the second run writes
// no plots, and the first run's plots must not stay beside its manifest.
func TestForceNeverMixesTwoRuns(t *testing.T) {
	sc := smallScenario(t, 20000)
	dir := filepath.Join(t.TempDir(), "run")
	code, _, errs := runCLI("simulate", sc, "--out", dir)
	require.Equal(t, 0, code, errs)
	require.Contains(t, visibleFiles(t, dir), "period_color.png")
	code, _, errs = runCLI("simulate", sc, "--out", dir, "--force", "--set", "output.plots=false", "--seed", "99")
	require.Equal(t, 0, code, errs)
	assert.Equal(t, []string{"catalog.csv", "manifest.json", "report.html"}, visibleFiles(t, dir))
}

// helperEnv makes the test binary run spinpop's main on the arguments in
// the environment: a real process to send signals to.
const helperEnv = "SPINPOP_TEST_MAIN_ARGS"

func TestHelperMain(t *testing.T) {
	args := os.Getenv(helperEnv)
	if args == "" {
		t.Skip("helper process for TestInterruptedBySignalLeavesNothing; runs only when started by it")
	}
	os.Exit(run(strings.Split(args, "\x1f"), os.Stdout, os.Stderr))
}

func TestInterruptedBySignalLeavesNothing(t *testing.T) {
	if testing.Short() {
		t.Skip("starts subprocesses that run until signalled")
	}
	type run struct {
		sig    syscall.Signal
		args   func(dir string) []string
		staged string // a file the run stages early: signalled once it is there
	}
	runs := map[string]run{
		"simulate SIGINT": {syscall.SIGINT, func(dir string) []string {
			return []string{"simulate", smallScenario(t, 500_000_000), "--out", dir, "--threads", "1"}
		}, "catalog.csv"},
		"simulate SIGTERM": {syscall.SIGTERM, func(dir string) []string {
			return []string{"simulate", smallScenario(t, 500_000_000), "--out", dir, "--threads", "1"}
		}, "catalog.csv"},
		// The catalog's rejected rows are staged when it is read, before
		// the fits: an interrupted test-burst must not leave them.
		"test-burst SIGTERM": {syscall.SIGTERM, func(dir string) []string {
			return []string{"test-burst", "example:fit", "--out", dir, "--templates", "none", "--threads", "1", "--set", "compare.template_stars=100000"}
		}, "rejected.csv"},
	}
	for name, r := range runs {
		t.Run(name, func(t *testing.T) {
			sig := r.sig
			dir := filepath.Join(t.TempDir(), "run")
			cmd := exec.Command(os.Args[0], "-test.run=^TestHelperMain$")
			cmd.Env = append(os.Environ(), helperEnv+"="+strings.Join(r.args(dir), "\x1f"))
			var stderr bytes.Buffer
			cmd.Stderr = &stderr
			require.NoError(t, cmd.Start())
			// Wait (polling, no timing asserted) until the run is writing
			// its first output in the staging folder.
			writing := func() bool {
				m, _ := filepath.Glob(filepath.Join(dir, ".spinpop-stage-*", r.staged))
				if len(m) == 0 {
					return false
				}
				fi, err := os.Stat(m[0])
				return err == nil && fi.Size() > 0
			}
			for deadline := time.Now().Add(2 * time.Minute); !writing(); time.Sleep(50 * time.Millisecond) {
				if time.Now().After(deadline) {
					cmd.Process.Kill()
					cmd.Wait()
					t.Fatalf("the run never started writing: %s", stderr.String())
				}
			}
			require.NoError(t, cmd.Process.Signal(sig))
			err := cmd.Wait()
			var ee *exec.ExitError
			require.True(t, errors.As(err, &ee), "exits with a status: %v", err)
			assert.Equal(t, 1, ee.ExitCode(), stderr.String())
			assert.Contains(t, stderr.String(), "interrupted")
			assert.Contains(t, stderr.String(), "nothing was written")
			_, statErr := os.Stat(dir)
			assert.ErrorIs(t, statErr, os.ErrNotExist, "the folder the run made is gone, staging and all")
		})
	}
}

// A template cache that cannot be made is no reason to fail: the run
// warns and goes on without it (its folder would sit below a plain file,
// which fails for root too).
func TestUnusableTemplateCacheOnlyWarns(t *testing.T) {
	file := filepath.Join(t.TempDir(), "plain-file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	dir := filepath.Join(t.TempDir(), "cmp")
	code, _, errs := runCLI("compare", fitScenario(t, ""), "--out", dir, "--templates", filepath.Join(file, "cache"),
		"--replicates", "0", "--set", "compare.template_stars=100000")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, errs, "warning: template cache")
	assert.Contains(t, errs, "going on without the cache")
	assert.Contains(t, visibleFiles(t, dir), "compare.json")
}

// Every JSON written (files and --json) holds null where a number does not
// exist, instead of failing on NaN after the run's work is done.
func TestEncodeJSONNeverFailsOnNaN(t *testing.T) {
	var b bytes.Buffer
	rep := struct {
		Median float64   `json:"median_age_gyr"`
		P      []float64 `json:"p_values"`
	}{math.NaN(), []float64{0.5, math.NaN()}}
	require.NoError(t, encodeJSON(&b, rep))
	assert.JSONEq(t, `{"median_age_gyr": null, "p_values": [0.5, null]}`, b.String())
}
