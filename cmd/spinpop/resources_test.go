package main

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// check and simulate print an estimate of the run up front and refuse,
// with exit status 2, a run this machine cannot finish in a day; --yes
// lets check accept it. (10¹² stars at ~10⁶ stars/s per core is days on
// any machine of today; the test asserts no time.)
func TestRunEstimateAndRefusal(t *testing.T) {
	code, out, errs := runCLI("check", "example:base")
	require.Equal(t, 0, code, errs)
	assert.Regexp(t, `(?m)^# simulate: 2,000,000 stars ≈ .* on \d+ threads?, peak memory ≈ .*, about [\d,]+ catalog stars \(measured just now: [\d,]+ stars of this scenario in `, out)

	code, _, errs = runCLI("check", "example:base", "--set", "run.stars_generated=1e12")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "refusing to start a run of 1e12 stars: it would take ≈")
	assert.Contains(t, errs, "pass --yes to start it all the same")

	code, out, errs = runCLI("check", "example:base", "--set", "run.stars_generated=1e12", "--yes")
	assert.Equal(t, 0, code, errs)
	assert.Contains(t, out, "# simulate: 1e12 stars ≈ ")

	dir := filepath.Join(t.TempDir(), "out")
	code, _, errs = runCLI("simulate", "example:base", "--set", "run.stars_generated=1e12", "--out", dir)
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "estimate: 1e12 stars ≈ ")
	assert.Contains(t, errs, "refusing to start a run of 1e12 stars")
	entries, _ := os.ReadDir(dir)
	assert.Empty(t, entries, "a refused run writes nothing")
}

// laws --stars has run.stars_generated's range: 9·10¹⁸ stars ran for ever.
func TestLawsStarsBounded(t *testing.T) {
	code, _, errs := runCLI("laws", "example:base", "--stars", "9000000000000000000", "--out", filepath.Join(t.TempDir(), "out"))
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "--stars must be between 1 and 1e+14")
}

// check judges a comparison's template run like the simulation run.
func TestCheckRefusesAnEndlessTemplateRun(t *testing.T) {
	code, _, errs := runCLI("check", "example:fit", "--set", "compare.template_stars=1e13")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "the template run of a comparison: refusing to start a run of 1e13 stars")
	assert.Contains(t, errs, "lower compare.template_stars")
}
