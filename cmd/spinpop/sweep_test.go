package main

import (
	"bytes"
	"encoding/csv"
	"image/png"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

// readTable reads a CSV into rows of column → cell.
func readTable(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, k := range recs[0] {
			m[k] = r[i]
		}
		out = append(out, m)
	}
	return out
}

func requirePNG(t *testing.T, path string) {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	_, err = png.Decode(f)
	require.NoError(t, err, path)
}

// A burst-test sweep on the demo catalog, one axis naming a catalog that is
// not there yet: those points fail, are reported, and the others finish;
// run again after the catalog appears, the finished points are skipped and
// only the failed ones run. Templates are small, so the numbers are rough:
// the test checks the workflow, not the physics.
func TestSweepCommandRestartsAndReportsFailures(t *testing.T) {
	if testing.Short() {
		t.Skip("skipping in -short: two burst tests with templates (≈ 15 s)")
	}
	dir := t.TempDir()
	later := filepath.Join(dir, "copy-of-demo.csv")
	file := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(file, []byte(`name = "cli-test"
scenario = "example:fit"
work = ["compare", "test-burst"]
[set]
compare.bootstrap = 5
compare.template_stars = 300_000
compare.free = [
  { path = "history.burst.age_gyr", min = 0.1, max = 3.0 },
  { path = "history.burst.mass_fraction", min = 0.0, max = 0.6 },
]
[[axis]]
key = "data.file"
values = ["example:data/larkspur-rotation.csv", "`+later+`"]
`), 0o644))
	out := filepath.Join(dir, "out")

	code, dry, errs := runCLI("sweep", file, "--dry-run")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, dry, `sweep "cli-test": 2 points of example:fit, work compare, test-burst`)

	code, stdout, errs := runCLI("sweep", file, "--out", out, "--templates", "none")
	assert.Equal(t, 1, code, "a failed point makes the run fail: %s %s", stdout, errs)
	assert.Contains(t, errs, "1 of 2 points failed")
	assert.True(t, strings.HasPrefix(stdout, "warning: 1 point(s) failed"), "the failure is said first: %s", stdout)
	rows := readTable(t, filepath.Join(out, "results.csv"))
	require.Len(t, rows, 2)
	assert.Equal(t, "done", rows[0]["status"])
	assert.Equal(t, "failed", rows[1]["status"])
	assert.Contains(t, rows[1]["error"], "copy-of-demo.csv")
	// The dry run's hashes are the folders' names.
	assert.Contains(t, dry, rows[0]["hash"][:12])
	for _, k := range []string{"data_stars", "burst_age_gyr", "burst_age_lo_gyr", "burst_age_hi_gyr", "burst_fraction", "burst_fraction_lo", "burst_fraction_hi", "p_value", "adequacy", "verdict", "ln_l"} {
		assert.NotEmpty(t, rows[0][k], k)
	}
	// The demo catalog holds a burst near 0.75 Gyr (testdata/demo-truth.toml).
	assert.Contains(t, rows[0]["burst_age_gyr"], "0.7")
	first, err := os.ReadFile(filepath.Join(out, "points", rows[0]["hash"], "result.json"))
	require.NoError(t, err)
	for _, f := range []string{"systematics.md", "systematics.csv", "systematics.json", "results.json", "plan.json"} {
		assert.FileExists(t, filepath.Join(out, f))
	}
	requirePNG(t, filepath.Join(out, "systematics.png"))
	requirePNG(t, filepath.Join(out, "plots", "data.file.png"))
	for _, f := range []string{"test.json", "compare.json", "fit_residuals.png"} {
		assert.FileExists(t, filepath.Join(out, "points", rows[0]["hash"], "out", f))
	}

	// The dry run with --out shows each point's status.
	code, dry, _ = runCLI("sweep", file, "--dry-run", "--out", out)
	require.Equal(t, 0, code)
	assert.Contains(t, dry, "1 done, 1 failed, 0 missing")

	// The catalog appears; the next run does only the failed point.
	demo, err := fs.ReadFile(scenarios.ExamplesFS(), "data/larkspur-rotation.csv")
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(later, demo, 0o644))
	code, stdout, errs = runCLI("sweep", file, "--out", out, "--templates", "none")
	require.Equal(t, 0, code, "%s %s", stdout, errs)
	assert.Contains(t, stdout, "1 points ran, 1 were already done, 0 failed")
	again, err := os.ReadFile(filepath.Join(out, "points", rows[0]["hash"], "result.json"))
	require.NoError(t, err)
	assert.Equal(t, first, again, "a finished point is not run again")
	rows2 := readTable(t, filepath.Join(out, "results.csv"))
	assert.Equal(t, "done", rows2[1]["status"])
	// Same catalog, same scenario otherwise: the same burst, to the digit.
	assert.Equal(t, rows2[0]["burst_age_gyr"], rows2[1]["burst_age_gyr"])
	assert.Equal(t, rows2[0]["burst_fraction_hi"], rows2[1]["burst_fraction_hi"])
}

