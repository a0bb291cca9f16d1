package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/disk"
)

// smallScenario writes a quick scenario that extends nothing (the examples
// are embedded; this one lives on disk like a user's).
func smallScenario(t *testing.T, stars int) string {
	t.Helper()
	dir := t.TempDir()
	text := `name = "small"
[run]
seed = 7
stars_generated = ` + strconv.Itoa(stars) + `
chunk_stars = 8192
[history.smooth]
kind = "constant"
[history.burst]
kind = "burst"
age_gyr = 0.6
width_gyr = 0.05
mass_fraction = 0.2
[survey.field]
kind = "cone"
l_deg = 58.0
b_deg = 21.0
radius_deg = 11.0
distance_max_pc = 1500.0
[dust]
model = "exponential"
[output]
gyrochrone_ages_gyr = [0.6, 2.0]
`
	p := filepath.Join(dir, "small.toml")
	require.NoError(t, os.WriteFile(p, []byte(text), 0o644))
	return p
}

func runCLI(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(args, &o, &e)
	return code, o.String(), e.String()
}

func TestExitCodes(t *testing.T) {
	code, _, _ := runCLI()
	assert.Equal(t, 2, code, "no command is a usage error")
	code, _, errs := runCLI("simulat")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "unknown command")
	for _, c := range []string{"check", "simulate", "gyrochrones", "demo", "laws", "examples"} {
		code, out, _ := runCLI(c, "--help")
		assert.Equal(t, 0, code, c)
		assert.Contains(t, out, "Usage: spinpop "+c, c)
	}
	code, _, errs = runCLI("check", filepath.Join(t.TempDir(), "missing.toml"))
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "missing.toml")
	code, _, errs = runCLI("simulate", "example:base", "--bogus")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "bogus")
}

func TestCheckBadScenarioNamesKeyAndLine(t *testing.T) {
	p := filepath.Join(t.TempDir(), "bad.toml")
	require.NoError(t, os.WriteFile(p, []byte("[history.smooth]\nkind = \"constant\"\n[disk]\nsigma10_kms = 3\n"), 0o644))
	code, _, errs := runCLI("check", p)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "bad.toml:4")
	assert.Contains(t, errs, "sigma_10gyr_kms")
}

func TestCheckPrintsHash(t *testing.T) {
	code, out, _ := runCLI("check", "example:burst")
	require.Equal(t, 0, code)
	assert.Regexp(t, `sha256: [0-9a-f]{64}`, out)
	assert.Contains(t, out, "[history.burst]")
}

func TestSimulateRefusesNonEmptyFolder(t *testing.T) {
	dir := t.TempDir()
	keep := filepath.Join(dir, "notes.txt")
	require.NoError(t, os.WriteFile(keep, []byte("mine"), 0o644))
	code, _, errs := runCLI("simulate", smallScenario(t, 20000), "--out", dir)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "not empty")
	b, err := os.ReadFile(keep)
	require.NoError(t, err)
	assert.Equal(t, "mine", string(b), "nothing the user gave is touched")
}

// Same scenario and seed give a byte-identical catalog whatever the
// number of threads (the reliability requirement).
func TestSimulateSameBytesForAnyThreadCount(t *testing.T) {
	sc := smallScenario(t, 120000)
	d1, d2 := filepath.Join(t.TempDir(), "a"), filepath.Join(t.TempDir(), "b")
	prev := runtime.GOMAXPROCS(1)
	defer runtime.GOMAXPROCS(prev)
	code, _, errs := runCLI("simulate", sc, "--out", d1, "--threads", "1")
	require.Equal(t, 0, code, errs)
	runtime.GOMAXPROCS(2)
	code, _, errs = runCLI("simulate", sc, "--out", d2, "--threads", "2")
	require.Equal(t, 0, code, errs)
	c1, err := os.ReadFile(filepath.Join(d1, "catalog.csv"))
	require.NoError(t, err)
	c2, err := os.ReadFile(filepath.Join(d2, "catalog.csv"))
	require.NoError(t, err)
	require.Greater(t, bytes.Count(c1, []byte("\n")), 1000, "the catalog is not trivially empty")
	assert.True(t, bytes.Equal(c1, c2), "catalog.csv differs between 1 and 2 threads")
}

