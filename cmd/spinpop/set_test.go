package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func checkHash(t *testing.T, args ...string) string {
	t.Helper()
	code, out, errs := runCLI(append([]string{"check", "--json"}, args...)...)
	require.Equal(t, 0, code, errs)
	var got struct {
		Hash      string   `json:"hash"`
		Overrides []string `json:"overrides"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &got))
	return got.Hash
}

// --set is the same as writing the key into a file that extends the
// scenario: same hash.
func TestSetOverridesLikeAFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "torque.toml")
	require.NoError(t, os.WriteFile(p, []byte("extends = \"example:burst\"\nname = \"burst\"\n[spin]\nlaw = \"torque\"\n[history.burst]\nage_gyr = 0.8\n"), 0o644))
	want := checkHash(t, p)
	got := checkHash(t, "example:burst", "--set", "spin.law=torque", "--set", "history.burst.age_gyr=0.8")
	assert.Equal(t, want, got)
	assert.NotEqual(t, checkHash(t, "example:burst"), got)
}

func TestSetErrors(t *testing.T) {
	code, _, errs := runCLI("check", "example:base", "--set", "spin.lwa=torque")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, `--set spin.lwa=torque: unknown key "lwa" in [spin]; did you mean "law"?`)

	code, _, errs = runCLI("simulate", "example:burst", "--out", t.TempDir(), "--set", "history.burst.mass_fraction=1.5")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "--set history.burst.mass_fraction=1.5: history.burst.mass_fraction = 1.5 is out of range; it must be in [0, 1]")

	code, _, errs = runCLI("compare", "example:fit", "--out", t.TempDir(), "--set", "compare.bootstrap")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "--set compare.bootstrap: want key=value")
}

// spinpop examples fit > my.toml, then check my.toml, from a folder that
// holds nothing else.
func TestCopiedExampleChecksAnywhere(t *testing.T) {
	t.Chdir(t.TempDir())
	code, text, errs := runCLI("examples", "fit")
	require.Equal(t, 0, code, errs)
	require.NoError(t, os.WriteFile("my.toml", []byte(text), 0o644))
	assert.Equal(t, checkHash(t, "example:fit"), checkHash(t, "my.toml"))
}