// A folder that holds something else is never written into; Slurm flags
// need --slurm; a sweep file's mistakes name the file and line.
func TestSweepCommandRefuses(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(file, []byte("name = \"x\"\nscenario = \"example:base\"\nwork = [\"simulate\"]\n[set]\nrun.stars_generated = 1000\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\n"), 0o644))
	other := filepath.Join(dir, "other")
	require.NoError(t, os.MkdirAll(other, 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(other, "mine.txt"), []byte("keep"), 0o644))
	code, _, errs := runCLI("sweep", file, "--out", other)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "holds no sweep")
	code, _, errs = runCLI("sweep", file, "--out", filepath.Join(dir, "o"), "--partition", "short")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "--partition apply only with --slurm")
	bad := filepath.Join(dir, "bad.toml")
	require.NoError(t, os.WriteFile(bad, []byte("name = \"x\"\nscenario = \"example:base\"\nwork = [\"simulate\"]\n[[axis]]\nkey = \"spin.law\"\nvalues = [\"barnes2007\", \"barnes\"]\n"), 0o644))
	code, _, errs = runCLI("sweep", bad, "--dry-run")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "bad.toml:4")
	code, _, errs = runCLI("sweep", "--task")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "not inside a sweep's array task")
}

// A simulate sweep run twice: the table is the same, byte for byte, and
// the second run runs nothing; plots of the headline numbers against
// each axis are there.
func TestSweepCommandSimulate(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(file, []byte("name = \"sim\"\nscenario = \"example:burst\"\nwork = [\"simulate\"]\n[set]\nrun.stars_generated = 60_000\noutput.plots = false\n[[axis]]\nkey = \"run.seed\"\nvalues = [1, 2]\n[[axis]]\nkey = \"spin.law\"\nvalues = [\"barnes2007\", \"torque\"]\n"), 0o644))
	out := filepath.Join(dir, "out")
	code, stdout, errs := runCLI("sweep", file, "--out", out, "--workers", "2")
	require.Equal(t, 0, code, "%s %s", stdout, errs)
	assert.Contains(t, stdout, "4 points ran, 0 were already done, 0 failed")
	first, err := os.ReadFile(filepath.Join(out, "results.csv"))
	require.NoError(t, err)
	code, stdout, _ = runCLI("sweep", file, "--out", out)
	require.Equal(t, 0, code)
	assert.Contains(t, stdout, "0 points ran, 4 were already done")
	second, err := os.ReadFile(filepath.Join(out, "results.csv"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(first, second))
	rows := readTable(t, filepath.Join(out, "results.csv"))
	for _, r := range rows {
		assert.NotEmpty(t, r["catalog_stars"])
		assert.FileExists(t, filepath.Join(out, "points", r["hash"], "out", "catalog.csv"))
	}
	requirePNG(t, filepath.Join(out, "plots", "run.seed.png"))
	requirePNG(t, filepath.Join(out, "plots", "spin.law.png"))
	assert.NoFileExists(t, filepath.Join(out, "systematics.md"), "no burst test, no systematics")
}