func TestSimulateOutputsAndManifest(t *testing.T) {
	sc := smallScenario(t, 60000)
	dir := filepath.Join(t.TempDir(), "run")
	code, out, errs := runCLI("simulate", sc, "--out", dir, "--json")
	require.Equal(t, 0, code, errs)
	var sum map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &sum), out)
	for _, f := range []string{"catalog.csv", "manifest.json", "period_color.png", "period_histograms.png", "height.png", "age_selection.png"} {
		fi, err := os.Stat(filepath.Join(dir, f))
		require.NoError(t, err, f)
		assert.Greater(t, fi.Size(), int64(100), f)
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		assert.False(t, strings.Contains(e.Name(), "partial"), "no temporary file is left: %s", e.Name())
	}
	var man struct {
		Hash     string `json:"scenario_sha256"`
		Resolved string `json:"resolved_scenario"`
		Counts   []struct {
			Step  string `json:"step"`
			Stars int64  `json:"stars"`
		} `json:"counts"`
		CatalogStars int64 `json:"catalog_stars"`
	}
	b, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &man))
	assert.Len(t, man.Hash, 64)
	assert.Contains(t, man.Resolved, "[history.burst]")
	require.Len(t, man.Counts, 7)
	assert.Equal(t, int64(60000), man.Counts[0].Stars)
	for i := 1; i < len(man.Counts); i++ {
		assert.LessOrEqual(t, man.Counts[i].Stars, man.Counts[i-1].Stars, "selection only removes stars (%s)", man.Counts[i].Step)
	}
	assert.Equal(t, man.Counts[len(man.Counts)-1].Stars, man.CatalogStars)
	cat, err := os.ReadFile(filepath.Join(dir, "catalog.csv"))
	require.NoError(t, err)
	lines := strings.Split(strings.TrimSpace(string(cat)), "\n")
	assert.Equal(t, int(man.CatalogStars)+1, len(lines), "one row per catalog star plus the header")
	assert.True(t, strings.HasPrefix(lines[0], "star_id,mass_msun,"), lines[0])

	// Every star is traceable: ids increase through the catalog (generation
	// order), and the ICRS position is the Galactic one turned by the
	// rotation checked against astropy (disk/icrs_test.go); six significant
	// digits in the file allow 1e-3°.
	head := strings.Split(lines[0], ",")
	col := map[string]int{}
	for i, h := range head {
		col[h] = i
	}
	prev := int64(0)
	for _, line := range lines[1:] {
		f := strings.Split(line, ",")
		id, err := strconv.ParseInt(f[col["star_id"]], 10, 64)
		require.NoError(t, err, "star_id is an integer: %q", f[col["star_id"]])
		require.Greater(t, id, prev)
		require.LessOrEqual(t, id, man.Counts[0].Stars)
		prev = id
		num := func(name string) float64 {
			x, err := strconv.ParseFloat(f[col[name]], 64)
			require.NoError(t, err, name)
			return x
		}
		l, b := disk.ICRSToGalactic(num("ra_deg"), num("dec_deg"))
		dl := math.Abs(l - num("l_deg"))
		require.Less(t, math.Min(dl, 360-dl)*math.Cos(b*math.Pi/180), 1e-3, line)
		require.InDelta(t, num("b_deg"), b, 1e-3, line)
	}
}

func TestGyrochronesCSV(t *testing.T) {
	code, out, errs := runCLI("gyrochrones", "example:base", "--ages-gyr", "0.6,4.57", "--csv", "--points", "5")
	require.Equal(t, 0, code, errs)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	assert.Equal(t, "age_gyr,b_v_mag,mass_msun,period_d", lines[0])
	assert.Len(t, lines, 11)
	code, _, errs = runCLI("gyrochrones", "example:base", "--ages-gyr", "0.6,x")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "ages-gyr")
}
