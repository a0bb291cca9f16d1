package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

// fitScenario writes, in a temporary folder, the base example, a copy of
// the invented demo catalog and a small fit scenario extending the base:
// the demo's comparison at a size a test can afford.
func fitScenario(t *testing.T, extra string) string {
	t.Helper()
	dir := t.TempDir()
	base, err := scenarios.ExampleText("base")
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "base.toml"), base, 0o644))
	data, err := os.ReadFile("../../scenarios/examples/data/larkspur-rotation.csv")
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(dir, "catalog.csv"), data, 0o644))
	text := `extends = "base.toml"
name = "fit-small"
[history.burst]
kind = "burst"
age_gyr = 0.6
width_gyr = 0.05
mass_fraction = 0.2
[data]
file = "catalog.csv"
[data.columns]
period_d = "prot_d"
b_v = "bv_mag"
app_mag_v = "vmag"
parallax_mas = "plx_mas"
ra_deg = "ra_deg"
dec_deg = "dec_deg"
[compare]
template_stars = 4_000_000
bootstrap = 30
color_bins = 8
log_period_bins = 16
` + extra
	p := filepath.Join(dir, "fit-small.toml")
	require.NoError(t, os.WriteFile(p, []byte(text), 0o644))
	return p
}

// The demo catalog was drawn from testdata/demo-truth.toml: a 15 % burst
// 0.75 Gyr ago. Even with small templates and few replicates the test must
// find it and prefer it (this checks the pipeline end to end against a
// known truth; the statistics themselves are checked in compare).
func TestTestBurstFindsTheHiddenBurst(t *testing.T) {
	sc := fitScenario(t, "")
	out := filepath.Join(t.TempDir(), "tb")
	tpl := filepath.Join(t.TempDir(), "tpl")
	code, stdout, errs := runCLI("test-burst", sc, "--out", out, "--templates", tpl)
	require.Equal(t, 0, code, errs)
	// stdout is read by people: no Go syntax for lists or maps.
	assert.NotContains(t, stdout, "map[")
	assert.NotContains(t, stdout, "wrote: [")
	// The report: the verdict as printed, six figures, the catalog's checksum.
	var tj struct {
		Verdict string `json:"verdict"`
		Data    struct {
			SHA256 string `json:"sha256"`
		} `json:"data"`
		ScenarioSHA string `json:"scenario_sha256"`
	}
	tjb, err := os.ReadFile(filepath.Join(out, "test.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(tjb, &tj))
	checkReport(t, out, []string{"burst at 0.7"}, 6, tj.Data.SHA256, tj.ScenarioSHA)
	// With 30 replicates the bootstrap p-value cannot go below 1/31.
	assert.Contains(t, stdout, "burst at 0.7")
	var res struct {
		PValue   float64 `json:"p_value"`
		Strength string  `json:"strength"`
		Burst    struct {
			Params map[string]float64 `json:"params"`
		} `json:"burst"`
		Data struct {
			Compared int  `json:"stars_compared"`
			Reused   bool `json:"templates_reused"`
		} `json:"data"`
	}
	b, err := os.ReadFile(filepath.Join(out, "test.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &res))
	assert.InDelta(t, 1.0/31, res.PValue, 1e-9, "no replicate reaches the observed LR")
	assert.NotEqual(t, "none", res.Strength)
	assert.InDelta(t, 0.75, res.Burst.Params["history.burst.age_gyr"], 0.1)
	assert.InDelta(t, 0.15, res.Burst.Params["history.burst.mass_fraction"], 0.07)
	assert.Greater(t, res.Data.Compared, 20000)
	assert.False(t, res.Data.Reused)
	for _, f := range []string{"rejected.csv", "fit_period_histograms.png", "fit_residuals.png", "profile_burst_age.png", "bootstrap.png", "height_check.png"} {
		fi, err := os.Stat(filepath.Join(out, f))
		require.NoError(t, err, f)
		assert.Greater(t, fi.Size(), int64(10), f)
	}

	// Same scenario again: the templates are reused from the cache, and
	// the numbers are the same.
	out2 := filepath.Join(t.TempDir(), "tb2")
	code, _, errs = runCLI("test-burst", sc, "--out", out2, "--templates", tpl, "--threads", "1")
	require.Equal(t, 0, code, errs)
	b2, err := os.ReadFile(filepath.Join(out2, "test.json"))
	require.NoError(t, err)
	var res2 map[string]any
	var res1 map[string]any
	require.NoError(t, json.Unmarshal(b2, &res2))
	require.NoError(t, json.Unmarshal(b, &res1))
	assert.Equal(t, true, res2["data"].(map[string]any)["templates_reused"])
	assert.Equal(t, res1["lr_replicates"], res2["lr_replicates"], "same seed, same replicates, whatever the thread count")
	assert.Equal(t, res1["p_value"], res2["p_value"])

	// compare and heights on the same templates.
	cdir, hdir := filepath.Join(t.TempDir(), "c"), filepath.Join(t.TempDir(), "h")
	code, stdout, errs = runCLI("compare", sc, "--out", cdir, "--templates", tpl, "--fit")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, stdout, "Pearson χ²")
	assert.Contains(t, stdout, "log10_period")
	// base.toml's dust carries stars bluer than Barnes (2007)'s colors past
	// cuts.b_v_min = 0.45, and this scenario does not leave them out.
	assert.Contains(t, stdout, "warning: the compared colors begin at B−V = 0.45 (cuts.b_v_min)")
	checkReport(t, cdir, []string{"describe", "Pearson χ²"}, 2, tj.Data.SHA256)
	code, stdout, errs = runCLI("heights", sc, "--out", hdir, "--templates", tpl, "--json")
	require.Equal(t, 0, code, errs)
	checkReport(t, hdir, []string{"young fraction against height"}, 1, tj.Data.SHA256)
	var h struct {
		Fraction   []*float64 `json:"fraction"`
		Hypotheses map[string]struct {
			LogL float64 `json:"log_l"`
		} `json:"hypotheses"`
	}
	require.NoError(t, json.Unmarshal([]byte(stdout), &h))
	// Young stars sit in a thinner layer (Spitzer 1942 tracers): the young
	// fraction near the plane exceeds that at 450–700 pc.
	require.NotNil(t, h.Fraction[0])
	require.NotNil(t, h.Fraction[4])
	assert.Greater(t, *h.Fraction[0], *h.Fraction[4])
	assert.Greater(t, h.Hypotheses["with burst (fit)"].LogL, h.Hypotheses["smooth history (fit)"].LogL)
}

func TestComparisonInputErrors(t *testing.T) {
	// No [data]: a usage error that says what to add.
	code, _, errs := runCLI("test-burst", "example:burst", "--out", filepath.Join(t.TempDir(), "x"))
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "[data]")
	// A checksum that does not match the catalog.
	sc := fitScenario(t, "")
	text, err := os.ReadFile(sc)
	require.NoError(t, err)
	bad := strings.Replace(string(text), "[data]\n", "[data]\nsha256 = \""+strings.Repeat("ab", 32)+"\"\n", 1)
	require.NoError(t, os.WriteFile(sc, []byte(bad), 0o644))
	code, _, errs = runCLI("compare", sc, "--out", filepath.Join(t.TempDir(), "y"), "--templates", "none")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "SHA-256")
}

// One scenario that names an alternative is enough for test-alternatives:
// the demo catalog (drawn with a burst under the empirical law, see
// testdata/demo-truth.toml) against the same scenario with the burst
// dropped and a stalled spin-down instead. The alternative is fitted
// without the burst's parameters, and the catalog must not prefer the
// explanation that did not make it.
func TestTestAlternativesInsideOneScenario(t *testing.T) {
	if testing.Short() {
		t.Skip("builds templates under two laws and bootstraps both; skipped with -short")
	}
	// Each law masks the cells below its own young gyrochrone, so the two
	// explanations leave out different cells unless they are made to
	// score the same stars.
	sc := fitScenario(t, `mask_below_age_gyr = 0.1

[[compare.alternatives]]
name = "stall"
set = ["spin.law=torque", "spin.stall.enabled=true"]
drop = ["burst"]
`)
	out := filepath.Join(t.TempDir(), "alt")
	code, stdout, errs := runCLI("test-alternatives", sc, "--out", out, "--templates", "none", "--replicates", "20")
	require.Equal(t, 0, code, errs)
	var res struct {
		Fits []struct {
			Name     string `json:"name"`
			Scenario string `json:"scenario"`
			K        int    `json:"k"`
		} `json:"fits"`
		Best    string `json:"best"`
		Outcome string `json:"outcome"`
	}
	b, err := os.ReadFile(filepath.Join(out, "alternatives.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &res))
	require.Len(t, res.Fits, 2)
	assert.Equal(t, "fit-small", res.Fits[0].Name)
	assert.Equal(t, "stall", res.Fits[1].Name)
	assert.Contains(t, res.Fits[1].Scenario, `alternative "stall"`)
	assert.Equal(t, res.Fits[0].K-3, res.Fits[1].K, "the stall is fitted without the burst's age, width and fraction")
	assert.Equal(t, "fit-small", res.Best, "the catalog was made with a burst under the empirical law: %s", stdout)
	checkReport(t, out, []string{"fit-small"}, 2)
	var data struct {
		Data struct {
			Rows     int `json:"rows"`
			Compared int `json:"stars_compared"`
			Other    int `json:"stars_in_cells_another_explanation_leaves_out"`
		} `json:"data"`
	}
	require.NoError(t, json.Unmarshal(b, &data))
	assert.Positive(t, data.Data.Compared)
	assert.Positive(t, data.Data.Other, "the two laws' young masks differ, so each leaves out cells the other keeps")
	// rejected.csv lists every row not compared, those left out for the
	// other explanation included.
	rej, err := os.ReadFile(filepath.Join(out, "rejected.csv"))
	require.NoError(t, err)
	lines := strings.Split(strings.TrimSpace(string(rej)), "\n")
	assert.Equal(t, data.Data.Rows-data.Data.Compared, len(lines)-1, "rows listed = rows not compared")
	assert.Equal(t, data.Data.Other, strings.Count(string(rej), "cell_another_explanation_leaves_out"))

	// Without alternatives, one scenario is not a comparison.
	plain := fitScenario(t, "")
	code, _, errs = runCLI("test-alternatives", plain, "--out", filepath.Join(t.TempDir(), "x"))
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "names no [[compare.alternatives]]")
}

// --max-rounds reaches the fits of compare --fit and heights: allowed one
// expansion from a color zero point set off the catalog's, each fit stops
// still rising, and says so first, with what its round gained, in the
// summary and the JSON. A value outside 1…200 is a usage error.
func TestMaxRoundsReachesCompareAndHeights(t *testing.T) {
	sc := fitScenario(t, `
[[compare.free]]
path = "history.burst.age_gyr"
min = 0.1
max = 3.0

[[compare.free]]
path = "survey.color_offset_mag"
min = -0.1
max = 0.1
`)
	common := []string{"--templates", "none", "--set", "compare.template_stars=1000000", "--set", "survey.color_offset_mag=0.06", "--max-rounds", "1"}
	out := filepath.Join(t.TempDir(), "c")
	code, stdout, errs := runCLI(append([]string{"compare", sc, "--fit", "--replicates", "0", "--out", out}, common...)...)
	require.Equal(t, 0, code, errs)
	assert.True(t, strings.HasPrefix(stdout, "warning: the history fit stopped at its limit of 1 expansions while ln L was still rising (by "), stdout)
	var cj struct {
		Fit struct {
			Rounds int     `json:"rounds"`
			Limit  bool    `json:"stopped_at_round_limit"`
			Gain   float64 `json:"last_round_gain"`
		} `json:"fit"`
	}
	b, err := os.ReadFile(filepath.Join(out, "compare.json"))
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &cj))
	assert.Equal(t, 1, cj.Fit.Rounds)
	assert.True(t, cj.Fit.Limit)
	assert.Greater(t, cj.Fit.Gain, 0.0)

	out = filepath.Join(t.TempDir(), "h")
	code, stdout, errs = runCLI(append([]string{"heights", sc, "--out", out}, common...)...)
	require.Equal(t, 0, code, errs)
	assert.Contains(t, stdout, "warning: the smooth-history fit stopped at its limit of 1 expansions")
	b, err = os.ReadFile(filepath.Join(out, "heights.json"))
	require.NoError(t, err)
	assert.Contains(t, string(b), `"stopped_at_round_limit": true`)

	code, _, errs = runCLI("test-burst", sc, "--out", filepath.Join(t.TempDir(), "t"), "--max-rounds", "0")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "--max-rounds 0: want 1 to 200")
}