// A run split into parts, each run alone, then merged: the catalog is
// the one-machine run's byte for byte and the counts are the same
// (model/split.go: chunk i draws only from (seed, i)).
func TestSimulateSplitEqualsOneRun(t *testing.T) {
	scen := smallScenario(t, 150_000)
	whole, split := t.TempDir(), t.TempDir()
	code, _, errs := runCLI("simulate", scen, "--out", whole, "--threads", "2")
	require.Equal(t, 0, code, errs)
	for _, k := range []string{"2", "0", "1"} { // any order
		code, _, errs = runCLI("simulate", scen, "--out", split, "--parts", "3", "--part", k, "--threads", "1")
		require.Equal(t, 0, code, errs)
	}
	code, _, errs = runCLI("simulate", scen, "--out", split, "--merge-parts")
	require.Equal(t, 0, code, errs)
	want, err := os.ReadFile(filepath.Join(whole, "catalog.csv"))
	require.NoError(t, err)
	got, err := os.ReadFile(filepath.Join(split, "catalog.csv"))
	require.NoError(t, err)
	assert.True(t, bytes.Equal(want, got), "merged catalog differs from the one-machine run")
	assert.Equal(t, manifestCounts(t, whole), manifestCounts(t, split))

	// A missing part is named.
	parts, _ := filepath.Glob(filepath.Join(split, "parts", "part-*.json"))
	require.Len(t, parts, 3)
	require.NoError(t, os.Remove(parts[0]))
	code, _, errs = runCLI("simulate", scen, "--out", split, "--merge-parts", "--force")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "are in no part")
	code, _, errs = runCLI("simulate", scen, "--out", split, "--parts", "3", "--part", "3")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "gives parts 0 to 2")
}

func manifestCounts(t *testing.T, dir string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	require.NoError(t, err)
	s := string(b)
	i, j := strings.Index(s, `"counts"`), strings.Index(s, `"warnings"`)
	require.True(t, i > 0 && j > i)
	return s[i:j]
}

// The built-in sweep file is listed and printed by examples, and a copy
// of it plans the same points as the built-in one.
func TestSweepExampleCopyRuns(t *testing.T) {
	code, list, _ := runCLI("examples")
	require.Equal(t, 0, code)
	assert.Contains(t, list, "example:systematics (a sweep file: spinpop sweep example:systematics)\n")
	code, text, errs := runCLI("examples", "systematics")
	require.Equal(t, 0, code, errs)
	file := filepath.Join(t.TempDir(), "mine.toml")
	require.NoError(t, os.WriteFile(file, []byte(text), 0o644))
	code, builtIn, errs := runCLI("sweep", "example:systematics", "--dry-run")
	require.Equal(t, 0, code, errs)
	code, copied, errs := runCLI("sweep", file, "--dry-run")
	require.Equal(t, 0, code, errs)
	assert.Equal(t, builtIn, copied)
	assert.Contains(t, builtIn, "8 points of example:fit")
}

// The comparison of alternatives at a point: the point's scenario against
// each of its [[compare.alternatives]] (example:fit names a stall and a
// burst with a stall), each explanation's ln L and adequacy in the table.
func TestSweepAlternativesStep(t *testing.T) {
	if testing.Short() {
		t.Skip("skipping in -short: three fits with bootstraps (≈ 6 s)")
	}
	dir := t.TempDir()
	file := filepath.Join(dir, "a.toml")
	require.NoError(t, os.WriteFile(file, []byte(`name = "alt"
scenario = "example:fit"
work = ["test-alternatives"]
[set]
compare.bootstrap = 20
compare.template_stars = 300_000
compare.free = [
  { path = "history.burst.age_gyr", min = 0.1, max = 3.0 },
  { path = "history.burst.mass_fraction", min = 0.0, max = 0.6 },
]
`), 0o644))
	out := filepath.Join(dir, "out")
	code, stdout, errs := runCLI("sweep", file, "--out", out, "--templates", "none")
	require.Equal(t, 0, code, "%s %s", stdout, errs)
	rows := readTable(t, filepath.Join(out, "results.csv"))
	require.Len(t, rows, 1)
	r := rows[0]
	assert.Contains(t, []string{"prefers", "cannot-tell", "neither-fits"}, r["alternatives_outcome"])
	if r["alternatives_outcome"] == "prefers" {
		assert.Contains(t, []string{"fit", "stall", "burst-and-stall"}, r["preferred"])
	}
	for _, name := range []string{"fit", "stall", "burst-and-stall"} {
		assert.NotEmpty(t, r["ln_l["+name+"]"], name)
		assert.NotEmpty(t, r["adequacy_p["+name+"]"], name)
	}
	assert.FileExists(t, filepath.Join(out, "points", r["hash"], "out", "alternatives.json"))
}
