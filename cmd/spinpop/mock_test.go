package main

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/assemble"
	"spinpop/scenarios"
)

// readCSVTable reads a CSV file with # comments into its header and rows.
func readCSVTable(t *testing.T, path string) (map[string]int, [][]string) {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	recs, err := r.ReadAll()
	require.NoError(t, err)
	require.NotEmpty(t, recs)
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	return col, recs[1:]
}

// A mock star is traceable: its star_id is the model star's number in the
// run, so the same star carries the same id and values in the simulated
// catalog of the same scenario and seed; --truth adds what only the model
// knows and the observed stars that are not catalog stars, and leaves the
// catalog stars' rows as they are without it.
func TestMockStarIDsAndTruth(t *testing.T) {
	dir := t.TempDir()
	plain, truth := filepath.Join(dir, "plain.csv"), filepath.Join(dir, "truth.csv")
	code, _, errs := runCLI("mock", "example:base", "--out", plain, "--stars", "400", "--seed", "7")
	require.Equal(t, 0, code, errs)
	code, stdout, errs := runCLI("mock", "example:base", "--out", truth, "--stars", "400", "--seed", "7", "--truth")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, stdout, "wrote 400 catalog stars")

	pc, prows := readCSVTable(t, plain)
	tc, trows := readCSVTable(t, truth)
	assert.Equal(t, map[string]int{"star_id": 0, "prot_d": 1, "bv_mag": 2, "vmag": 3, "plx_mas": 4, "ra_deg": 5, "dec_deg": 6}, pc)
	for i, name := range []string{"true_age_gyr", "true_mass_msun", "true_binary", "true_period_d", "detected"} {
		assert.Equal(t, 7+i, tc[name], name)
	}
	require.Len(t, prows, 400)
	require.Greater(t, len(trows), len(prows))

	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	cuts := assemble.Cuts(&res.Scenario)
	byID := map[string][]string{}
	prev := int64(0)
	for _, r := range trows {
		id, err := strconv.ParseInt(r[0], 10, 64)
		require.NoError(t, err)
		require.Greater(t, id, prev, "ids increase in generation order")
		prev = id
		byID[r[0]] = r
		age, err := strconv.ParseFloat(r[tc["true_age_gyr"]], 64)
		require.NoError(t, err)
		assert.True(t, age > 0 && age <= res.Scenario.History.MaxAgeGyr, "age %g", age)
		assert.Contains(t, []string{"0", "1"}, r[tc["true_binary"]])
		assert.Contains(t, []string{"0", "1"}, r[tc["detected"]])
		if r[tc["detected"]] == "0" {
			assert.Empty(t, r[tc["prot_d"]], "no period where the survey measured none")
		}
	}
	inPlain := map[string]bool{}
	for _, r := range prows {
		inPlain[r[0]] = true
		tr, ok := byID[r[0]]
		require.True(t, ok, "catalog star %s is in the truth mock", r[0])
		assert.Equal(t, r, tr[:7], "the same values with and without --truth")
		assert.Equal(t, "1", tr[tc["detected"]])
	}
	notCatalog := 0
	for _, r := range trows {
		if inPlain[r[0]] {
			continue
		}
		notCatalog++
		if r[tc["detected"]] == "1" {
			p, err := strconv.ParseFloat(r[tc["prot_d"]], 64)
			require.NoError(t, err)
			assert.False(t, cuts.PeriodInRange(p), "a detected star left out of the catalog has its period outside the window: %g d", p)
		}
	}
	assert.Positive(t, notCatalog)

	// The simulated catalog of the same scenario and seed holds the same
	// stars under the same ids (chunks are the same in both runs except the
	// last chunk of the shorter one).
	sc := filepath.Join(dir, "sim.toml")
	require.NoError(t, os.WriteFile(sc, []byte("extends = \"example:base\"\n[run]\nstars_generated = 200_000\n[output]\nplots = false\n"), 0o644))
	out := filepath.Join(dir, "sim")
	code, _, errs = runCLI("simulate", sc, "--out", out, "--seed", "7")
	require.Equal(t, 0, code, errs)
	sc2, srows := readCSVTable(t, filepath.Join(out, "catalog.csv"))
	full := int64(200_000/res.Scenario.Run.ChunkStars) * int64(res.Scenario.Run.ChunkStars)
	matched := 0
	for _, s := range srows {
		id, err := strconv.ParseInt(s[sc2["star_id"]], 10, 64)
		require.NoError(t, err)
		if id > full {
			continue
		}
		m, ok := byID[s[sc2["star_id"]]]
		if !ok {
			continue // beyond the mock's 400 catalog stars
		}
		matched++
		for _, pair := range [][2]string{{"period_measured_d", "prot_d"}, {"obs_b_v_mag", "bv_mag"}, {"age_gyr", "true_age_gyr"}, {"ra_deg", "ra_deg"}} {
			a, err := strconv.ParseFloat(s[sc2[pair[0]]], 64)
			require.NoError(t, err)
			b, err := strconv.ParseFloat(m[tc[pair[1]]], 64)
			require.NoError(t, err)
			assert.InDelta(t, a, b, 1e-3*max(1, a), "star %s: %s against %s", s[0], pair[0], pair[1])
		}
	}
	assert.Greater(t, matched, 50, "stars found under the same id in both")
}
