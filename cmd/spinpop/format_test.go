package main

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/compare"
)

func TestWordListAndTallyAreNotGoSyntax(t *testing.T) {
	assert.Equal(t, "a.csv, b.png", wordList([]string{"a.csv", "b.png"}))
	assert.Equal(t, "none", wordList(nil))
	got := tally(map[string]int{"missing value": 3, "period ≤ 0": 12, "bad parallax": 3})
	assert.Equal(t, "period ≤ 0: 12, bad parallax: 3, missing value: 3", got)
	assert.Equal(t, "none", tally(nil))
	for _, s := range []string{got, wordList([]string{"x"})} {
		assert.NotContains(t, s, "map[")
		assert.NotContains(t, s, "[")
	}
}

// An empty height bin has no young fraction: the table says n/a there
// (not 0.000, which would claim that no star in it is young), and keeps its
// columns aligned.
func TestHeightTableEmptyBinIsNA(t *testing.T) {
	nan := math.NaN()
	h := &compare.HeightResult{
		SplitAgeGyr: 0.75, ZEdgesPc: []float64{0, 100, 300},
		Young: []int{5, 0}, Total: []int{20, 0},
		Fraction: []float64{0.25, nan}, Lo68: []float64{0.16, nan}, Hi68: []float64{0.36, nan},
		Hypotheses: []compare.HeightHypothesis{{Name: "smooth", Fraction: []float64{0.2, nan}, LogL: -3}},
	}
	var b bytes.Buffer
	printHeightTable(&b, h)
	lines := strings.Split(b.String(), "\n")
	var full, empty string
	for _, l := range lines {
		if strings.Contains(l, "0–100") {
			full = l
		}
		if strings.Contains(l, "100–300") {
			empty = l
		}
	}
	assert.Contains(t, full, "0.250")
	assert.Contains(t, empty, "n/a")
	assert.NotContains(t, empty, "0.000")
	assert.Equal(t, len([]rune(full)), len([]rune(empty)), "columns stay aligned:\n%s\n%s", full, empty)
}

// Every "wrote:" line of every command lists its files in words: none
// formats the list with %v (which prints Go's [a b c]).
func TestNoWroteLineInGoSyntax(t *testing.T) {
	files, err := filepath.Glob("*.go")
	require.NoError(t, err)
	for _, f := range files {
		if strings.HasSuffix(f, "_test.go") {
			continue
		}
		b, err := os.ReadFile(f)
		require.NoError(t, err)
		assert.NotContains(t, string(b), `wrote: %v`, f)
	}
}

// Axis labels name quantities with their units, not configuration paths.
func TestKeyLabel(t *testing.T) {
	assert.Equal(t, "burst age (Gyr)", keyLabel("history.burst.age_gyr"))
	assert.Equal(t, "spin law", keyLabel("spin.law"))
	assert.Equal(t, "run seed", keyLabel("run.seed"))
	assert.Equal(t, "stall", readable("scenarios/stall.toml"))
	assert.Equal(t, "burst", readable("example:burst"))
}
